/**
 * The solve of K·x = f with iterative refinement: x += K⁻¹·(f − K·x) while
 * the residual shrinks at least by half (at most three steps). The residual
 * is summed spring by spring in difference form, k·(φ_j − φ_i), so it is
 * accurate to round-off of the torques rather than of k·φ: on long chains,
 * where the triangular solves carry errors along the chain, this recovers
 * the reactions to round-off of the torques.
 */
import { SpringCursor, type SpringSet } from './assemble.js';
import type { Reduction } from './constraints.js';
import { ldlSolve, type LdlFactor, type LdlSymbolic } from './sparse-solver.js';
import type { Workspace } from './workspace.js';

/** Answers x of K·x = rhs, refined against the springs' own residual. */
export function refinedSolve(
  springs: SpringSet,
  load: Float64Array,
  red: Reduction,
  rhs: Float64Array,
  sym: LdlSymbolic,
  factor: LdlFactor,
  ws: Workspace,
): Float64Array {
  const n = rhs.length;
  const answer = ws.f64(n);
  // The work vector of the triangular solves, the residual, the correction, and a trial solution.
  const y = ws.f64(n);
  const r = ws.f64(n);
  const dx = ws.f64(n);
  let trial = ws.f64(n);
  let x = ldlSolve(sym, factor, rhs, answer, y);
  let best = springResidual(springs, load, red, x, r);
  // Below a few ulps of the torques summed into it, the residual is round-off: nothing to gain.
  for (let step = 0; step < 3 && best.norm > 16 * Number.EPSILON * best.scale; step++) {
    ldlSolve(sym, factor, r, dx, y);
    for (let k = 0; k < n; k++) trial[k] = x[k] + dx[k];
    const next = springResidual(springs, load, red, trial, r);
    if (!(next.norm < best.norm)) break;
    const kept = x;
    x = trial;
    trial = kept;
    const gain = best.norm / next.norm;
    best = next;
    // A step that does not halve the residual has met the floor of the residual's own round-off.
    if (gain < 2) break;
  }
  if (x !== answer) answer.set(x);
  return answer;
}

/** f − K·x of the reduced system into `r`, summed over the springs in difference form; with its largest entry. */
function springResidual(s: SpringSet, load: Float64Array, red: Reduction, x: Float64Array, r: Float64Array): { norm: number; scale: number } {
  const { varOf, alpha, beta } = red;
  r.fill(0);
  let scale = 0;
  const spring = new SpringCursor(s);
  for (let m = 0; m < s.count; m++) {
    spring.read(m);
    const { i, j, p, q, c } = spring;
    const u = varOf[i];
    const v = j >= 0 ? varOf[j] : -1;
    // Stretch g = p·φ_i + q·φ_j − c; the spring's force k·g acts on u with −p·α_i and on v with −q·α_j.
    const pi = p * (u >= 0 ? alpha[i] * x[u] + beta[i] : beta[i]);
    const qj = j >= 0 ? q * (v >= 0 ? alpha[j] * x[v] + beta[j] : beta[j]) : 0;
    const f = s.k[m] * (pi + qj - c);
    const fu = f * p * alpha[i];
    const fv = f * q * (j >= 0 ? alpha[j] : 0);
    if (u >= 0) r[u] -= fu;
    if (v >= 0) r[v] -= fv;
    scale = Math.max(scale, Math.abs(fu), Math.abs(fv));
  }
  for (let d = 0; d < load.length; d++) {
    const u = varOf[d];
    if (u >= 0 && load[d] !== 0) r[u] += alpha[d] * load[d];
    scale = Math.max(scale, Math.abs(load[d]));
  }
  let norm = 0;
  for (let k = 0; k < r.length; k++) norm = Math.max(norm, Math.abs(r[k]));
  return { norm, scale };
}
