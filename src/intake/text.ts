// Bytes -> text for delimited files: UTF-8 (with or without BOM) and the UTF-16LE that
// spreadsheet programs write for "Unicode text".
import { isAscii } from 'node:buffer';

export function decodeText(bytes: Uint8Array): string {
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (buf.length >= 3 && buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf) return buf.toString('utf8', 3);
  if (buf.length >= 2 && buf[0] === 0xff && buf[1] === 0xfe) return buf.toString('utf16le', 2);
  if (buf.length >= 2 && buf[0] === 0xfe && buf[1] === 0xff) {
    // UTF-16BE: swap to LE for Node's decoder.
    const swapped = Buffer.alloc(buf.length - 2 - (buf.length % 2));
    for (let i = 0; i < swapped.length; i += 2) {
      swapped[i] = buf[i + 3];
      swapped[i + 1] = buf[i + 2];
    }
    return swapped.toString('utf16le');
  }
  // Plain ASCII (most data files) decodes the same either way; the single-byte decoder is faster.
  return isAscii(buf) ? buf.toString('latin1') : buf.toString('utf8');
}

/** True when the bytes start like a zip archive (an .xlsx workbook). */
export function looksLikeZip(bytes: Uint8Array): boolean {
  return bytes.length >= 4 && bytes[0] === 0x50 && bytes[1] === 0x4b && bytes[2] === 0x03 && bytes[3] === 0x04;
}

/** True for the old binary Excel format (OLE2 compound file), which we do not read. */
export function looksLikeOldExcel(bytes: Uint8Array): boolean {
  return bytes.length >= 4 && bytes[0] === 0xd0 && bytes[1] === 0xcf && bytes[2] === 0x11 && bytes[3] === 0xe0;
}
