// Symmetric matrices over the variance parameters whose per-block terms (the AI matrix's a0, the
// expected information's block part) meet a trial's residual parameter only with itself and
// with the shared random-term parameters. With one residual per trial that is an arrowhead:
// the shared rows in full, then a diagonal. Stored that way its size grows with the number of
// trials, not with its square (at 4,000 trials a dense copy would take 128 MB). With a common
// residual every parameter counts as shared and the storage is the dense matrix.

export class SymmetricArrowhead {
  /** Rows 0 .. shared - 1 in full (n wide, the shared block kept symmetric). */
  readonly rows: Float64Array;
  /** Diagonal entries of parameters shared .. n - 1. */
  readonly diagonal: Float64Array;

  /** Parameters 0 .. shared - 1 are shared (the layout puts the random terms first); the rest meet only the shared ones. */
  constructor(
    readonly n: number,
    readonly shared: number,
  ) {
    this.rows = new Float64Array(shared * n);
    this.diagonal = new Float64Array(n);
  }

  /** Adds v to entries (k, l) and (l, k) (once on the diagonal). */
  addSymmetric(k: number, l: number, v: number): void {
    const n = this.n;
    if (k === l) {
      if (k < this.shared) this.rows[k * n + k] += v;
      else this.diagonal[k] += v;
      return;
    }
    const a = k < l ? k : l;
    const b = k < l ? l : k;
    if (a >= this.shared) throw new Error(`parameters ${a} and ${b} are both trial-level: not an arrowhead`);
    this.rows[a * n + b] += v;
    if (b < this.shared) this.rows[b * n + a] += v;
  }

  get(k: number, l: number): number {
    if (k === l) return k < this.shared ? this.rows[k * this.n + k] : this.diagonal[k];
    const a = k < l ? k : l;
    const b = k < l ? l : k;
    return a < this.shared ? this.rows[a * this.n + b] : 0;
  }

  clone(): SymmetricArrowhead {
    const out = new SymmetricArrowhead(this.n, this.shared);
    out.rows.set(this.rows);
    out.diagonal.set(this.diagonal);
    return out;
  }

  /** alpha * this + beta * other (same layout). */
  combine(alpha: number, other: SymmetricArrowhead, beta: number): SymmetricArrowhead {
    const out = new SymmetricArrowhead(this.n, this.shared);
    for (let i = 0; i < this.rows.length; i++) out.rows[i] = alpha * this.rows[i] + beta * other.rows[i];
    for (let i = 0; i < this.n; i++) out.diagonal[i] = alpha * this.diagonal[i] + beta * other.diagonal[i];
    return out;
  }

  /** The dense n x n matrix (row-major). */
  toDense(): Float64Array {
    const n = this.n;
    const out = new Float64Array(n * n);
    for (let a = 0; a < this.shared; a++)
      for (let b = 0; b < n; b++) {
        out[a * n + b] = this.rows[a * n + b];
        out[b * n + a] = this.rows[a * n + b];
      }
    for (let k = this.shared; k < n; k++) out[k * n + k] = this.diagonal[k];
    return out;
  }
}

/** How many leading parameters are shared: the random terms with one residual per trial, all of them otherwise. */
export function sharedParameterCount(parameters: readonly { readonly kind: string; readonly trial?: number }[]): number {
  const perTrial = parameters.some((p) => p.kind === 'residual' && p.trial !== undefined && p.trial >= 0);
  return perTrial ? parameters.filter((p) => p.kind === 'term').length : parameters.length;
}
