/**
 * The sparse L·D·Lᵀ in its two phases (server/engine/sparse-solver.ts): one
 * symbolic phase serves numeric phases of several matrices of one pattern,
 * into the same storage, and an indefinite matrix's negative pivots count its
 * eigenvalues below zero (Sylvester's law of inertia: L·D·Lᵀ is congruent to A).
 *
 * Closed forms: the n×n matrix tridiag(−1, 2, −1) has eigenvalues
 * 2 − 2·cos(kπ/(n + 1)), k = 1 … n; the n×n ring (the same with −1 in the two
 * corners) has 2 − 2·cos(2πk/n), k = 0 … n − 1 (eigenvalues of symmetric
 * tridiagonal Toeplitz and circulant matrices; Golub & Van Loan, Matrix
 * Computations, from memory). Shifts are taken between neighbouring
 * eigenvalues, off their midpoint: at σ = 2 the diagonal is zero and, without
 * pivoting, the first pivot vanishes (the factorisation then refuses; a
 * caller moves σ).
 * Solve tolerances are round-off allowances, common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { ldlNumeric, ldlSolve, ldlSymbolic, SingularMatrixError, toFullCSC, type SymmetricEntries } from '../../server/engine/sparse-solver.js';
import { Workspace } from '../../server/engine/workspace.js';

/** tridiag(−1, 2, −1) − σ·I, with the corner entries when `ring`. */
function shifted(n: number, sigma: number, ring: boolean): SymmetricEntries {
  const count = n - 1 + (ring ? 1 : 0);
  const rows = new Int32Array(count);
  const cols = new Int32Array(count);
  const vals = new Float64Array(count).fill(-1);
  for (let k = 0; k + 1 < n; k++) {
    // Either triangle: odd entries are given below the diagonal, even ones above.
    rows[k] = k % 2 ? k + 1 : k;
    cols[k] = k % 2 ? k : k + 1;
  }
  if (ring) {
    rows[n - 1] = n - 1;
    cols[n - 1] = 0;
  }
  return { n, diag: new Float64Array(n).fill(2 - sigma), rows, cols, vals, count };
}

function eigenvalues(n: number, ring: boolean): number[] {
  const out = ring
    ? Array.from({ length: n }, (_, k) => 2 - 2 * Math.cos((2 * Math.PI * k) / n))
    : Array.from({ length: n }, (_, k) => 2 - 2 * Math.cos(((k + 1) * Math.PI) / (n + 1)));
  return out.sort((a, b) => a - b);
}

/** A·x for the entries. */
function times(a: SymmetricEntries, x: Float64Array): Float64Array {
  const y = new Float64Array(a.n);
  for (let k = 0; k < a.n; k++) y[k] = a.diag[k] * x[k];
  for (let m = 0; m < a.count; m++) {
    y[a.rows[m]] += a.vals[m] * x[a.cols[m]];
    y[a.cols[m]] += a.vals[m] * x[a.rows[m]];
  }
  return y;
}

describe('sparse L·D·Lᵀ: one symbolic phase, numeric phases reused', () => {
  it.each([
    ['chain', false],
    ['ring (a loop: minimum degree)', true],
  ])('%s of 40: the negative pivots of A − σ·I count the eigenvalues below σ, for every σ between two of them', (_name, ring) => {
    const n = 40;
    const ws = new Workspace();
    const lambda = eigenvalues(n, ring);
    const base = toFullCSC(shifted(n, 0, ring), ws);
    const sym = ldlSymbolic(base, ws);
    let factor = ldlNumeric(sym, toFullCSC(shifted(n, lambda[0] - 0.5, ring), ws), shifted(n, lambda[0] - 0.5, ring).diag, ws, { indefinite: true });
    expect(factor.negativePivots).toBe(0); // below every eigenvalue: definite
    const { Li, Lx, D } = factor;
    let checked = 0;
    for (let k = 0; k + 1 < n; k++) {
      if (lambda[k + 1] - lambda[k] < 1e-9) continue; // a double eigenvalue of the ring: no σ between
      const sigma = lambda[k] + 0.37 * (lambda[k + 1] - lambda[k]);
      const a = shifted(n, sigma, ring);
      factor = ldlNumeric(sym, toFullCSC(a, ws), a.diag, ws, { indefinite: true, into: factor });
      expect(factor.negativePivots, `σ = ${sigma}`).toBe(k + 1);
      // The same storage every time.
      expect(factor.Li).toBe(Li);
      expect(factor.Lx).toBe(Lx);
      expect(factor.D).toBe(D);
      // And it solves: A·x = b to round-off of the solve's size.
      const b = Float64Array.from({ length: n }, (_, i) => Math.sin(i + 1));
      const x = ldlSolve(sym, factor, b, new Float64Array(n), new Float64Array(n));
      const r = times(a, x);
      let worst = 0;
      let scale = 0;
      for (let i = 0; i < n; i++) {
        worst = Math.max(worst, Math.abs(r[i] - b[i]));
        scale = Math.max(scale, Math.abs(x[i]));
      }
      expect(worst, `σ = ${sigma}`).toBeLessThan(1e-10 * Math.max(1, scale));
      checked++;
    }
    expect(checked).toBeGreaterThan(15);
  });

  it('the definite mode refuses a negative pivot; the indefinite mode refuses only a vanishing one', () => {
    const ws = new Workspace();
    const lambda = eigenvalues(10, false);
    const a = shifted(10, (lambda[0] + lambda[1]) / 2, false);
    const csc = toFullCSC(a, ws);
    const sym = ldlSymbolic(csc, ws);
    expect(() => ldlNumeric(sym, csc, a.diag, ws)).toThrow(SingularMatrixError);
    expect(ldlNumeric(sym, csc, a.diag, ws, { indefinite: true }).negativePivots).toBe(1);
    // The 2×2 [[1, 1], [1, 1]] is singular: its second pivot is 1 − 1 = 0 exactly.
    const singular: SymmetricEntries = { n: 2, diag: new Float64Array([1, 1]), rows: new Int32Array([0]), cols: new Int32Array([1]), vals: new Float64Array([1]), count: 1 };
    const s2 = toFullCSC(singular, ws);
    expect(() => ldlNumeric(ldlSymbolic(s2, ws), s2, singular.diag, ws, { indefinite: true })).toThrow(SingularMatrixError);
  });
});
