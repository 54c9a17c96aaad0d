/**
 * Sparse symmetric positive definite solver: fill-reducing ordering, then an
 * up-looking L·D·Lᵀ factorisation over the elimination tree.
 *
 * Shaft systems are chains and trees of shafts, with at most a few loops
 * through gear meshes and couplings. Eliminating leaves first makes no fill at
 * all on a tree, so the ordering peels every vertex of degree ≤ 1 (repeatedly,
 * in linear time) and orders only what remains, the loops, by minimum degree.
 * Work and memory then grow linearly with the number of stations.
 *
 * The constructor factorises; `solve` answers K·x = b.
 */
import { f64, i32, i32Copy, release, u8 } from './arena.js';

/** A symmetric matrix by its diagonal and its strictly off-diagonal entries (either triangle, duplicates summed). */
export interface SymmetricEntries {
  readonly n: number;
  readonly diag: Float64Array;
  readonly rows: Int32Array;
  readonly cols: Int32Array;
  readonly vals: Float64Array;
  /** Entries used in rows/cols/vals. */
  readonly count: number;
}

/** Thrown when a pivot vanishes: the matrix is singular or too badly conditioned. */
export class SingularMatrixError extends Error {
  constructor(
    readonly column: number,
    readonly ratio: number,
  ) {
    super(`pivot ${column} is ${ratio.toExponential(2)} of its diagonal`);
  }
}

/** Pivots smaller than this fraction of the original diagonal mean no trustworthy solution. */
const PIVOT_TOLERANCE = 1e-13;

export class SparseLDLT {
  readonly n: number;
  /** Nonzeros of L below the diagonal. */
  readonly factorNonzeros: number;
  /** Smallest pivot relative to its diagonal entry: a cheap conditioning indicator. */
  readonly minPivotRatio: number;
  private readonly perm: Int32Array;
  private readonly Lp: Int32Array;
  private readonly Li: Int32Array;
  private readonly Lx: Float64Array;
  private readonly D: Float64Array;

  /**
   * Factorises `a`. With `consume`, the off-diagonal entries (rows, cols,
   * vals) are given back to the arena as soon as they are read: the caller
   * must not read them again.
   */
  constructor(a: SymmetricEntries, options: { consume?: boolean } = {}) {
    const n = a.n;
    this.n = n;
    const { Ap, Ai, Ax } = toFullCSC(a);
    if (options.consume) release(a.rows, a.cols, a.vals);
    const perm = fillReducingOrder(n, Ap, Ai);
    const pinv = i32(n);
    for (let k = 0; k < n; k++) pinv[perm[k]] = k;
    this.perm = perm;

    // Symbolic: elimination tree and column counts of L (permuted).
    const parent = i32(n);
    const lnz = i32(n);
    const flag = i32(n);
    for (let k = 0; k < n; k++) {
      parent[k] = -1;
      flag[k] = k;
      const kk = perm[k];
      for (let p = Ap[kk]; p < Ap[kk + 1]; p++) {
        let i = pinv[Ai[p]];
        if (i < k) {
          while (flag[i] !== k) {
            if (parent[i] === -1) parent[i] = k;
            lnz[i]++;
            flag[i] = k;
            i = parent[i];
          }
        }
      }
    }
    const Lp = i32(n + 1);
    for (let k = 0; k < n; k++) Lp[k + 1] = Lp[k] + lnz[k];
    const nnz = Lp[n];
    const Li = i32(nnz);
    const Lx = f64(nnz);
    const D = f64(n);

    // Numeric: row k of L from the k-th row pattern (a path up the etree).
    const Y = f64(n);
    const pattern = i32(n);
    let minRatio = Infinity;
    for (let k = 0; k < n; k++) {
      Y[k] = 0;
      let top = n;
      flag[k] = k;
      lnz[k] = 0;
      const kk = perm[k];
      for (let p = Ap[kk]; p < Ap[kk + 1]; p++) {
        let i = pinv[Ai[p]];
        if (i <= k) {
          Y[i] += Ax[p];
          let len = 0;
          for (; flag[i] !== k; i = parent[i]) {
            pattern[len++] = i;
            flag[i] = k;
          }
          while (len > 0) pattern[--top] = pattern[--len];
        }
      }
      const akk = a.diag[kk];
      let dk = Y[k] + akk;
      Y[k] = 0;
      for (; top < n; top++) {
        const i = pattern[top];
        const yi = Y[i];
        Y[i] = 0;
        const p2 = Lp[i] + lnz[i];
        for (let p = Lp[i]; p < p2; p++) Y[Li[p]] -= Lx[p] * yi;
        const lki = yi / D[i];
        dk -= lki * yi;
        Li[p2] = k;
        Lx[p2] = lki;
        lnz[i]++;
      }
      const ratio = akk > 0 ? dk / akk : dk > 0 ? 1 : -Infinity;
      if (!(ratio > PIVOT_TOLERANCE)) throw new SingularMatrixError(kk, ratio);
      if (ratio < minRatio) minRatio = ratio;
      D[k] = dk;
    }
    this.Lp = Lp;
    this.Li = Li;
    this.Lx = Lx;
    this.D = D;
    release(Ap, Ai, Ax, pinv, parent, lnz, flag, Y, pattern);
    this.factorNonzeros = nnz;
    this.minPivotRatio = n === 0 ? 1 : minRatio;
  }

  /** Solves K·x = b, into `out` when given (it may not be `b`); answers x. */
  solve(b: Float64Array, out?: Float64Array): Float64Array {
    const { n, perm, Lp, Li, Lx, D } = this;
    this.work ??= f64(n);
    const y = this.work;
    for (let k = 0; k < n; k++) y[k] = b[perm[k]];
    for (let j = 0; j < n; j++) {
      const yj = y[j];
      if (yj !== 0) for (let p = Lp[j]; p < Lp[j + 1]; p++) y[Li[p]] -= Lx[p] * yj;
    }
    for (let j = 0; j < n; j++) y[j] /= D[j];
    for (let j = n - 1; j >= 0; j--) {
      let yj = y[j];
      for (let p = Lp[j]; p < Lp[j + 1]; p++) yj -= Lx[p] * y[Li[p]];
      y[j] = yj;
    }
    const x = out ?? f64(n);
    for (let k = 0; k < n; k++) x[perm[k]] = y[k];
    return x;
  }

  /** Gives the factor's arrays back to the arena: no solve may follow. */
  dispose(): void {
    release(this.Lp, this.Li, this.Lx, this.D, this.perm);
    if (this.work) release(this.work);
    this.work = null;
  }

  /** The permuted right-hand side during a solve, reused by every solve. */
  private work: Float64Array | null = null;
}

/** Compressed columns of the off-diagonal part, both triangles, duplicates summed. */
export function toFullCSC(a: SymmetricEntries): { Ap: Int32Array; Ai: Int32Array; Ax: Float64Array } {
  const { n, rows, cols, vals, count } = a;
  const counts = i32(n + 1);
  for (let k = 0; k < count; k++) {
    counts[rows[k] + 1]++;
    counts[cols[k] + 1]++;
  }
  for (let k = 0; k < n; k++) counts[k + 1] += counts[k];
  const start = i32Copy(counts, n);
  const Ai = i32(counts[n]);
  const Ax = f64(counts[n]);
  for (let k = 0; k < count; k++) {
    const r = rows[k];
    const c = cols[k];
    const v = vals[k];
    Ai[start[c]] = r;
    Ax[start[c]++] = v;
    Ai[start[r]] = c;
    Ax[start[r]++] = v;
  }
  // Sum duplicates within each column in place.
  const last = i32(n).fill(-1);
  const Ap = i32(n + 1);
  let w = 0;
  for (let c = 0; c < n; c++) {
    const colStart = w;
    for (let p = counts[c]; p < counts[c + 1]; p++) {
      const r = Ai[p];
      if (last[r] >= colStart) {
        Ax[last[r]] += Ax[p];
      } else {
        last[r] = w;
        Ai[w] = r;
        Ax[w++] = Ax[p];
      }
    }
    Ap[c + 1] = w;
  }
  release(counts, start, last);
  return { Ap, Ai: Ai.subarray(0, w), Ax: Ax.subarray(0, w) };
}

/**
 * Elimination order: vertices of degree ≤ 1 first, peeled repeatedly (no fill
 * on trees); the rest, which lie on loops, by exact minimum degree.
 */
export function fillReducingOrder(n: number, Ap: Int32Array, Ai: Int32Array): Int32Array {
  const order = i32(n);
  let placed = 0;
  const degree = i32(n);
  const done = u8(n);
  const stack = i32(n);
  let sp = 0;
  for (let v = 0; v < n; v++) {
    degree[v] = Ap[v + 1] - Ap[v];
    if (degree[v] <= 1) stack[sp++] = v;
  }
  while (sp > 0) {
    const v = stack[--sp];
    if (done[v]) continue;
    done[v] = 1;
    order[placed++] = v;
    for (let p = Ap[v]; p < Ap[v + 1]; p++) {
      const u = Ai[p];
      if (!done[u] && --degree[u] === 1) stack[sp++] = u;
    }
  }
  if (placed === n) {
    release(degree, done, stack);
    return order;
  }

  // Minimum degree on the loops that remain, with explicit adjacency sets.
  const adj = new Map<number, Set<number>>();
  for (let v = 0; v < n; v++) {
    if (done[v]) continue;
    const set = new Set<number>();
    for (let p = Ap[v]; p < Ap[v + 1]; p++) if (!done[Ai[p]]) set.add(Ai[p]);
    adj.set(v, set);
  }
  const heap = new MinHeap();
  for (const [v, set] of adj) heap.push(set.size, v);
  while (heap.size > 0) {
    const [d, v] = heap.pop();
    const set = adj.get(v);
    if (!set || d !== set.size) continue; // stale entry
    adj.delete(v);
    order[placed++] = v;
    const nbrs = [...set];
    for (const u of nbrs) adj.get(u)!.delete(v);
    for (let x = 0; x < nbrs.length; x++) {
      const su = adj.get(nbrs[x])!;
      for (let y = x + 1; y < nbrs.length; y++) {
        if (!su.has(nbrs[y])) {
          su.add(nbrs[y]);
          adj.get(nbrs[y])!.add(nbrs[x]);
        }
      }
    }
    for (const u of nbrs) heap.push(adj.get(u)!.size, u);
  }
  return order;
}

/** Binary heap of (key, value) pairs, smallest key first; ties by smaller value. */
class MinHeap {
  private keys: number[] = [];
  private vals: number[] = [];
  get size(): number {
    return this.keys.length;
  }
  push(key: number, val: number): void {
    const { keys, vals } = this;
    let i = keys.length;
    keys.push(key);
    vals.push(val);
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (keys[parent] < key || (keys[parent] === key && vals[parent] <= val)) break;
      keys[i] = keys[parent];
      vals[i] = vals[parent];
      i = parent;
    }
    keys[i] = key;
    vals[i] = val;
  }
  pop(): [number, number] {
    const { keys, vals } = this;
    const top: [number, number] = [keys[0], vals[0]];
    const key = keys.pop()!;
    const val = vals.pop()!;
    const n = keys.length;
    if (n > 0) {
      let i = 0;
      for (;;) {
        let c = 2 * i + 1;
        if (c >= n) break;
        if (c + 1 < n && (keys[c + 1] < keys[c] || (keys[c + 1] === keys[c] && vals[c + 1] < vals[c]))) c++;
        if (key < keys[c] || (key === keys[c] && val <= vals[c])) break;
        keys[i] = keys[c];
        vals[i] = vals[c];
        i = c;
      }
      keys[i] = key;
      vals[i] = val;
    }
    return top;
  }
}
