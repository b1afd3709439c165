// Bytes -> text for delimited files. The encoding is declared (the mapping's "encoding") or
// detected from a byte-order mark, else the file must be valid UTF-8: bytes that are not are
// refused with their row and offset, never replaced (a Latin-1 "ü" silently turned into "�"
// would merge two site names that differ only there).
import { isAscii, isUtf8 } from 'node:buffer';

export const TEXT_ENCODINGS = ['utf-8', 'latin-1', 'windows-1252', 'utf-16', 'utf-16le', 'utf-16be'] as const;
export type TextEncodingName = (typeof TEXT_ENCODINGS)[number];

/** Where a file stops being valid UTF-8: byte offset and the 1-based line it is on. */
export class InvalidUtf8Error extends Error {
  constructor(
    readonly offset: number,
    readonly line: number,
    readonly byte: number,
  ) {
    super(`byte ${offset} (0x${byte.toString(16).padStart(2, '0')}, on line ${line}) is not valid UTF-8`);
    this.name = 'InvalidUtf8Error';
  }
}

function swapUtf16(buf: Buffer, from: number): string {
  const swapped = Buffer.alloc(buf.length - from - ((buf.length - from) % 2));
  for (let i = 0; i < swapped.length; i += 2) {
    swapped[i] = buf[from + i + 1];
    swapped[i + 1] = buf[from + i];
  }
  return swapped.toString('utf16le');
}

export function decodeText(bytes: Uint8Array, encoding?: TextEncodingName): string {
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const bomUtf8 = buf.length >= 3 && buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf;
  const bomLe = buf.length >= 2 && buf[0] === 0xff && buf[1] === 0xfe;
  const bomBe = buf.length >= 2 && buf[0] === 0xfe && buf[1] === 0xff;
  switch (encoding) {
    case 'latin-1':
      return buf.toString('latin1');
    case 'windows-1252':
      return new TextDecoder('windows-1252').decode(buf);
    case 'utf-16be':
      return swapUtf16(buf, bomBe ? 2 : 0);
    case 'utf-16le':
    case 'utf-16':
      return bomBe ? swapUtf16(buf, 2) : buf.toString('utf16le', bomLe ? 2 : 0);
    default:
      break;
  }
  if (bomLe && encoding === undefined) return buf.toString('utf16le', 2);
  if (bomBe && encoding === undefined) return swapUtf16(buf, 2);
  const from = bomUtf8 ? 3 : 0;
  // Plain ASCII (most data files) decodes the same either way; the single-byte decoder is faster.
  if (isAscii(buf)) return buf.toString('latin1');
  if (isUtf8(bomUtf8 ? buf.subarray(3) : buf)) return buf.toString('utf8', from);
  const offset = firstInvalidUtf8(buf, from);
  let line = 1;
  for (let i = 0; i < offset; i++) if (buf[i] === 10) line++;
  throw new InvalidUtf8Error(offset, line, buf[offset]);
}

/** Offset of the first byte that does not belong to a well-formed UTF-8 sequence (RFC 3629). */
export function firstInvalidUtf8(buf: Uint8Array, from = 0): number {
  let i = from;
  const n = buf.length;
  while (i < n) {
    const b = buf[i];
    if (b < 0x80) {
      i++;
      continue;
    }
    let need: number;
    let min: number;
    if (b >= 0xc2 && b <= 0xdf) {
      need = 1;
      min = 0x80;
    } else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      min = 0x800;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      min = 0x10000;
    } else return i;
    if (i + need >= n) return i;
    let cp = b & (0x3f >> need);
    for (let k = 1; k <= need; k++) {
      const c = buf[i + k];
      if (c === undefined || (c & 0xc0) !== 0x80) return i;
      cp = (cp << 6) | (c & 0x3f);
    }
    if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff)) return i;
    i += need + 1;
  }
  return n;
}

/** True when the bytes start like a zip archive (an .xlsx workbook). */
export function looksLikeZip(bytes: Uint8Array): boolean {
  return bytes.length >= 4 && bytes[0] === 0x50 && bytes[1] === 0x4b && bytes[2] === 0x03 && bytes[3] === 0x04;
}

/** True for the old binary Excel format (OLE2 compound file), which we do not read. */
export function looksLikeOldExcel(bytes: Uint8Array): boolean {
  return bytes.length >= 4 && bytes[0] === 0xd0 && bytes[1] === 0xcf && bytes[2] === 0x11 && bytes[3] === 0xe0;
}
