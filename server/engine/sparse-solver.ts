/**
 * Sparse symmetric L·D·Lᵀ factorisation, in the two phases of a concise
 * sparse Cholesky package (Davis, "Algorithm 849: A concise sparse Cholesky
 * factorization package", ACM TOMS 31(4), 2005), plus the triangular solves:
 *
 * - `ldlSymbolic` (pattern only): a fill-reducing order, the elimination
 *   tree and the column counts of L, hence its storage `Lp`;
 * - `ldlNumeric` (values): L and D by up-looking rows, row k of L being a
 *   path up the elimination tree. It can run again, into the same storage,
 *   for another matrix of the same pattern (a stiffness that changes with a
 *   parameter); with `indefinite` it accepts negative pivots and counts them
 *   (the number of negative entries of D is the number of eigenvalues below
 *   zero: Sylvester's law of inertia);
 * - `ldlSolve`: P·b, L·y = b, D, Lᵀ·x = y, Pᵀ·x.
 *
 * Shaft systems are chains and trees of shafts, with at most a few loops
 * through gear meshes and couplings. Eliminating leaves first makes no fill at
 * all on a tree, so the order peels every vertex of degree ≤ 1 (repeatedly,
 * in linear time) and orders only what remains, the loops, by minimum degree.
 * Work and memory then grow linearly with the number of stations.
 *
 * Every function takes its arrays from the workspace it is given and frees
 * nothing: what it returns holds the arrays that outlive it.
 */
import type { Workspace } from './workspace.js';

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

/** The off-diagonal part of a symmetric matrix, both triangles, in compressed columns. */
export interface CscMatrix {
  readonly n: number;
  readonly Ap: Int32Array;
  readonly Ai: Int32Array;
  readonly Ax: Float64Array;
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

/** The symbolic phase: what depends on the pattern only. */
export interface LdlSymbolic {
  readonly n: number;
  /** Elimination order: row/column k of the factor is perm[k] of the matrix; pinv the inverse. */
  readonly perm: Int32Array;
  readonly pinv: Int32Array;
  /** Elimination tree of the permuted matrix (−1: a root). */
  readonly parent: Int32Array;
  /** Column k of L is Li/Lx[Lp[k] … Lp[k + 1] − 1]. */
  readonly Lp: Int32Array;
}

/** The numeric phase: L (unit lower triangular, without its diagonal) and D. */
export interface LdlFactor {
  readonly Li: Int32Array;
  readonly Lx: Float64Array;
  readonly D: Float64Array;
  /** Smallest |pivot| relative to its diagonal entry: a cheap conditioning indicator. */
  readonly minPivotRatio: number;
  /** Negative entries of D: eigenvalues below zero (0 for a definite matrix). */
  readonly negativePivots: number;
}

/** Ordering, elimination tree and column counts of L for the pattern of `a` (Davis's ldl_symbolic). */
export function ldlSymbolic(a: CscMatrix, ws: Workspace): LdlSymbolic {
  const { n, Ap, Ai } = a;
  const perm = fillReducingOrder(n, Ap, Ai, ws);
  const pinv = ws.i32(n);
  for (let k = 0; k < n; k++) pinv[perm[k]] = k;
  const parent = ws.i32(n);
  const lnz = ws.i32(n);
  const flag = ws.i32(n);
  for (let k = 0; k < n; k++) {
    parent[k] = -1;
    flag[k] = k;
    const kk = perm[k];
    for (let p = Ap[kk]; p < Ap[kk + 1]; p++) {
      let i = pinv[Ai[p]];
      if (i < k) {
        // Up the tree from i until a node already met in row k: each one gets an entry in row k.
        while (flag[i] !== k) {
          if (parent[i] === -1) parent[i] = k;
          lnz[i]++;
          flag[i] = k;
          i = parent[i];
        }
      }
    }
  }
  const Lp = ws.i32(n + 1);
  for (let k = 0; k < n; k++) Lp[k + 1] = Lp[k] + lnz[k];
  return { n, perm, pinv, parent, Lp };
}

/**
 * L and D of the matrix whose off-diagonal part is `a` and diagonal `diag`,
 * row by row (Davis's ldl_numeric): row k of L solves L₁₁·y = a₁₂ over the
 * pattern of row k, a path up the elimination tree. `a` must have the pattern
 * `sym` was made for. With `into`, the factor of an earlier call on the same
 * symbolic phase is overwritten (no new storage). Throws SingularMatrixError
 * when a pivot is not above PIVOT_TOLERANCE of its diagonal entry (or, with
 * `indefinite`, when its size is not): there is no pivoting, so an indefinite
 * matrix with a vanishing leading minor is refused even when it is regular
 * (a caller scanning a parameter moves it a little).
 */
export function ldlNumeric(
  sym: LdlSymbolic,
  a: CscMatrix,
  diag: Float64Array,
  ws: Workspace,
  options: { indefinite?: boolean; into?: LdlFactor } = {},
): LdlFactor {
  const { n, perm, pinv, parent, Lp } = sym;
  const { Ap, Ai, Ax } = a;
  const nnz = Lp[n];
  const Li = options.into ? options.into.Li : ws.i32(nnz);
  const Lx = options.into ? options.into.Lx : ws.f64(nnz);
  const D = options.into ? options.into.D : ws.f64(n);
  const indefinite = options.indefinite === true;
  const Y = ws.f64(n);
  const pattern = ws.i32(n);
  const flag = ws.i32(n);
  const lnz = ws.i32(n);
  let minRatio = Infinity;
  let negative = 0;
  for (let k = 0; k < n; k++) {
    // Scatter column k of the permuted upper triangle into Y; gather the pattern of row k.
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
    // Sparse triangular solve for row k, and its pivot.
    const akk = diag[kk];
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
    let ratio: number;
    if (indefinite) {
      ratio = akk !== 0 ? Math.abs(dk / akk) : dk !== 0 ? 1 : 0;
      if (dk < 0) negative++;
    } else ratio = akk > 0 ? dk / akk : dk > 0 ? 1 : -Infinity;
    if (!(ratio > PIVOT_TOLERANCE)) throw new SingularMatrixError(kk, ratio);
    if (ratio < minRatio) minRatio = ratio;
    D[k] = dk;
  }
  return { Li, Lx, D, minPivotRatio: n === 0 ? 1 : minRatio, negativePivots: negative };
}

/**
 * Solves K·x = b with the factor: x = Pᵀ·L⁻ᵀ·D⁻¹·L⁻¹·P·b. `y` is work space
 * of n values; `x` may not be `b`.
 */
export function ldlSolve(sym: LdlSymbolic, f: LdlFactor, b: Float64Array, x: Float64Array, y: Float64Array): Float64Array {
  const { n, perm, Lp } = sym;
  for (let k = 0; k < n; k++) y[k] = b[perm[k]];
  lowerSolve(n, Lp, f.Li, f.Lx, y);
  for (let j = 0; j < n; j++) y[j] /= f.D[j];
  lowerTransposeSolve(n, Lp, f.Li, f.Lx, y);
  for (let k = 0; k < n; k++) x[perm[k]] = y[k];
  return x;
}

/** y := L⁻¹·y, column by column (Davis's ldl_lsolve). */
function lowerSolve(n: number, Lp: Int32Array, Li: Int32Array, Lx: Float64Array, y: Float64Array): void {
  for (let j = 0; j < n; j++) {
    const yj = y[j];
    if (yj !== 0) for (let p = Lp[j]; p < Lp[j + 1]; p++) y[Li[p]] -= Lx[p] * yj;
  }
}

/** y := L⁻ᵀ·y, column by column from the last (Davis's ldl_ltsolve). */
function lowerTransposeSolve(n: number, Lp: Int32Array, Li: Int32Array, Lx: Float64Array, y: Float64Array): void {
  for (let j = n - 1; j >= 0; j--) {
    let yj = y[j];
    for (let p = Lp[j]; p < Lp[j + 1]; p++) yj -= Lx[p] * y[Li[p]];
    y[j] = yj;
  }
}

/** Compressed columns of the off-diagonal part, both triangles, duplicates summed. */
export function toFullCSC(a: SymmetricEntries, ws: Workspace): CscMatrix {
  const { n, rows, cols, vals, count } = a;
  const counts = ws.i32(n + 1);
  for (let k = 0; k < count; k++) {
    counts[rows[k] + 1]++;
    counts[cols[k] + 1]++;
  }
  for (let k = 0; k < n; k++) counts[k + 1] += counts[k];
  const start = ws.i32Copy(counts, n);
  const Ai = ws.i32(counts[n]);
  const Ax = ws.f64(counts[n]);
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
  const last = ws.i32(n).fill(-1);
  const Ap = ws.i32(n + 1);
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
  return { n, Ap, Ai: Ai.subarray(0, w), Ax: Ax.subarray(0, w) };
}

/**
 * Elimination order: vertices of degree ≤ 1 first, peeled repeatedly (no fill
 * on trees); the rest, which lie on loops, by exact minimum degree.
 */
export function fillReducingOrder(n: number, Ap: Int32Array, Ai: Int32Array, ws: Workspace): Int32Array {
  const order = ws.i32(n);
  let placed = 0;
  const degree = ws.i32(n);
  const done = ws.u8(n);
  const stack = ws.i32(n);
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
  if (placed === n) return order;

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
