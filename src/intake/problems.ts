// Collects every problem of a file, up to a limit, so one run tells the user all they must fix.
import { IntakeError, type IntakeProblem } from './types.js';

export const DEFAULT_MAX_PROBLEMS = 200;
const MAX_VALUE_CHARS = 200;
const MAX_MESSAGE_CHARS = 1000;

export class ProblemList {
  readonly items: IntakeProblem[] = [];
  /** Set once a problem had to be dropped because the list was full. */
  truncated = false;

  constructor(
    readonly file: string,
    readonly max: number = DEFAULT_MAX_PROBLEMS,
  ) {}

  add(row: number, column: string | null, value: string | null, rule: string, message: string): void {
    if (this.items.length >= this.max) {
      this.truncated = true;
      return;
    }
    // A damaged file can hold megabyte cells; a problem shows enough of one to find it.
    const shown = value !== null && value.length > MAX_VALUE_CHARS ? `${value.slice(0, MAX_VALUE_CHARS)}... (${value.length} characters)` : value;
    const text = message.length > MAX_MESSAGE_CHARS ? `${message.slice(0, MAX_MESSAGE_CHARS)}...` : message;
    this.items.push({ file: this.file, row, column, value: shown, rule, message: text });
  }

  /** True once the limit is reached: reading further would only find problems we cannot list. */
  get full(): boolean {
    return this.items.length >= this.max;
  }

  throwIfAny(): void {
    if (this.items.length > 0) throw new IntakeError(this.items, this.truncated);
  }
}

/** Throws an IntakeError for one whole-file problem. */
export function failWith(file: string, rule: string, message: string, column: string | null = null, value: string | null = null): never {
  throw new IntakeError([{ file, row: 0, column, value, rule, message }]);
}
