// A pull-style RFC 4180 reader. Each record's cells are kept as [start, end) offsets into the
// text (quoted cells with doubled quotes or line breaks as their own string), so a
// million-row file is read without a string per cell unless a caller asks for one. Lenient
// where spreadsheets are (text after a closing quote is kept, short rows are padded by the
// caller); an unclosed quote is reported, never looped on.
import { isMissingRange, parseDecimalRange, type DecimalMode } from './numbers.js';
import type { RowCells } from './rowCells.js';

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

export class CsvRecordReader implements RowCells {
  private pos = 0;
  private records = 0;
  private readonly delim: number;
  private readonly trimTabs: boolean;
  private starts = new Int32Array(64);
  private ends = new Int32Array(64);
  /** Unescaped text of quoted cells; null for cells read in place. */
  private quoted: (string | null)[] = [];
  private anyQuoted = false;
  count = 0;
  /** Record number (1-based) where a quote was opened and never closed; 0 when none. */
  unterminatedQuoteRecord = 0;

  constructor(
    private readonly source: string,
    delimiter: string,
  ) {
    this.delim = delimiter.charCodeAt(0);
    this.trimTabs = this.delim !== TAB;
  }

  /** Share of the text consumed so far, for progress reports. */
  fraction(): number {
    return this.source.length === 0 ? 1 : this.pos / this.source.length;
  }

  /** Reads the next record into `out` as strings; returns its number, 0 at the end. */
  next(out: string[]): number {
    const r = this.advance();
    if (r === 0) return 0;
    out.length = this.count;
    for (let i = 0; i < this.count; i++) out[i] = this.text(i);
    return r;
  }

  /**
   * Moves to the next record and returns its 1-based number, or 0 at the end of the text.
   * A blank line is a record with one empty cell, so numbers match a spreadsheet's rows.
   */
  advance(): number {
    const text = this.source;
    const n = text.length;
    const d = this.delim;
    let pos = this.pos;
    if (pos >= n) return 0;
    this.records++;
    if (this.anyQuoted) {
      this.quoted.length = 0;
      this.anyQuoted = false;
    }
    let count = 0;
    for (;;) {
      if (count === this.starts.length) this.grow();
      let c = pos < n ? text.charCodeAt(pos) : -1;
      if (c === SPACE || (c === TAB && this.trimTabs)) {
        // Blanks before an opening quote do not make the cell unquoted.
        let p = pos + 1;
        while (p < n && (text.charCodeAt(p) === SPACE || (this.trimTabs && text.charCodeAt(p) === TAB))) p++;
        if (p < n && text.charCodeAt(p) === QUOTE) {
          pos = p;
          c = QUOTE;
        }
      }
      if (c === QUOTE) {
        pos = this.readQuoted(pos + 1, count);
        count++;
      } else {
        let start = pos;
        while (pos < n) {
          c = text.charCodeAt(pos);
          if (c === d || c === LF || c === CR) break;
          pos++;
        }
        let end = pos;
        while (start < end && this.isBlank(text.charCodeAt(start))) start++;
        while (end > start && this.isBlank(text.charCodeAt(end - 1))) end--;
        this.starts[count] = start;
        this.ends[count] = end;
        count++;
      }
      if (pos >= n) break;
      c = text.charCodeAt(pos);
      if (c === d) {
        pos++;
        if (pos >= n) {
          // A trailing delimiter ends with an empty cell.
          if (count === this.starts.length) this.grow();
          this.starts[count] = pos;
          this.ends[count] = pos;
          count++;
          break;
        }
        continue;
      }
      pos += c === CR && pos + 1 < n && text.charCodeAt(pos + 1) === LF ? 2 : 1;
      break;
    }
    this.count = count;
    this.pos = pos;
    return this.records;
  }

  /** Reads a quoted cell whose text starts at `from`; returns the position after it. */
  private readQuoted(from: number, index: number): number {
    const text = this.source;
    const n = text.length;
    let pos = from;
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
      const c = text.charCodeAt(pos);
      if (c === this.delim || c === LF || c === CR) break;
      pos++;
    }
    if (pos > tail) {
      const extra = text.slice(tail, pos);
      if (extra.trim() !== '') value += extra;
    }
    while (this.quoted.length < index) this.quoted.push(null);
    this.quoted[index] = value;
    this.anyQuoted = true;
    return pos;
  }

  private isBlank(c: number): boolean {
    return c === SPACE || (c === TAB && this.trimTabs);
  }

  private grow(): void {
    const starts = new Int32Array(this.starts.length * 2);
    starts.set(this.starts);
    const ends = new Int32Array(this.ends.length * 2);
    ends.set(this.ends);
    this.starts = starts;
    this.ends = ends;
  }

  private quotedAt(i: number): string | null {
    return this.anyQuoted && i < this.quoted.length ? this.quoted[i] : null;
  }

  text(i: number): string {
    if (i < 0 || i >= this.count) return '';
    return this.quotedAt(i) ?? this.source.slice(this.starts[i], this.ends[i]);
  }

  equals(i: number, s: string): boolean {
    if (i < 0 || i >= this.count) return s.length === 0;
    const q = this.quotedAt(i);
    if (q !== null) return q === s;
    const start = this.starts[i];
    const len = s.length;
    if (this.ends[i] - start !== len) return false;
    // A plain loop beats a builtin call for the short codes and labels compared here.
    const src = this.source;
    for (let k = 0; k < len; k++) if (src.charCodeAt(start + k) !== s.charCodeAt(k)) return false;
    return true;
  }

  isEmpty(i: number): boolean {
    if (i < 0 || i >= this.count) return true;
    const q = this.quotedAt(i);
    return q !== null ? q.length === 0 : this.ends[i] === this.starts[i];
  }

  isMissing(i: number): boolean {
    if (i < 0 || i >= this.count) return true;
    const q = this.quotedAt(i);
    return q !== null ? isMissingRange(q, 0, q.length) : isMissingRange(this.source, this.starts[i], this.ends[i]);
  }

  number(i: number, mode: DecimalMode): number {
    if (i < 0 || i >= this.count) return NaN;
    const q = this.quotedAt(i);
    return q !== null ? parseDecimalRange(q, 0, q.length, mode) : parseDecimalRange(this.source, this.starts[i], this.ends[i], mode);
  }
}
