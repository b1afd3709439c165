// Cheap small typed arrays. Every `new Float64Array(n)` above 64 bytes gets its own off-heap
// backing store, which costs microseconds to create and adds work to every garbage collection;
// the one-stage fit creates thousands of small per-trial and per-pattern arrays. Views into a
// shared chunk cost about as much as a plain object. A chunk lives as long as any view into it,
// so only arrays that live about as long as each other should come from here.

const CHUNK = 1 << 15;
/** Arrays at least this long get their own buffer (a view would pin too much of a chunk). */
const OWN_BUFFER = CHUNK >> 3;

// Every branch of f64/i32 runs once at load (see the end of this file): optimised code that
// inlines them then has type feedback for each call (none would mean a deoptimisation the
// first time a chunk runs out).
function freshF64Chunk(): Float64Array {
  return new Float64Array(CHUNK);
}
function freshI32Chunk(): Int32Array {
  return new Int32Array(CHUNK);
}

let f64Chunk: Float64Array = new Float64Array(0);
let f64Used = 0;
let i32Chunk: Int32Array = new Int32Array(0);
let i32Used = 0;

/** A zero-filled Float64Array of length n. */
export function f64(n: number): Float64Array {
  if (n >= OWN_BUFFER) return ownF64(n);
  if (f64Used + n > f64Chunk.length) {
    f64Chunk = freshF64Chunk();
    f64Used = 0;
  }
  // the constructor on the buffer is several times cheaper than subarray (no species lookup)
  const out = new Float64Array(f64Chunk.buffer, f64Used * 8, n);
  f64Used += n;
  return out;
}

/** A zero-filled Int32Array of length n. */
export function i32(n: number): Int32Array {
  if (n >= OWN_BUFFER) return ownI32(n);
  if (i32Used + n > i32Chunk.length) {
    i32Chunk = freshI32Chunk();
    i32Used = 0;
  }
  const out = new Int32Array(i32Chunk.buffer, i32Used * 4, n);
  i32Used += n;
  return out;
}

function ownF64(n: number): Float64Array {
  return new Float64Array(n);
}
function ownI32(n: number): Int32Array {
  return new Int32Array(n);
}

/** Reusable scratch of at least n doubles (contents undefined; not zeroed). Grows, never shrinks. */
export class Scratch {
  private buf = new Float64Array(64);
  get(n: number): Float64Array {
    if (this.buf.length < n) this.buf = new Float64Array(Math.max(n, 2 * this.buf.length));
    return this.buf;
  }
}

f64(1);
f64(OWN_BUFFER);
i32(1);
i32(OWN_BUFFER);
