/**
 * Sparse complex symmetric L·D·Lᵀ: the numeric phase and the solve of
 * sparse-solver.ts (Davis's up-looking ldl_numeric, ldl_lsolve, ldl_ltsolve)
 * with complex values, over the same symbolic phase (`ldlSymbolic`: order,
 * elimination tree, storage of L).
 *
 * The forced response's dynamic stiffness K·(1 + 2iζ) − Ω²·M is complex
 * symmetric (A = Aᵀ, not Hermitian), so A = L·D·Lᵀ holds with the plain
 * transpose and complex L and D: the real algorithm with every product and
 * quotient complex, nothing conjugated. There is no pivoting (a symmetric
 * interchange would spoil the tree order and its linear cost): a pivot whose
 * size falls to PIVOT_TOLERANCE of its diagonal entry's is refused with
 * ComplexPivotError. With hysteretic damping ζ > 0 the matrix of a model with
 * inertia is regular at every Ω > 0 (Ω² = λ·(1 + 2iζ) has no real root for a
 * real eigenvalue λ > 0), so a refusal means a part with neither stiffness
 * nor inertia, or no damping at a resonance.
 *
 * Real and imaginary parts live in separate Float64Arrays from the workspace;
 * `into` reuses an earlier factor's storage for the next frequency.
 */
import type { LdlSymbolic } from '../sparse-solver.js';
import type { Workspace } from '../workspace.js';

/** |pivot| under this fraction of |its diagonal entry| is refused, dimensionless (as the real factorisation's). */
const PIVOT_TOLERANCE = 1e-13;

/** The off-diagonal part of a complex symmetric matrix, both triangles, compressed columns (pattern of `ldlSymbolic`'s input). */
export interface ComplexCsc {
  readonly n: number;
  readonly Ap: Int32Array;
  readonly Ai: Int32Array;
  readonly Axr: Float64Array;
  readonly Axi: Float64Array;
}

/** L (unit lower triangular, without its diagonal) and D, complex. */
export interface ComplexLdlFactor {
  readonly Li: Int32Array;
  readonly Lxr: Float64Array;
  readonly Lxi: Float64Array;
  readonly Dr: Float64Array;
  readonly Di: Float64Array;
  /** Smallest |pivot| / |diagonal entry|: a conditioning indicator. */
  readonly minPivotRatio: number;
  /** Work space of the numeric phase (kept with the factor so a refactorisation into it takes nothing new). */
  readonly work: { readonly Yr: Float64Array; readonly Yi: Float64Array; readonly pattern: Int32Array; readonly flag: Int32Array; readonly lnz: Int32Array };
}

/** A pivot vanished: the matrix is singular (or nearly) in the order used. */
export class ComplexPivotError extends Error {
  constructor(
    /** Row/column of the matrix (not of the permuted factor). */
    readonly column: number,
    readonly ratio: number,
  ) {
    super(`complex pivot ${column} is ${ratio.toExponential(2)} of its diagonal`);
  }
}

/**
 * L and D of the complex symmetric matrix with off-diagonal part `a` and
 * diagonal (dr + i·di), row by row along the elimination tree of `sym`.
 */
export function complexLdlNumeric(
  sym: LdlSymbolic,
  a: ComplexCsc,
  dr: Float64Array,
  di: Float64Array,
  ws: Workspace,
  into?: ComplexLdlFactor,
): ComplexLdlFactor {
  const { n, perm, pinv, parent, Lp } = sym;
  const { Ap, Ai, Axr, Axi } = a;
  const nnz = Lp[n];
  const Li = into ? into.Li : ws.i32(nnz);
  const Lxr = into ? into.Lxr : ws.f64(nnz);
  const Lxi = into ? into.Lxi : ws.f64(nnz);
  const Dr = into ? into.Dr : ws.f64(n);
  const Di = into ? into.Di : ws.f64(n);
  const work = into ? into.work : { Yr: ws.f64(n), Yi: ws.f64(n), pattern: ws.i32(n), flag: ws.i32(n), lnz: ws.i32(n) };
  const { Yr, Yi, pattern, flag, lnz } = work;
  let minRatio = Infinity;
  for (let k = 0; k < n; k++) {
    Yr[k] = 0;
    Yi[k] = 0;
    let top = n;
    flag[k] = k;
    lnz[k] = 0;
    const kk = perm[k];
    for (let p = Ap[kk]; p < Ap[kk + 1]; p++) {
      let i = pinv[Ai[p]];
      if (i <= k) {
        Yr[i] += Axr[p];
        Yi[i] += Axi[p];
        let len = 0;
        for (; flag[i] !== k; i = parent[i]) {
          pattern[len++] = i;
          flag[i] = k;
        }
        while (len > 0) pattern[--top] = pattern[--len];
      }
    }
    const ar = dr[kk];
    const ai = di[kk];
    let dkr = Yr[k] + ar;
    let dki = Yi[k] + ai;
    Yr[k] = 0;
    Yi[k] = 0;
    for (; top < n; top++) {
      const i = pattern[top];
      const yr = Yr[i];
      const yi = Yi[i];
      Yr[i] = 0;
      Yi[i] = 0;
      const p2 = Lp[i] + lnz[i];
      for (let p = Lp[i]; p < p2; p++) {
        const lr = Lxr[p];
        const li = Lxi[p];
        const r = Li[p];
        Yr[r] -= lr * yr - li * yi;
        Yi[r] -= lr * yi + li * yr;
      }
      // l = y / D[i]
      const Dir = Dr[i];
      const Dii = Di[i];
      const den = Dir * Dir + Dii * Dii;
      const lr = (yr * Dir + yi * Dii) / den;
      const li = (yi * Dir - yr * Dii) / den;
      // d_k -= l · y (plain product: complex symmetric, not Hermitian)
      dkr -= lr * yr - li * yi;
      dki -= lr * yi + li * yr;
      Li[p2] = k;
      Lxr[p2] = lr;
      Lxi[p2] = li;
      lnz[i]++;
    }
    const size = Math.hypot(dkr, dki);
    const diagSize = Math.hypot(ar, ai);
    const ratio = diagSize !== 0 ? size / diagSize : size !== 0 ? 1 : 0;
    if (!(ratio > PIVOT_TOLERANCE)) throw new ComplexPivotError(kk, ratio);
    if (ratio < minRatio) minRatio = ratio;
    Dr[k] = dkr;
    Di[k] = dki;
  }
  return { Li, Lxr, Lxi, Dr, Di, minPivotRatio: n === 0 ? 1 : minRatio, work };
}

/**
 * Solves A·x = b with the factor: x = Pᵀ·L⁻ᵀ·D⁻¹·L⁻¹·P·b, complex.
 * `yr`, `yi` are work space of n values; x may not be b.
 */
export function complexLdlSolve(
  sym: LdlSymbolic,
  f: ComplexLdlFactor,
  br: Float64Array,
  bi: Float64Array,
  xr: Float64Array,
  xi: Float64Array,
  yr: Float64Array,
  yi: Float64Array,
): void {
  const { n, perm, Lp } = sym;
  const { Li, Lxr, Lxi, Dr, Di } = f;
  for (let k = 0; k < n; k++) {
    yr[k] = br[perm[k]];
    yi[k] = bi[perm[k]];
  }
  // L·y = b, column by column.
  for (let j = 0; j < n; j++) {
    const a = yr[j];
    const b = yi[j];
    if (a === 0 && b === 0) continue;
    for (let p = Lp[j]; p < Lp[j + 1]; p++) {
      const r = Li[p];
      yr[r] -= Lxr[p] * a - Lxi[p] * b;
      yi[r] -= Lxr[p] * b + Lxi[p] * a;
    }
  }
  // D
  for (let j = 0; j < n; j++) {
    const den = Dr[j] * Dr[j] + Di[j] * Di[j];
    const a = yr[j];
    const b = yi[j];
    yr[j] = (a * Dr[j] + b * Di[j]) / den;
    yi[j] = (b * Dr[j] - a * Di[j]) / den;
  }
  // Lᵀ·x = y, from the last column.
  for (let j = n - 1; j >= 0; j--) {
    let a = yr[j];
    let b = yi[j];
    for (let p = Lp[j]; p < Lp[j + 1]; p++) {
      const r = Li[p];
      a -= Lxr[p] * yr[r] - Lxi[p] * yi[r];
      b -= Lxr[p] * yi[r] + Lxi[p] * yr[r];
    }
    yr[j] = a;
    yi[j] = b;
  }
  for (let k = 0; k < n; k++) {
    xr[perm[k]] = yr[k];
    xi[perm[k]] = yi[k];
  }
}
