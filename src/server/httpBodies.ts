// Reading a JSON body with a size limit, and writing JSON answers.
import type { IncomingMessage, ServerResponse } from 'node:http';
import { ManyfieldError, type Result } from '../api/result.js';

export async function readJsonBody(req: IncomingMessage, maxBytes: number): Promise<unknown> {
  const chunks: Buffer[] = [];
  let size = 0;
  for await (const chunk of req as AsyncIterable<Buffer>) {
    size += chunk.length;
    if (size > maxBytes) throw new ManyfieldError('invalid-argument', `the request body is larger than ${maxBytes} bytes`);
    chunks.push(chunk);
  }
  const text = Buffer.concat(chunks).toString('utf8');
  if (text.trim() === '') return {};
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new ManyfieldError('invalid-argument', `the request body is not JSON: ${(e as Error).message}`);
  }
}

export function sendJson(res: ServerResponse, status: number, body: Result<unknown> | { readonly ok: false; readonly error: { code: string; message: string } }): void {
  res.writeHead(status, { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store' });
  res.end(JSON.stringify(body));
}
