// JSON kept in the analysis tables (analysis_result.payload_json, analysis_trial.summary_json):
// a payload of more than DEFLATE_FROM characters is stored as a BLOB holding its UTF-8 text
// compressed with raw DEFLATE (RFC 1951), a smaller one as plain TEXT. SQLite keeps a BLOB as
// it is in a TEXT column, so no migration is needed, and a row saved before compression (always
// TEXT) reads as it is: the storage class of the value says which form it is in.
import { deflateRawSync, inflateRawSync } from 'node:zlib';

/** Payloads shorter than this stay readable text (headlines, counts, warnings). */
export const DEFLATE_FROM = 512;

export function encodeStoredJson(value: unknown): string | Buffer {
  const json = JSON.stringify(value);
  if (json === undefined) throw new TypeError('the value cannot be stored as JSON');
  // Level 1: per row the cost is mostly setting up the stream; the higher levels gain 2-3% here.
  return json.length < DEFLATE_FROM ? json : deflateRawSync(json, { level: 1 });
}

export function decodeStoredJson(stored: string | Uint8Array): unknown {
  return JSON.parse(typeof stored === 'string' ? stored : inflateRawSync(stored).toString('utf8'));
}
