/**
 * The work memory of solves, as an object its holder passes in: the CLI
 * process, the request thread or a worker holds one `Workspace` and keeps
 * memory warm between its solves; a solve given none makes its own, which is
 * garbage once the solve returns. Nothing here is module state.
 *
 * Why not plain `new Float64Array(n)`: a typed array of more than 64 bytes
 * gets its own off-heap backing store, which costs about 3 µs to allocate (a
 * 50-station solve needs some 75 of them, most of its time), and hundreds of
 * megabytes allocated afresh in dozens of pieces set off one full garbage
 * collection after another. So, during a session (`session`):
 * - small arrays are zeroed views into chunks (about 40 ns each), kept for
 *   the next session;
 * - large arrays (over LARGE_BYTES) are carved from one slab reserved up
 *   front from an estimate (`reserve`), grown by doubling if it falls short,
 *   and kept for the next session up to SLAB_KEPT_BYTES. Fresh pages are slow
 *   to come by (about 3 ms per MB on the machine this was measured on), pages
 *   already written are not, so a large array given back (`release`, or the
 *   end of a `stage`) lends its space to a later one that fits.
 *
 * Who gives memory back: only the pipeline (pipeline.ts). It runs each stage
 * through `stage`, which gives back, when the stage returns, every large
 * array the stage took and did not return (its scratch), and it `release`s a
 * stage's results once no later stage reads them. Stages only take arrays.
 *
 * Outside a session every array is allocated as usual and nothing is given
 * back. Nothing taken during a session may outlive it: a solution is written
 * out (as objects or as JSON) inside it.
 */

const CHUNK_BYTES = 1 << 20; // bytes per chunk of small arrays
const FIRST_CHUNK_MIN = 1 << 14; // bytes: least first chunk of a fresh workspace
const LARGE_BYTES = CHUNK_BYTES >> 2; // bytes: larger arrays come from the slab
const KEPT_CHUNKS = 8; // chunks kept between sessions
const SLAB_KEPT_BYTES = 1 << 30; // bytes: a larger slab is dropped after its session
const ALIGN = 64; // bytes: alignment of arrays in the slab

/** An array the workspace hands out. */
export type WorkArray = Float64Array | Int32Array | Uint8Array;

export class Workspace {
  // Kept between sessions.
  private chunks: ArrayBuffer[] = [];
  /** Bytes at the start of each chunk that earlier arrays wrote (beyond them a chunk is still zero). */
  private chunkDirty: number[] = [];
  private slab: ArrayBuffer | null = null;
  /** Bytes at the start of the slab that earlier arrays wrote. */
  private slabDirty = 0;

  // The current session.
  private active = false;
  private chunk = 0;
  private offset = 0;
  private slabUsed = 0;
  /** Large regions handed out in this session, in order: buffer, offset, size in bytes, still held. */
  private regionBuffer: ArrayBuffer[] = [];
  private regionAt: number[] = [];
  private regionSize: number[] = [];
  private regionHeld: boolean[] = [];
  /** Regions given back in this session whose space no later array has taken yet. */
  private spare: number[] = [];

  /** True during a session: a solve cannot share it (a nested solve makes its own). */
  get busy(): boolean {
    return this.active;
  }

  /**
   * Runs `fn` as one session: arrays taken in it are valid until it returns,
   * then all of their space is free for the next session.
   */
  session<T>(fn: () => T): T {
    if (this.active) throw new Error('workspace already in a session');
    this.active = true;
    this.chunk = 0;
    this.offset = 0;
    this.slabUsed = 0;
    try {
      return fn();
    } finally {
      this.active = false;
      if (this.chunks.length > KEPT_CHUNKS) {
        this.chunks.length = KEPT_CHUNKS;
        this.chunkDirty.length = KEPT_CHUNKS;
      }
      this.regionBuffer.length = 0;
      this.regionAt.length = 0;
      this.regionSize.length = 0;
      this.regionHeld.length = 0;
      this.spare.length = 0;
      if (this.slab && this.slab.byteLength > SLAB_KEPT_BYTES) this.dropKept();
    }
  }

  /**
   * Makes room for `bytes` bytes of large arrays in this session, in one
   * piece, and for a first chunk of small ones sized to the solve: called at
   * the start of a session with an estimate of what it will use.
   */
  reserve(bytes: number, smallBytes = CHUNK_BYTES): void {
    if (!this.active) return;
    if (this.chunks.length === 0) {
      this.chunks.push(new ArrayBuffer(Math.min(CHUNK_BYTES, Math.max(FIRST_CHUNK_MIN, roundUp(smallBytes)))));
      this.chunkDirty.push(0);
    }
    if (this.slabUsed > 0 || bytes <= LARGE_BYTES) return;
    if (this.slab && this.slab.byteLength >= bytes) return;
    this.slab = new ArrayBuffer(roundUp(bytes));
    this.slabDirty = 0;
  }

  /**
   * Runs one stage of a solve and answers its result; then gives back every
   * large array the stage took and that its result does not hold. A result
   * holds an array that is the result, a property of it, or a property of a
   * plain object among its properties (arrays it keeps only in closures or
   * deeper do not count).
   */
  stage<T>(fn: () => T): T {
    const mark = this.regionHeld.length;
    const result = fn();
    if (!this.active || this.regionHeld.length === mark) return result;
    const kept: WorkArray[] = [];
    heldArrays(result, kept, 2);
    for (let r = mark; r < this.regionHeld.length; r++) {
      if (this.regionHeld[r] && !kept.some((a) => this.overlaps(r, a))) this.giveBack(r);
    }
    return result;
  }

  /**
   * Gives the space of large arrays back for the rest of the session: a later
   * array that fits takes the smallest such space. Only for arrays nothing
   * reads again. An array (or a subarray from its start) is given back once;
   * small arrays, arrays from elsewhere and subarrays from inside a region
   * are ignored.
   */
  release(...arrays: WorkArray[]): void {
    if (!this.active) return;
    for (const a of arrays) {
      for (let r = this.regionHeld.length - 1; r >= 0; r--) {
        if (this.regionHeld[r] && this.regionBuffer[r] === a.buffer && this.regionAt[r] === a.byteOffset) {
          this.giveBack(r);
          break;
        }
      }
    }
  }

  /** Drops the memory kept between sessions (a long-lived holder after a very large solve). */
  dropKept(): void {
    if (this.active) return;
    this.slab = null;
    this.slabDirty = 0;
  }

  /** Bytes kept between sessions for large arrays. */
  keptBytes(): number {
    return this.slab ? this.slab.byteLength : 0;
  }

  /** Bytes of the slab used so far in this session (the high-water mark of large arrays). */
  largeBytesUsed(): number {
    return this.slabUsed;
  }

  /** A zeroed Float64Array of n values. */
  f64(n: number): Float64Array {
    const bytes = n * 8;
    if (!this.active) return new Float64Array(n);
    const a = new Float64Array(this.take(bytes), this.at, n);
    if (this.dirty) a.fill(0);
    return a;
  }

  /** A zeroed Int32Array of n values. */
  i32(n: number): Int32Array {
    if (!this.active) return new Int32Array(n);
    const a = new Int32Array(this.take(((n * 4 + 7) >> 3) << 3), this.at, n);
    if (this.dirty) a.fill(0);
    return a;
  }

  /** A zeroed Uint8Array of n values. */
  u8(n: number): Uint8Array {
    if (!this.active) return new Uint8Array(n);
    const a = new Uint8Array(this.take(((n + 7) >> 3) << 3), this.at, n);
    if (this.dirty) a.fill(0);
    return a;
  }

  /** A copy of the first n values of an Int32Array. */
  i32Copy(src: Int32Array, n: number): Int32Array {
    const out = this.i32(n);
    out.set(src.subarray(0, n));
    return out;
  }

  /** A copy of the first n values of a Float64Array. */
  f64Copy(src: Float64Array, n: number): Float64Array {
    const out = this.f64(n);
    out.set(src.subarray(0, n));
    return out;
  }

  // Where `take` put the last array, and whether its bytes may hold old values.
  private at = 0;
  private dirty = false;

  /** Space for `bytes` bytes (a multiple of 8): answers the buffer, with the offset in `at`. */
  private take(bytes: number): ArrayBuffer {
    if (bytes > LARGE_BYTES) return this.takeLarge(roundUp(bytes));
    if (this.chunk < this.chunks.length && this.offset + bytes > this.chunks[this.chunk].byteLength) {
      this.chunk++;
      this.offset = 0;
    }
    if (this.chunk === this.chunks.length) {
      this.chunks.push(new ArrayBuffer(CHUNK_BYTES));
      this.chunkDirty.push(0);
    }
    const at = this.offset;
    this.offset += bytes;
    this.at = at;
    this.dirty = at < this.chunkDirty[this.chunk];
    if (this.offset > this.chunkDirty[this.chunk]) this.chunkDirty[this.chunk] = this.offset;
    return this.chunks[this.chunk];
  }

  private takeLarge(size: number): ArrayBuffer {
    // The smallest space given back that holds it (its pages are already in memory; fresh ones are slow).
    let fit = -1;
    for (let k = 0; k < this.spare.length; k++) {
      const s = this.regionSize[this.spare[k]];
      if (s >= size && (fit < 0 || s < this.regionSize[this.spare[fit]])) fit = k;
    }
    if (fit >= 0) {
      const r = this.spare[fit];
      this.spare[fit] = this.spare[this.spare.length - 1];
      this.spare.pop();
      this.dirty = true;
      return this.hand(this.regionBuffer[r], this.regionAt[r], this.regionSize[r]);
    }
    if (!this.slab || this.slabUsed + size > this.slab.byteLength) {
      // Outgrown: a new slab of at least twice the size; arrays already handed out stay where they are.
      this.slab = new ArrayBuffer(Math.max(size, 2 * (this.slab?.byteLength ?? 0)));
      this.slabUsed = 0;
      this.slabDirty = 0;
    }
    const at = this.slabUsed;
    this.slabUsed += size;
    this.dirty = at < this.slabDirty;
    this.slabDirty = Math.max(this.slabDirty, this.slabUsed);
    return this.hand(this.slab, at, size);
  }

  /** Notes a large region as handed out. */
  private hand(buffer: ArrayBuffer, at: number, size: number): ArrayBuffer {
    this.regionBuffer.push(buffer);
    this.regionAt.push(at);
    this.regionSize.push(size);
    this.regionHeld.push(true);
    this.at = at;
    return buffer;
  }

  private giveBack(r: number): void {
    this.regionHeld[r] = false;
    this.spare.push(r);
  }

  /** True when array `a` lies (partly) in region r. */
  private overlaps(r: number, a: WorkArray): boolean {
    if (a.buffer !== this.regionBuffer[r]) return false;
    const from = this.regionAt[r];
    return a.byteOffset < from + this.regionSize[r] && a.byteOffset + a.byteLength > from;
  }
}

function roundUp(bytes: number): number {
  return Math.ceil(bytes / ALIGN) * ALIGN;
}

/** Collects the typed arrays a stage's result holds, `depth` levels of plain objects deep. */
function heldArrays(value: unknown, out: WorkArray[], depth: number): void {
  if (ArrayBuffer.isView(value)) {
    out.push(value as WorkArray);
    return;
  }
  if (depth === 0 || value === null || typeof value !== 'object' || Array.isArray(value)) return;
  const proto = Object.getPrototypeOf(value);
  if (proto !== Object.prototype && proto !== null) return;
  for (const key in value) heldArrays((value as Record<string, unknown>)[key], out, depth - 1);
}
