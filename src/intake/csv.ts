// A pull-style RFC 4180 reader: one record at a time into a reused array, so a million-row
// file costs one string per field and no per-row objects. Lenient where spreadsheets are
// (text after a closing quote is kept, short rows are padded by the caller); an unclosed
// quote is reported, never looped on.

const QUOTE = 34;
const LF = 10;
const CR = 13;
const SPACE = 32;
const TAB = 9;

export const DELIMITER_CANDIDATES = [',', ';', '\t', '|'] as const;

/**
 * Picks the delimiter that occurs most often, outside quotes, in the first record.
 * With a decimal comma the comma is not a candidate and ';' is the default.
 */
export function detectDelimiter(text: string, decimalComma: boolean): string {
  const candidates = decimalComma ? [';', '\t', '|'] : [...DELIMITER_CANDIDATES];
  const counts = new Map<number, number>(candidates.map((c) => [c.charCodeAt(0), 0]));
  let inQuotes = false;
  const limit = Math.min(text.length, 1 << 16);
  for (let i = 0; i < limit; i++) {
    const c = text.charCodeAt(i);
    if (c === QUOTE) inQuotes = !inQuotes;
    else if (!inQuotes) {
      if (c === LF || c === CR) break;
      const k = counts.get(c);
      if (k !== undefined) counts.set(c, k + 1);
    }
  }
  let best = candidates[0];
  let bestCount = 0;
  for (const cand of candidates) {
    const k = counts.get(cand.charCodeAt(0)) ?? 0;
    if (k > bestCount) {
      best = cand;
      bestCount = k;
    }
  }
  return best;
}

export class CsvRecordReader {
  private pos = 0;
  private records = 0;
  /** Record number (1-based) where a quote was opened and never closed; 0 when none. */
  unterminatedQuoteRecord = 0;

  constructor(
    private readonly text: string,
    delimiter: string,
  ) {
    this.delim = delimiter.charCodeAt(0);
    this.trimTabs = this.delim !== TAB;
  }

  private readonly delim: number;
  private readonly trimTabs: boolean;

  /** Share of the text consumed so far, for progress reports. */
  fraction(): number {
    return this.text.length === 0 ? 1 : this.pos / this.text.length;
  }

  /**
   * Reads the next record into `out` (its length is set to the field count) and returns
   * the record's 1-based number, or 0 at the end of the text. A blank line is a record
   * with one empty field, so numbers match the rows a spreadsheet shows.
   */
  next(out: string[]): number {
    const text = this.text;
    const n = text.length;
    const d = this.delim;
    let pos = this.pos;
    if (pos >= n) return 0;
    this.records++;
    let count = 0;
    for (;;) {
      let c = pos < n ? text.charCodeAt(pos) : -1;
      if (c === SPACE || (c === TAB && this.trimTabs)) {
        // Blanks before an opening quote do not make the field unquoted.
        let p = pos + 1;
        while (p < n && (text.charCodeAt(p) === SPACE || (this.trimTabs && text.charCodeAt(p) === TAB))) p++;
        if (p < n && text.charCodeAt(p) === QUOTE) {
          pos = p;
          c = QUOTE;
        }
      }
      if (c === QUOTE) {
        pos++;
        let value = '';
        let chunk = pos;
        for (;;) {
          const q = text.indexOf('"', pos);
          if (q < 0) {
            value += text.slice(chunk);
            pos = n;
            if (this.unterminatedQuoteRecord === 0) this.unterminatedQuoteRecord = this.records;
            break;
          }
          if (q + 1 < n && text.charCodeAt(q + 1) === QUOTE) {
            value += text.slice(chunk, q + 1);
            pos = q + 2;
            chunk = pos;
            continue;
          }
          value += text.slice(chunk, q);
          pos = q + 1;
          break;
        }
        const tail = pos;
        while (pos < n) {
          c = text.charCodeAt(pos);
          if (c === d || c === LF || c === CR) break;
          pos++;
        }
        if (pos > tail) {
          const extra = text.slice(tail, pos);
          if (extra.trim() !== '') value += extra;
        }
        out[count++] = value;
      } else {
        const start = pos;
        while (pos < n) {
          c = text.charCodeAt(pos);
          if (c === d || c === LF || c === CR) break;
          pos++;
        }
        out[count++] = this.trimmedSlice(start, pos);
      }
      if (pos >= n) break;
      c = text.charCodeAt(pos);
      if (c === d) {
        pos++;
        if (pos >= n) {
          out[count++] = ''; // a trailing delimiter ends with an empty field
          break;
        }
        continue;
      }
      pos += c === CR && pos + 1 < n && text.charCodeAt(pos + 1) === LF ? 2 : 1;
      break;
    }
    if (out.length !== count) out.length = count; // setting length is a runtime call: only when it changes
    this.pos = pos;
    return this.records;
  }

  private trimmedSlice(start: number, end: number): string {
    const text = this.text;
    if (start < end) {
      const a = text.charCodeAt(start);
      const b = text.charCodeAt(end - 1);
      const blankA = a === SPACE || (a === TAB && this.trimTabs);
      const blankB = b === SPACE || (b === TAB && this.trimTabs);
      if (blankA || blankB) return text.slice(start, end).trim();
    }
    return text.slice(start, end);
  }
}
