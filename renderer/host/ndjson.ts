// Splitting a streamed NDJSON body into whole lines: chunks may end in the middle of a line.

export interface NdjsonSplit {
  readonly lines: string[];
  /** The unfinished last line, kept for the next chunk. */
  readonly rest: string;
}

export function splitNdjson(pending: string, chunk: string): NdjsonSplit {
  const text = pending + chunk;
  const parts = text.split('\n');
  const rest = parts.pop() ?? '';
  return { lines: parts.map((l) => l.trim()).filter((l) => l.length > 0), rest };
}

/** One line of the wire protocol: a progress event or the final result. */
export type WireLine = { readonly progress: unknown } | { readonly result: unknown };

export function parseWireLine(line: string): WireLine {
  const value: unknown = JSON.parse(line);
  if (value !== null && typeof value === 'object' && ('progress' in value || 'result' in value)) return value as WireLine;
  throw new Error(`unexpected line from the server: ${line.slice(0, 120)}`);
}
