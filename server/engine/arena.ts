/**
 * Typed arrays for the short-lived work of one solve.
 *
 * A typed array of more than 64 bytes gets its own off-heap backing store,
 * which costs about 3 µs to allocate here: a 50-station solve needs some 75
 * of them, most of its time. Inside `withArena`, small arrays are instead
 * zeroed views into reused chunks (about 40 ns each).
 *
 * Large arrays (a million-station solve needs dozens of 4 to 8 MB) are
 * carved from one large slab, reserved at the start of the solve from an
 * estimate of what it will need (`reserveLarge`), grown by doubling if the
 * estimate falls short, and kept for the next solve up to SLAB_KEPT_BYTES.
 * Fresh off-heap memory counts towards V8's heap limits: allocating hundreds
 * of megabytes in dozens of pieces sets off one full garbage collection after
 * another, one slab only one. Pages of the slab that a solve never touches
 * cost address space only. A large array nothing will read again is given
 * back with `release`, and a later one takes its space: fresh pages are slow
 * to come by (about 3 ms per MB on the machine this was measured on), pages
 * already in use are not.
 *
 * Outside `withArena` every array is allocated as usual. Nothing allocated here
 * may outlive the `withArena` call: a solution is written out (as objects or
 * as JSON) inside it.
 */

const CHUNK_BYTES = 1 << 20; // bytes per chunk
const LARGE_BYTES = CHUNK_BYTES >> 2; // bytes: larger arrays come from the slab
const KEPT_CHUNKS = 8; // chunks kept between solves
const SLAB_KEPT_BYTES = 1 << 30; // bytes: a larger slab is dropped after its solve
const ALIGN = 64; // bytes: alignment of arrays in the slab

const chunks: ArrayBuffer[] = [];
let active = false;
let chunk = 0;
let offset = 0;

/** The slab of large arrays, the next free byte in it, and how far earlier solves wrote into it. */
let slab: ArrayBuffer | null = null;
let slabUsed = 0;
let slabDirty = 0;
/** Large regions handed out in the current solve: buffer → offset → size in bytes. */
const handed = new Map<ArrayBuffer, Map<number, number>>();
/** Large regions given back during the current solve: size in bytes, buffer, offset. */
const released: Array<[number, ArrayBuffer, number]> = [];

/** Runs `fn` with typed arrays taken from the arena, then releases them all. */
export function withArena<T>(fn: () => T): T {
  if (active) return fn();
  active = true;
  chunk = 0;
  offset = 0;
  slabUsed = 0;
  try {
    return fn();
  } finally {
    active = false;
    if (chunks.length > KEPT_CHUNKS) chunks.length = KEPT_CHUNKS;
    released.length = 0;
    handed.clear();
    if (slab && slab.byteLength > SLAB_KEPT_BYTES) {
      slab = null;
      slabDirty = 0;
    }
  }
}

/**
 * Makes room for `bytes` bytes of large arrays in this solve, in one piece:
 * called at the start of a solve with an estimate of what it will use.
 */
export function reserveLarge(bytes: number): void {
  if (!active || slabUsed > 0 || bytes <= LARGE_BYTES) return;
  if (slab && slab.byteLength >= bytes) return;
  slab = new ArrayBuffer(roundUp(bytes));
  slabDirty = 0;
}

/**
 * Gives the space of large arrays back for the rest of the solve: a later
 * array that fits takes the smallest such space. Only for arrays nothing
 * reads again. An array (or a subarray from its start) is given back once;
 * small arrays, arrays from outside the arena and subarrays from elsewhere
 * than a start are ignored.
 */
export function release(...arrays: Array<Float64Array | Int32Array | Uint8Array>): void {
  if (!active || handed.size === 0) return;
  for (const a of arrays) {
    const regions = handed.get(a.buffer as ArrayBuffer);
    const size = regions?.get(a.byteOffset);
    if (regions === undefined || size === undefined) continue;
    regions.delete(a.byteOffset);
    released.push([size, a.buffer as ArrayBuffer, a.byteOffset]);
  }
}

/** Notes a large region as handed out. */
function hand(buffer: ArrayBuffer, at: number, size: number): void {
  const regions = handed.get(buffer);
  if (regions) regions.set(at, size);
  else handed.set(buffer, new Map([[at, size]]));
}

/** Drops the slab kept between solves (a long-lived process after a very large solve). */
export function releaseArena(): void {
  if (active) return;
  slab = null;
  slabDirty = 0;
}

/** Bytes kept between solves for large arrays. */
export function arenaKeptBytes(): number {
  return slab ? slab.byteLength : 0;
}

/** Bytes of large arrays used so far in the current solve. */
export function largeBytesUsed(): number {
  return slabUsed;
}

function roundUp(bytes: number): number {
  return Math.ceil(bytes / ALIGN) * ALIGN;
}

/**
 * Space for `bytes` bytes (a multiple of 8): a buffer, the offset in it, and
 * whether it may hold old values; null when the array should be allocated as usual.
 */
function take(bytes: number): [ArrayBuffer, number, boolean] | null {
  if (!active) return null;
  if (bytes > LARGE_BYTES) {
    const size = roundUp(bytes);
    // The smallest region given back that holds it (its pages are already in memory; fresh ones are slow).
    let fit = -1;
    for (let k = 0; k < released.length; k++) {
      if (released[k][0] >= size && (fit < 0 || released[k][0] < released[fit][0])) fit = k;
    }
    if (fit >= 0) {
      const [whole, buffer, at] = released[fit];
      released[fit] = released[released.length - 1];
      released.pop();
      hand(buffer, at, whole);
      return [buffer, at, true];
    }
    if (!slab || slabUsed + size > slab.byteLength) {
      // Outgrown: a new slab of at least twice the size; arrays already handed out stay where they are.
      slab = new ArrayBuffer(Math.max(size, 2 * (slab?.byteLength ?? 0)));
      slabUsed = 0;
      slabDirty = 0;
    }
    const at = slabUsed;
    slabUsed += size;
    const dirty = at < slabDirty;
    slabDirty = Math.max(slabDirty, slabUsed);
    hand(slab, at, size);
    return [slab, at, dirty];
  }
  if (offset + bytes > CHUNK_BYTES) {
    chunk++;
    offset = 0;
  }
  if (chunk === chunks.length) chunks.push(new ArrayBuffer(CHUNK_BYTES));
  const at = offset;
  offset += bytes;
  return [chunks[chunk], at, true];
}

/** A zeroed Float64Array of n values. */
export function f64(n: number): Float64Array {
  const place = take(n * 8);
  return place ? zeroed(new Float64Array(place[0], place[1], n), place[2]) : new Float64Array(n);
}

/** A zeroed Int32Array of n values. */
export function i32(n: number): Int32Array {
  const place = take(((n * 4 + 7) >> 3) << 3);
  return place ? zeroed(new Int32Array(place[0], place[1], n), place[2]) : new Int32Array(n);
}

/** A zeroed Uint8Array of n values. */
export function u8(n: number): Uint8Array {
  const place = take(((n + 7) >> 3) << 3);
  return place ? zeroed(new Uint8Array(place[0], place[1], n), place[2]) : new Uint8Array(n);
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

function zeroed<T extends Float64Array | Int32Array | Uint8Array>(a: T, used: boolean): T {
  if (used) a.fill(0);
  return a;
}
