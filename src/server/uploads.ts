// Files the page uploads (browser mode never takes a server path from the page): each is kept
// in a private temporary folder under its own name and referred to as "upload:<id>".
import { randomUUID } from 'node:crypto';
import { createWriteStream, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, sep } from 'node:path';
import type { IncomingMessage } from 'node:http';
import { pipeline } from 'node:stream/promises';
import { Transform } from 'node:stream';
import { ManyfieldError } from '../api/result.js';
import { MAX_UPLOAD_BYTES, UPLOAD_REF_PREFIX, type UploadReceipt } from './protocol.js';

/** A file name safe to use as the last part of a path (no folders, no control characters). */
export function safeFileName(name: string): string {
  const base = name.replace(/^.*[\\/]/, '').replace(/[\u0000-\u001f<>:"|?*]/g, '_').trim();
  const cut = base.slice(-120);
  return cut === '' || cut === '.' || cut === '..' ? 'upload' : cut;
}

export class UploadStore {
  private readonly root = mkdtempSync(join(tmpdir(), 'manyfield-uploads-'));
  private readonly files = new Map<string, string>();

  async receive(req: IncomingMessage, name: string, maxBytes = MAX_UPLOAD_BYTES): Promise<UploadReceipt> {
    const id = randomUUID();
    const folder = join(this.root, id);
    mkdirSync(folder, { mode: 0o700 });
    const fileName = safeFileName(name);
    const path = join(folder, fileName);
    let bytes = 0;
    const limit = new Transform({
      transform(chunk: Buffer, _enc, done) {
        bytes += chunk.length;
        if (bytes > maxBytes) done(new ManyfieldError('invalid-input', `the file is larger than ${Math.round(maxBytes / 1024 / 1024)} MB`));
        else done(null, chunk);
      },
    });
    try {
      await pipeline(req, limit, createWriteStream(path, { mode: 0o600 }));
    } catch (e) {
      rmSync(folder, { recursive: true, force: true });
      throw e;
    }
    this.files.set(id, path);
    return { ref: `${UPLOAD_REF_PREFIX}${id}`, name: fileName, bytes };
  }

  /** The temporary path of an upload reference, or null when it is not one of ours. */
  resolve(ref: string): string | null {
    if (!ref.startsWith(UPLOAD_REF_PREFIX)) return null;
    return this.files.get(ref.slice(UPLOAD_REF_PREFIX.length)) ?? null;
  }

  /** Text with each upload's temporary path replaced by the file's own name (answers to the page). */
  redact(text: string): string {
    let out = text;
    for (const path of this.files.values()) {
      const name = path.slice(path.lastIndexOf(sep) + 1);
      out = out.split(JSON.stringify(path).slice(1, -1)).join(name);
    }
    return out;
  }

  dispose(): void {
    rmSync(this.root, { recursive: true, force: true });
  }
}
