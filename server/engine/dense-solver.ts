/**
 * Dense reference path: the same reduced system solved with ml-matrix's
 * Cholesky factorisation. O(n³): it exists to cross-check the sparse solver
 * in tests, not for production sizes.
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix';
import { SingularMatrixError, type SymmetricEntries } from './sparse-solver.js';

/** Largest system the dense path accepts (unknowns). */
export const DENSE_LIMIT = 4000;

/** Factorises K densely once; answers the solve of K·x = b for any b. */
export function denseFactor(a: SymmetricEntries): (b: Float64Array) => Float64Array {
  if (a.n > DENSE_LIMIT) throw new RangeError(`dense solver limited to ${DENSE_LIMIT} unknowns (got ${a.n})`);
  const K = Matrix.zeros(a.n, a.n);
  for (let k = 0; k < a.n; k++) K.set(k, k, a.diag[k]);
  for (let k = 0; k < a.count; k++) {
    const r = a.rows[k];
    const c = a.cols[k];
    // Both triangles get every entry, so K is symmetric by construction (ml-matrix compares exactly).
    K.set(r, c, K.get(r, c) + a.vals[k]);
    K.set(c, r, K.get(c, r) + a.vals[k]);
  }
  const chol = new CholeskyDecomposition(K);
  if (!chol.isPositiveDefinite()) throw new SingularMatrixError(-1, 0);
  return (b) => Float64Array.from(chol.solve(Matrix.columnVector(Array.from(b))).getColumn(0));
}
