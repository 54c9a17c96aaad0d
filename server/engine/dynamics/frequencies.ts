/**
 * Natural frequencies, exact for the model, none missed: the roots of det K(ω) = 0 of the reduced
 * dynamic stiffness (system.ts), found with the Wittrick–Williams count N(ω).
 *
 * 1. Rigid-body modes (groups of shafts free to turn, found by statics' mechanism test) are the
 *    modes at 0 Hz; N(0+) is their number.
 * 2. The lowest `modes` (N(hi) ≥ modes, hi doubled from a scale of the model), or every mode below
 *    `maxFrequency`: bisection on N isolates each root in an interval [lo, hi] with
 *    N(lo) = k, N(hi) = k + 1 (or a cluster of equal roots, to ROOT_TOL).
 * 3. Each isolated root converges by a safeguarded Newton step on the nonlinear eigenvalue problem:
 *    inverse iteration x ← K(σ)⁻¹·M(σ)·x gives the mode, and the Rayleigh functional
 *    σ² ← σ² + xᵀK(σ)x / xᵀM(σ)x (M = −∂K/∂ω²) its frequency; every factorisation also counts,
 *    which narrows [lo, hi], and a step that leaves it is replaced by bisection. A root is accepted
 *    when N, evaluated ROOT_TOL/2 below and above it, proves it bracketed to ROOT_TOL.
 * 4. A root where elements vibrate clamped (β = nπ) with every station at rest (a fixed–fixed span):
 *    K(ω) has a pole there, not a zero; the mode is the combination of those elements' clamped modes
 *    whose end torques balance at every unknown (a small null space), found exactly.
 */
import { checkpoint, type SolveProgress } from '../progress.js';
import { ModelError } from '../../../shared-types/errors.js';
import type { Warning } from '../../../shared-types/solution.js';
import type { ResolvedDynamics } from './types.js';
import type { DynamicSystem } from './system.js';
import { SingularMatrixError } from '../sparse-solver.js';

/** Relative width to which every root is bracketed by the count, dimensionless (the contract asks 1e-9). */
export const ROOT_TOL = 1e-10;
/** Shift of the last inverse iteration from a converged root, relative: K is regular there. */
const SHIFT = 1e-9;
/** Highest circular frequency searched, rad/s (1e9 rad/s, far beyond any shaft's torsion). */
const OMEGA_LIMIT = 1e9;
/** Most modes found with maxFrequency (the rest are reported as a count in a warning). */
export const MAX_FOUND = 200;
/** |β/π − n| under which an element counts as vibrating clamped at a root, dimensionless. */
const CLAMPED_TOL = 1e-7;

/** A natural mode: its circular frequency, its rotations in the reduced unknowns, its clamped element parts. */
export interface ModeFound {
  /** rad/s; 0 for a rigid-body mode. */
  readonly omega: number;
  readonly rigid: boolean;
  /** Amplitudes of the reduced unknowns. */
  readonly x: Float64Array;
  /** Elements vibrating clamped in this mode: element index, n (sin nπξ) and amplitude. */
  readonly interior: ReadonlyArray<{ readonly e: number; readonly n: number; readonly c: number }>;
}

/** The modes found, lowest first, and what to tell the engineer about them. */
export interface ModesFound {
  readonly modes: ModeFound[];
  readonly warnings: Warning[];
}

/**
 * Every mode asked for by `dyn` (the lowest `modes`, or all below `maxFrequency`), lowest first.
 * `rigidGroups`: the reduced unknowns of each group free to turn (assemble.ts findMechanisms);
 * `shaftOfVar` names a group's shafts for an error.
 */
export function findModes(
  sys: DynamicSystem,
  dyn: ResolvedDynamics,
  rigidGroups: readonly number[][],
  shaftsOfGroup: (g: readonly number[]) => string[],
  progress?: SolveProgress,
): ModesFound {
  const warnings: Warning[] = [];
  const n = sys.n;
  sys.assemble(0);
  // A group free to turn with no inertia has no frequency at all (its motion costs nothing).
  const massless = rigidGroups.filter((g) => g.every((u) => !(sys.mDiag[u] > 0)));
  if (massless.length > 0) {
    throw new ModelError(
      massless.map((g) => {
        const shafts = shaftsOfGroup(g);
        return {
          code: 'SN_DYN_NO_INERTIA' as const,
          pointer: '/supports',
          message: `shafts ${shafts.map((s) => `"${s}"`).join(', ')} can spin freely and carry no inertia: give them a disc or a density, or support them`,
          shafts,
        };
      }),
    );
  }
  const r = rigidGroups.length;
  const scale = frequencyScale(sys);
  let want: number;
  let top: number;
  if (dyn.maxFrequency !== null) {
    top = dyn.maxFrequency;
    const total = sys.countBelow(top);
    want = Math.min(total, MAX_FOUND);
    if (total > MAX_FOUND) warnings.push({ code: 'SN_DYN_FEWER_MODES', message: `${total} natural frequencies lie below maxFrequency; the lowest ${MAX_FOUND} are reported` });
  } else {
    want = dyn.modes;
    top = scale;
    let count = r > 0 && want <= r ? r : sys.countBelow(top);
    while (count < want && top < OMEGA_LIMIT) {
      top *= 2;
      count = sys.countBelow(top);
    }
    if (count < want) {
      warnings.push({
        code: 'SN_DYN_FEWER_MODES',
        message: `the model has only ${count} natural frequencies below ${OMEGA_LIMIT.toExponential(0)} rad/s (its inertia is lumped in discs on massless parts), not the ${want} asked`,
      });
      want = count;
    }
  }
  const modes: ModeFound[] = [];
  rigidGroups.slice(0, Math.min(r, want)).forEach((g) => modes.push({ omega: 0, rigid: true, x: rigidMode(sys, g), interior: [] }));
  // Isolate the elastic roots r … want − 1 in (0, top].
  const stack: Array<[number, number, number, number]> = [[0, r, top, sys.countBelow(top)]];
  while (stack.length > 0) {
    // Each step is one count (a factorisation): the fraction is the share of the roots found.
    checkpoint(progress, 'frequencies', want > 0 ? Math.min(1, modes.length / want) : 1);
    const [lo, nlo, hi, nhi] = stack.pop() as [number, number, number, number];
    if (nlo >= want || nhi === nlo) continue;
    if (nhi - nlo === 1) {
      modes.push(...converge(sys, lo, nlo, hi));
      continue;
    }
    if (hi - lo <= ROOT_TOL * hi) {
      modes.push(...clusterModes(sys, 0.5 * (lo + hi), Math.min(nhi, want) - nlo));
      continue;
    }
    const mid = lo > 0 && hi / lo > 8 ? Math.sqrt(lo * hi) : 0.5 * (lo + hi);
    const nmid = sys.countBelow(mid);
    stack.push([mid, nmid, hi, nhi], [lo, nlo, mid, nmid]);
  }
  modes.sort((a, b) => a.omega - b.omega);
  if (n === 0 && modes.length === 0 && want > 0) warnings.push({ code: 'SN_DYN_FEWER_MODES', message: 'no natural frequency found' });
  return { modes: modes.slice(0, want), warnings };
}

/** A frequency scale of the model, rad/s: √(trace K / trace M) of the unknowns, else the lowest clamped element frequency. */
function frequencyScale(sys: DynamicSystem): number {
  let k = 0;
  let m = 0;
  for (let u = 0; u < sys.n; u++) {
    k += Math.abs(sys.diag[u]);
    m += sys.mDiag[u];
  }
  if (m > 0 && k > 0) return Math.sqrt(k / m);
  let low = Infinity;
  for (let e = 0; e < sys.elemCount; e++) if (sys.c[e] > 0) low = Math.min(low, Math.PI / Math.sqrt(sys.c[e]));
  return Number.isFinite(low) ? low : 1;
}

/** A seeded starting vector for inverse iteration (no module state: a pure function of u). */
function start(n: number): Float64Array {
  const x = new Float64Array(n);
  for (let u = 0; u < n; u++) x[u] = 1 + 0.5 * Math.sin(12.9898 * (u + 1));
  return x;
}

/** Scales x so that its largest |entry| is 1 (answers false for a zero or non-finite vector). */
function scaleUnit(x: Float64Array): boolean {
  let big = 0;
  for (let u = 0; u < x.length; u++) big = Math.max(big, Math.abs(x[u]));
  if (!(big > 0 && big < Infinity)) return false;
  for (let u = 0; u < x.length; u++) x[u] /= big;
  return true;
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let u = 0; u < a.length; u++) s += a[u] * b[u];
  return s;
}

/** Factorises at ω, moving ω by round-off where a pivot is lost; answers the count and the ω used. */
function evaluateNear(sys: DynamicSystem, omega: number): { count: number; omega: number } {
  for (let k = 0; k < 8; k++) {
    const w = omega * (1 + (k === 0 ? 0 : 1e-13 * 4 ** k));
    const c = sys.evaluate(w * w);
    if (c !== null) return { count: c, omega: w };
  }
  throw new SingularMatrixError(-1, 0);
}

/**
 * The rigid-body mode of one group free to turn, exactly: every spring inside the group keeps its
 * stretch c_u·x_u + c_v·x_v at zero, so x_v = −(c_u/c_v)·x_u, spread from one unknown of the group by
 * breadth-first search over its springs (the ratios agree around every loop: the group is not held).
 */
function rigidMode(sys: DynamicSystem, group: readonly number[]): Float64Array {
  const { varOf, alpha } = sys.red;
  const s = sys.springs;
  const ne = s.elemCount;
  const inGroup = new Set(group);
  const links = new Map<number, Array<[number, number]>>();
  for (let m = 0; m < s.count; m++) {
    let i: number;
    let j: number;
    let p: number;
    let q: number;
    if (m < ne) {
      i = sys.layout.elemLeft[m];
      j = i + 1;
      p = -1;
      q = 1;
    } else {
      i = s.i[m - ne];
      j = s.j[m - ne];
      p = s.p[m - ne];
      q = s.q[m - ne];
    }
    if (j < 0) continue;
    const u = varOf[i];
    const v = varOf[j];
    if (u < 0 || v < 0 || u === v || !inGroup.has(u)) continue;
    const cu = p * alpha[i];
    const cv = q * alpha[j];
    if (cu === 0 || cv === 0) continue;
    if (!links.has(u)) links.set(u, []);
    if (!links.has(v)) links.set(v, []);
    (links.get(u) as Array<[number, number]>).push([v, -cu / cv]);
    (links.get(v) as Array<[number, number]>).push([u, -cv / cu]);
  }
  const x = new Float64Array(sys.n);
  const seen = new Set<number>([group[0]]);
  x[group[0]] = 1;
  const queue = [group[0]];
  for (let h = 0; h < queue.length; h++) {
    const u = queue[h];
    for (const [v, r] of links.get(u) ?? []) {
      if (seen.has(v)) continue;
      seen.add(v);
      x[v] = r * x[u];
      queue.push(v);
    }
  }
  scaleUnit(x);
  return x;
}

/** The one root in (lo, hi) with N(lo) = k: its frequency and mode. */
function converge(sys: DynamicSystem, lo0: number, k: number, hi0: number): ModeFound[] {
  const n = sys.n;
  let lo = lo0;
  let hi = hi0;
  let x: Float64Array = start(n);
  const b = new Float64Array(n);
  const kx = new Float64Array(n);
  let sigma = lo > 0 && hi / lo > 8 ? Math.sqrt(lo * hi) : 0.5 * (lo + hi);
  let lastWidth = hi - lo;
  // True once inverse iteration has run at a σ within Newton's tolerance of the root: x is the mode.
  let settled = false;
  for (let it = 0; it < 300; it++) {
    const ev = evaluateNear(sys, sigma);
    sigma = ev.omega;
    if (ev.count <= k) lo = Math.max(lo, sigma);
    else hi = Math.min(hi, sigma);
    if (hi - lo <= ROOT_TOL * hi) break;
    let next = Number.NaN;
    if (n > 0) {
      sys.multiply(x, b, true);
      const y = sys.solve(b, new Float64Array(n));
      if (scaleUnit(y)) {
        x = y;
        const num = dot(x, sys.multiply(x, kx, false));
        const den = dot(x, sys.multiply(x, b, true));
        const w2 = sigma * sigma + num / den;
        if (den > 0 && w2 > 0) next = Math.sqrt(w2);
      }
    }
    // Newton's step unless it leaves the bracket, or the bracket has not halved in three steps.
    const stalled = it % 3 === 2 && hi - lo > 0.5 * lastWidth;
    if (it % 3 === 2) lastWidth = hi - lo;
    if (!(next > lo && next < hi) || stalled) next = lo > 0 && hi / lo > 8 ? Math.sqrt(lo * hi) : 0.5 * (lo + hi);
    else if (Math.abs(next - sigma) <= 0.25 * ROOT_TOL * next) {
      // Converged by Newton: prove it with the count on both sides.
      const below = next * (1 - 0.5 * ROOT_TOL);
      const above = next * (1 + 0.5 * ROOT_TOL);
      if (below > lo && sys.countBelow(below) <= k) lo = below;
      if (above < hi && sys.countBelow(above) > k) hi = above;
      if (hi - lo <= ROOT_TOL * hi) {
        settled = true;
        break;
      }
    }
    sigma = next;
  }
  const omega = 0.5 * (lo + hi);
  if (settled && n > 0 && !clampedAt(sys, omega)) return [{ omega, rigid: false, x, interior: [] }];
  return shapesAt(sys, omega, 1, x);
}

/** True when some element vibrates clamped (β = nπ) at ω. */
function clampedAt(sys: DynamicSystem, omega: number): boolean {
  for (let e = 0; e < sys.elemCount; e++) {
    if (!(sys.c[e] > 0)) continue;
    const q = (Math.sqrt(sys.c[e]) * omega) / Math.PI;
    const nn = Math.round(q);
    if (nn >= 1 && Math.abs(q - nn) < CLAMPED_TOL * nn) return true;
  }
  return false;
}

/** `m` equal roots at ω (a cluster the count cannot split to ROOT_TOL). */
function clusterModes(sys: DynamicSystem, omega: number, m: number): ModeFound[] {
  return shapesAt(sys, omega, m, start(sys.n));
}

/**
 * The `m` modes at root ω: first the clamped-element modes with every station at rest (the null space
 * of their end torques), then as many as are left by block inverse iteration at ω(1 + SHIFT),
 * orthogonalised with respect to the mass operator.
 */
function shapesAt(sys: DynamicSystem, omega: number, m: number, guess: Float64Array): ModeFound[] {
  const n = sys.n;
  const out: ModeFound[] = interiorModes(sys, omega, m).map((interior) => ({ omega, rigid: false, x: new Float64Array(n), interior }));
  const left = m - out.length;
  if (left <= 0) return out.slice(0, m);
  evaluateNear(sys, omega * (1 + SHIFT));
  const block: Float64Array[] = [];
  for (let j = 0; j < left; j++) {
    const x = j === 0 ? Float64Array.from(guess) : start(n).map((v, u) => v * Math.cos(1.7 * (j + 1) * (u + 1)));
    block.push(x);
  }
  const b = new Float64Array(n);
  const mb = new Float64Array(n);
  for (let it = 0; it < 3; it++) {
    for (let j = 0; j < left; j++) {
      sys.multiply(block[j], b, true);
      const y = sys.solve(b, new Float64Array(n));
      // M-orthogonalise against the vectors already done in this sweep.
      for (let i = 0; i < j; i++) {
        const mi = sys.multiply(block[i], mb, true);
        const p = dot(y, mi) / dot(block[i], mi);
        for (let u = 0; u < n; u++) y[u] -= p * block[i][u];
      }
      if (scaleUnit(y)) block[j] = y;
    }
  }
  for (const x of block) out.push({ omega, rigid: false, x, interior: [] });
  return out;
}

/**
 * The modes at ω in which only elements vibrating clamped (β = nπ) move: amplitudes c_e of sin(nπξ)
 * whose end torques ±GJ·nπ/h balance at every unknown. Answers at most m of them (none when no
 * element is clamped-resonant at ω, or their torques cannot balance).
 */
function interiorModes(sys: DynamicSystem, omega: number, m: number): Array<Array<{ e: number; n: number; c: number }>> {
  const cols: Array<{ e: number; n: number; gj: number }> = [];
  for (let e = 0; e < sys.elemCount; e++) {
    if (!(sys.c[e] > 0)) continue;
    const q = (Math.sqrt(sys.c[e]) * omega) / Math.PI;
    const nn = Math.round(q);
    if (nn >= 1 && Math.abs(q - nn) < CLAMPED_TOL * nn) cols.push({ e, n: nn, gj: sys.k0[e] * nn * Math.PI });
  }
  if (cols.length === 0) return [];
  const { varOf, alpha } = sys.red;
  const { elemLeft } = sys.layout;
  // Rows: the unknowns their ends touch. Each column: −GJ·nπ/h at its start, (−1)ⁿ·GJ·nπ/h at its end.
  const rowOf = new Map<number, number>();
  const entries: Array<Array<[number, number]>> = cols.map((col) => {
    const i = elemLeft[col.e];
    const list: Array<[number, number]> = [];
    const add = (d: number, v: number) => {
      const u = varOf[d];
      if (u < 0) return;
      if (!rowOf.has(u)) rowOf.set(u, rowOf.size);
      list.push([rowOf.get(u) as number, v * alpha[d]]);
    };
    add(i, -col.gj);
    add(i + 1, (col.n % 2 === 0 ? 1 : -1) * col.gj);
    return list;
  });
  const R = rowOf.size;
  const C = cols.length;
  const A: number[][] = Array.from({ length: R }, () => new Array<number>(C).fill(0));
  entries.forEach((list, j) => list.forEach(([row, v]) => (A[row][j] += v)));
  const basis = nullSpace(A, R, C);
  const mass = (c: number[]) => c.reduce((s, v, j) => s + sys.mh[cols[j].e] * v * v, 0);
  const modes: Array<Array<{ e: number; n: number; c: number }>> = [];
  const done: number[][] = [];
  for (const v of basis) {
    if (modes.length >= m) break;
    // Orthogonal in mass to the ones kept (Σ mh/2 · c·c' per element).
    const w = v.slice();
    for (const d of done) {
      const p = w.reduce((s, x, j) => s + sys.mh[cols[j].e] * x * d[j], 0) / mass(d);
      for (let j = 0; j < C; j++) w[j] -= p * d[j];
    }
    done.push(w);
    modes.push(cols.map((col, j) => ({ e: col.e, n: col.n, c: w[j] })).filter((x) => x.c !== 0));
  }
  return modes;
}

/** A basis of {c : A·c = 0} by Gauss–Jordan elimination with partial pivoting (A is R×C, small). */
function nullSpace(A: number[][], R: number, C: number): number[][] {
  const a = A.map((row) => row.slice());
  let scale = 0;
  for (const row of a) for (const v of row) scale = Math.max(scale, Math.abs(v));
  const tol = 1e-9 * scale;
  const pivotCol: number[] = [];
  let row = 0;
  for (let col = 0; col < C && row < R; col++) {
    let best = row;
    for (let r2 = row + 1; r2 < R; r2++) if (Math.abs(a[r2][col]) > Math.abs(a[best][col])) best = r2;
    if (!(Math.abs(a[best][col]) > tol)) continue;
    [a[row], a[best]] = [a[best], a[row]];
    const p = a[row][col];
    for (let j = 0; j < C; j++) a[row][j] /= p;
    for (let r2 = 0; r2 < R; r2++) {
      if (r2 === row || a[r2][col] === 0) continue;
      const f = a[r2][col];
      for (let j = 0; j < C; j++) a[r2][j] -= f * a[row][j];
    }
    pivotCol.push(col);
    row++;
  }
  const free = [...Array(C).keys()].filter((j) => !pivotCol.includes(j));
  return free.map((fcol) => {
    const v = new Array<number>(C).fill(0);
    v[fcol] = 1;
    pivotCol.forEach((pc, r2) => (v[pc] = -a[r2][fcol]));
    return v;
  });
}
