// Dot products over gathered entries, for the per-pattern loops of the one-stage engine. They
// are deliberately small separate functions: a command runs each engine loop only a few
// hundred times, too few for V8 to optimise a large loop nest before it is done, whereas a tiny
// function called from every such loop is optimised after its first few hundred calls and then
// does the arithmetic of all of them.

/** sum_k a[ao + idx[k]] * b[bo + k * bs], k < idx.length. */
export function gatherDot(a: Float64Array, ao: number, idx: Int32Array, b: Float64Array, bo: number, bs: number): number {
  let s = 0;
  for (let k = 0; k < idx.length; k++) s += a[ao + idx[k]] * b[bo + k * bs];
  return s;
}

/** sum_k a[ao + idx[k]] * a[bo + idx[k]]: two rows of a symmetric matrix over the columns idx. */
export function rowsDot(a: Float64Array, ao: number, bo: number, idx: Int32Array): number {
  let s = 0;
  for (let k = 0; k < idx.length; k++) s += a[ao + idx[k]] * a[bo + idx[k]];
  return s;
}
