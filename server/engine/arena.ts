/**
 * Typed arrays for the short-lived work of one solve.
 *
 * A typed array of more than 64 bytes gets its own off-heap backing store,
 * which costs about 3 µs to allocate here: a 50-station solve needs some 75
 * of them, most of its time. Inside `withArena`, small arrays are instead
 * zeroed views into reused chunks (about 40 ns each). Large arrays, and every
 * array outside `withArena`, are allocated as usual. Nothing allocated here may
 * outlive the `withArena` call: the solution is built from plain arrays.
 */

const CHUNK_BYTES = 1 << 20; // bytes per chunk
const LARGE_BYTES = CHUNK_BYTES >> 2; // bytes: larger arrays get their own buffer
const KEPT_CHUNKS = 8; // chunks kept between solves

const chunks: ArrayBuffer[] = [];
let active = false;
let chunk = 0;
let offset = 0;

/** Runs `fn` with small typed arrays taken from the arena, then releases them all. */
export function withArena<T>(fn: () => T): T {
  if (active) return fn();
  active = true;
  chunk = 0;
  offset = 0;
  try {
    return fn();
  } finally {
    active = false;
    if (chunks.length > KEPT_CHUNKS) chunks.length = KEPT_CHUNKS;
  }
}

/** Space for `bytes` bytes (a multiple of 8), or null when the array should have its own buffer. */
function take(bytes: number): [ArrayBuffer, number] | null {
  if (!active || bytes > LARGE_BYTES) return null;
  if (offset + bytes > CHUNK_BYTES) {
    chunk++;
    offset = 0;
  }
  if (chunk === chunks.length) chunks.push(new ArrayBuffer(CHUNK_BYTES));
  const at = offset;
  offset += bytes;
  return [chunks[chunk], at];
}

/** A zeroed Float64Array of n values. */
export function f64(n: number): Float64Array {
  const place = take(n * 8);
  return place ? new Float64Array(place[0], place[1], n).fill(0) : new Float64Array(n);
}

/** A zeroed Int32Array of n values. */
export function i32(n: number): Int32Array {
  const place = take(((n * 4 + 7) >> 3) << 3);
  return place ? new Int32Array(place[0], place[1], n).fill(0) : new Int32Array(n);
}

/** A zeroed Uint8Array of n values. */
export function u8(n: number): Uint8Array {
  const place = take(((n + 7) >> 3) << 3);
  return place ? new Uint8Array(place[0], place[1], n).fill(0) : new Uint8Array(n);
}

/** A copy of the first n values of an Int32Array. */
export function i32Copy(src: Int32Array, n: number): Int32Array {
  const out = i32(n);
  out.set(src.subarray(0, n));
  return out;
}

/** A copy of the first n values of a Float64Array. */
export function f64Copy(src: Float64Array, n: number): Float64Array {
  const out = f64(n);
  out.set(src.subarray(0, n));
  return out;
}
