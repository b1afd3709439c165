// Dense row-major matrices on Float64Array. Small and explicit on purpose: every model in
// the engine works on per-trial blocks of modest size, so clarity beats a BLAS binding.

export interface Matrix {
  readonly rows: number;
  readonly cols: number;
  /** Row-major: element (i, j) at data[i * cols + j]. */
  readonly data: Float64Array;
}

export function zeros(rows: number, cols: number): Matrix {
  return { rows, cols, data: new Float64Array(rows * cols) };
}

export function identity(n: number): Matrix {
  const m = zeros(n, n);
  for (let i = 0; i < n; i++) m.data[i * n + i] = 1;
  return m;
}

export function fromRows(rows: readonly (readonly number[])[]): Matrix {
  const r = rows.length;
  const c = r === 0 ? 0 : rows[0].length;
  const m = zeros(r, c);
  for (let i = 0; i < r; i++) {
    if (rows[i].length !== c) throw new Error(`fromRows: row ${i} has ${rows[i].length} entries, expected ${c}`);
    for (let j = 0; j < c; j++) m.data[i * c + j] = rows[i][j];
  }
  return m;
}

export function toRows(m: Matrix): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < m.rows; i++) out.push(Array.from(m.data.subarray(i * m.cols, (i + 1) * m.cols)));
  return out;
}

export function get(m: Matrix, i: number, j: number): number {
  return m.data[i * m.cols + j];
}

export function set(m: Matrix, i: number, j: number, v: number): void {
  m.data[i * m.cols + j] = v;
}

export function clone(m: Matrix): Matrix {
  return { rows: m.rows, cols: m.cols, data: new Float64Array(m.data) };
}

export function transpose(m: Matrix): Matrix {
  const t = zeros(m.cols, m.rows);
  for (let i = 0; i < m.rows; i++) for (let j = 0; j < m.cols; j++) t.data[j * m.rows + i] = m.data[i * m.cols + j];
  return t;
}

export function multiply(a: Matrix, b: Matrix): Matrix {
  if (a.cols !== b.rows) throw new Error(`multiply: ${a.rows}x${a.cols} by ${b.rows}x${b.cols}`);
  const c = zeros(a.rows, b.cols);
  const n = b.cols;
  for (let i = 0; i < a.rows; i++) {
    for (let k = 0; k < a.cols; k++) {
      const aik = a.data[i * a.cols + k];
      if (aik === 0) continue;
      const bo = k * n;
      const co = i * n;
      for (let j = 0; j < n; j++) c.data[co + j] += aik * b.data[bo + j];
    }
  }
  return c;
}

/** A' B without forming A'. */
export function crossprod(a: Matrix, b: Matrix = a): Matrix {
  if (a.rows !== b.rows) throw new Error(`crossprod: ${a.rows} rows vs ${b.rows}`);
  const c = zeros(a.cols, b.cols);
  for (let r = 0; r < a.rows; r++) {
    const ao = r * a.cols;
    const bo = r * b.cols;
    for (let i = 0; i < a.cols; i++) {
      const ari = a.data[ao + i];
      if (ari === 0) continue;
      const co = i * b.cols;
      for (let j = 0; j < b.cols; j++) c.data[co + j] += ari * b.data[bo + j];
    }
  }
  return c;
}

export function matVec(a: Matrix, x: ArrayLike<number>): Float64Array {
  if (a.cols !== x.length) throw new Error(`matVec: ${a.rows}x${a.cols} by vector of ${x.length}`);
  const y = new Float64Array(a.rows);
  for (let i = 0; i < a.rows; i++) {
    let s = 0;
    const o = i * a.cols;
    for (let j = 0; j < a.cols; j++) s += a.data[o + j] * x[j];
    y[i] = s;
  }
  return y;
}

/** A' x. */
export function tMatVec(a: Matrix, x: ArrayLike<number>): Float64Array {
  if (a.rows !== x.length) throw new Error(`tMatVec: ${a.rows}x${a.cols}' by vector of ${x.length}`);
  const y = new Float64Array(a.cols);
  for (let i = 0; i < a.rows; i++) {
    const xi = x[i];
    if (xi === 0) continue;
    const o = i * a.cols;
    for (let j = 0; j < a.cols; j++) y[j] += a.data[o + j] * xi;
  }
  return y;
}

export function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/** x' A y for a square A. */
export function quadForm(a: Matrix, x: ArrayLike<number>, y: ArrayLike<number> = x): number {
  let s = 0;
  for (let i = 0; i < a.rows; i++) {
    const xi = x[i];
    if (xi === 0) continue;
    const o = i * a.cols;
    let r = 0;
    for (let j = 0; j < a.cols; j++) r += a.data[o + j] * y[j];
    s += xi * r;
  }
  return s;
}

export function add(a: Matrix, b: Matrix, scaleB = 1): Matrix {
  if (a.rows !== b.rows || a.cols !== b.cols) throw new Error('add: shape mismatch');
  const c = clone(a);
  for (let i = 0; i < c.data.length; i++) c.data[i] += scaleB * b.data[i];
  return c;
}

export function scale(a: Matrix, s: number): Matrix {
  const c = clone(a);
  for (let i = 0; i < c.data.length; i++) c.data[i] *= s;
  return c;
}

/** Columns `idx` of m, in that order. */
export function selectColumns(m: Matrix, idx: readonly number[]): Matrix {
  const out = zeros(m.rows, idx.length);
  for (let i = 0; i < m.rows; i++) for (let k = 0; k < idx.length; k++) out.data[i * idx.length + k] = m.data[i * m.cols + idx[k]];
  return out;
}

/** Rows and columns `idx` of a square m (a principal submatrix). */
export function principal(m: Matrix, idx: readonly number[]): Matrix {
  const k = idx.length;
  const out = zeros(k, k);
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) out.data[a * k + b] = m.data[idx[a] * m.cols + idx[b]];
  return out;
}

export function trace(m: Matrix): number {
  let s = 0;
  for (let i = 0; i < Math.min(m.rows, m.cols); i++) s += m.data[i * m.cols + i];
  return s;
}

/** Make a numerically symmetric matrix exactly symmetric (average of the two triangles). */
export function symmetrize(m: Matrix): Matrix {
  const c = clone(m);
  for (let i = 0; i < m.rows; i++)
    for (let j = i + 1; j < m.cols; j++) {
      const v = 0.5 * (m.data[i * m.cols + j] + m.data[j * m.cols + i]);
      c.data[i * m.cols + j] = v;
      c.data[j * m.cols + i] = v;
    }
  return c;
}
