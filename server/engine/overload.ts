/**
 * Overload factors of one load state (contract, "Overload"): the factor λ on the loads, with the
 * assembled state (prescribed rotations, misfits, offsets) held, at which
 *
 * - the first fibre anywhere reaches its material's shear yield stress (`firstYieldFactor`), from
 *   the elastic solution: in every element the torque is T(z) = T0 + λ·T1(z), T0 the assembled
 *   state's (constant: that state has no distributed torque) and T1 the loads' (quadratic where a
 *   linear distributed torque acts). In a layer τ = k·|T| with k = G·r_o/ΣGJ, so yield is
 *   |T0 + λ·T1(s)| = τ_y/k and, where T1 keeps its sign, λ(s) = (sign(T1)·τ_y/k − T0)/T1(s) is
 *   least where |T1| is largest: at an element end or where t(s) = 0 (T1's extreme). Those three
 *   points per element make the search exact.
 * - the system becomes a mechanism with elastic–perfectly plastic material (`collapseFactor`), by the
 *   lower-bound theorem as a linear program: the largest λ for which some torque distribution is in
 *   equilibrium with λ·loads and |T| ≤ T_p at every point of every shaft. Reactions of supports,
 *   mesh forces and coupling torques are free (taken as strong enough). T in an element is its
 *   start torque plus λ·(a known function of s), so |T| ≤ T_p at both ends and at the interior
 *   point where t = 0 (its place does not depend on λ) is the continuous condition exactly.
 *   The assembled state does not change the collapse factor (a self-stress only shifts the
 *   distribution; the lower-bound theorem needs equilibrium with the loads alone).
 *
 * Plastic places (binding reading): the points at full plastic torque in EVERY collapse
 * distribution. The feasible distributions at λ* form a convex set, so T at a point ranges over an
 * interval; the point is plastic in all of them when that interval is the single value ±T_p. A
 * point that is not at ±T_p in one optimal distribution cannot be; those that are are pushed away
 * from ±T_p together by LPs at λ* (see `collapseOf`), usually one or two.
 *
 * Pure: the LP solver (HiGHS compiled to WebAssembly) is loaded by the caller (`loadLpSolver`) and
 * passed in; nothing here is kept between calls.
 */
import type { Warning } from '../../shared-types/solution.js';
import type { ResolvedModel, ResolvedSegment } from './normalise.js';
import type { StationLayout } from './stations.js';
import type { Solved } from './output.js';
import { solvePipeline, type PipelineOptions } from './pipeline.js';
import { Workspace } from './workspace.js';
import { assembledStateModel, combinedModel, hasAssembledState } from './combinations.js';

export { assembledStateModel, hasAssembledState } from './combinations.js';

/** The part of a loaded HiGHS instance used here: `solve` of CPLEX LP text (synchronous). */
export interface LpSolver {
  solve(problem: string, options?: Record<string, unknown>): LpAnswer;
}

export interface LpAnswer {
  readonly Status: string;
  readonly ObjectiveValue: number;
  readonly Columns: Record<string, { readonly Primal: number }>;
}

/** Loads HiGHS once; the caller keeps the instance and passes it to every solve. */
export async function loadLpSolver(): Promise<LpSolver> {
  const mod = (await import('highs')) as unknown as { default: () => Promise<LpSolver> };
  return mod.default();
}

export interface Overload {
  firstYieldFactor: number | null;
  firstYield: { shaft: string; z: number | null; layer: string } | null;
  collapseFactor: number | null;
  plasticAt: Array<{ shaft: string; z: number }>;
  /** 'omitted': the collapse factor was not sought for this combination (SN_OVERLOAD_OMITTED says which were). */
  collapse: 'mechanism' | 'none' | 'omitted';
}

/** Element end torques, T(z+) at the left end and T(z−) at the right end, N·m. */
export interface EndTorques {
  readonly TL: Float64Array;
  readonly TR: Float64Array;
}

/** True when some material of the model has a shear yield stress (only then is overload reported). */
export function hasShearYield(model: ResolvedModel): boolean {
  return model.shafts.some((s) => s.segments.some((g) => g.layers.some((l) => l.shearYield !== null)));
}

/**
 * Combinations × elements up to which every combination gets its collapse factor (one LP each);
 * beyond it, the combination shown and the COLLAPSE_FEWEST with the lowest first-yield factors
 * (the loads nearest to yield; common practice, no source), each an LP over the whole model.
 */
export const COLLAPSE_ALL_UP_TO = 20_000;
export const COLLAPSE_FEWEST = 5;

/** Cautions written beside every reported overload. */
export const OVERLOAD_CAUTION: Warning = {
  code: 'SN_OVERLOAD_CAUTION',
  message:
    'overload factors take elastic–perfectly plastic material; gear teeth, couplings and spring supports are taken as strong enough; loads are scaled with the assembled state (rotations, misfits, offsets) held',
};

/** Fully plastic torque of a uniform segment, N·m, or null (a layer without shearYield, or a shape without a plastic modulus). */
export function plasticTorque(seg: ResolvedSegment): number | null {
  if (seg.taper) return null;
  if (seg.shape) {
    const zp = seg.shape.plasticModulus ?? null;
    const ty = seg.layers[0]?.shearYield ?? null;
    return zp === null || ty === null ? null : ty * zp;
  }
  let tp = 0;
  for (const l of seg.layers) {
    if (l.shearYield === null) return null;
    // 2π τ_y (c³ − b³)/3 per ring (contract).
    tp += (2 * Math.PI * l.shearYield * (l.rOuter ** 3 - l.rInner ** 3)) / 3;
  }
  return tp;
}

/** Distributed-torque share inside an element: T1(s) = TL − w(s), w(s) = t1·s + (t2 − t1)·s²/(2h). */
function loadShare(t1: number, t2: number, h: number, s: number): number {
  return t1 * s + ((t2 - t1) * s * s) / (2 * h);
}

/** Where t = 0 inside (0, h), or −1. */
function zeroOfLoad(t1: number, t2: number, h: number): number {
  if (t1 === t2 || t1 * t2 >= 0) return -1;
  const s = (t1 * h) / (t1 - t2);
  return s > 0 && s < h ? s : -1;
}

/**
 * Overload of one load state. `loads`: element end torques of the loads alone (λ = 1, no
 * assembled state); `state`: those of the assembled state alone (null when it has none).
 */
export function overloadOf(
  model: ResolvedModel,
  layout: StationLayout,
  loads: EndTorques,
  state: EndTorques | null,
  lp: LpSolver | null,
): { overload: Overload; warnings: Warning[] } {
  const warnings: Warning[] = [OVERLOAD_CAUTION];
  const { z, elemLeft, elemSegment, elemT1, elemT2, shaftOf } = layout;
  const elemCount = elemLeft.length;
  const none: Overload = { firstYieldFactor: null, firstYield: null, collapseFactor: null, plasticAt: [], collapse: 'none' };

  let scale = 0;
  for (let e = 0; e < elemCount; e++) scale = Math.max(scale, Math.abs(loads.TL[e]), Math.abs(loads.TR[e]));
  const loaded = (e: number) => {
    const tol = 1e-12 * scale;
    return Math.abs(loads.TL[e]) > tol || Math.abs(loads.TR[e]) > tol || elemT1[e] !== 0 || elemT2[e] !== 0;
  };
  const segOf = (e: number) => model.shafts[shaftOf[elemLeft[e]]].segments[elemSegment[e]];

  // Every loaded segment needs a yield stress in every layer, and a uniform section (a taper's peak
  // moves with its radius: not covered here).
  const noYield = new Set<string>();
  const tapered = new Set<string>();
  for (let e = 0; e < elemCount; e++) {
    if (!loaded(e)) continue;
    const seg = segOf(e);
    for (const l of seg.layers) if (l.shearYield === null) noYield.add(l.materialId);
    if (seg.taper) tapered.add(`${model.shafts[shaftOf[elemLeft[e]]].id}[${seg.index}]`);
  }
  if (noYield.size > 0) {
    warnings.push({
      code: 'SN_NO_YIELD',
      message: `overload factors omitted: material ${[...noYield].map((m) => `"${m}"`).join(', ')} on a loaded path gives no shearYield`,
    });
    return { overload: none, warnings };
  }
  if (tapered.size > 0) {
    warnings.push({
      code: 'SN_NO_YIELD',
      message: `overload factors omitted: tapered segment ${[...tapered].join(', ')} carries load (first yield and collapse are found for uniform segments only)`,
    });
    return { overload: none, warnings };
  }
  if (scale === 0 && !model.torques.some((t) => t.torque !== 0)) return { overload: none, warnings };

  // First yield.
  let best = Infinity;
  let bestE = -1;
  let bestS = 0;
  let bestLayer = '';
  for (let e = 0; e < elemCount; e++) {
    if (!loaded(e)) continue;
    const seg = segOf(e);
    const left = elemLeft[e];
    const h = z[left + 1] - z[left];
    const t1 = elemT1[e];
    const t2 = elemT2[e];
    const T0 = state ? state.TL[e] : 0;
    const sz = zeroOfLoad(t1, t2, h);
    const places = sz >= 0 ? [0, h, sz] : [0, h];
    for (const l of seg.layers) {
      const k = (l.G * l.rOuter) / seg.rigidity;
      const M = (l.shearYield as number) / k;
      for (const s of places) {
        const T1 = loads.TL[e] - loadShare(t1, t2, h, s);
        let lam: number;
        if (Math.abs(T0) >= M) lam = 0;
        else if (T1 === 0) continue;
        else lam = (Math.sign(T1) * M - T0) / T1;
        if (lam < best) {
          best = lam;
          bestE = e;
          bestS = s;
          bestLayer = l.materialId;
        }
      }
    }
  }
  let firstYield: Overload['firstYield'] = null;
  if (bestE >= 0) {
    const left = elemLeft[bestE];
    const shaft = shaftOf[left];
    const segIndex = elemSegment[bestE];
    // Null where the whole segment yields at once: no distributed torque and one torque along it.
    let uniform = true;
    for (let e = 0; e < elemCount; e++) {
      if (shaftOf[elemLeft[e]] !== shaft || elemSegment[e] !== segIndex) continue;
      const tol = 1e-12 * scale;
      const same = (a: number, b: number) => Math.abs(a - b) <= tol;
      if (elemT1[e] !== 0 || elemT2[e] !== 0 || !same(loads.TL[e], loads.TL[bestE]) || !same(state ? state.TL[e] : 0, state ? state.TL[bestE] : 0)) {
        uniform = false;
      }
    }
    firstYield = { shaft: model.shafts[shaft].id, z: uniform ? null : z[left] + bestS, layer: bestLayer };
  }

  // Without an LP solver the collapse factor is not sought ('omitted'; the caller says why).
  const collapse = lp ? collapseOf(model, layout, lp, warnings, loaded) : { factor: null, plasticAt: [] };
  if (!Number.isFinite(best) && collapse.factor !== null) {
    // Collapse without yield cannot happen: digits were lost on the way.
    warnings.push({ code: 'SN_OVERLOAD_NUMERICS', message: 'first yield factor omitted: no layer reaches its yield stress in finite numbers' });
  }
  return {
    overload: {
      firstYieldFactor: Number.isFinite(best) ? best : null,
      firstYield: Number.isFinite(best) ? firstYield : null,
      collapseFactor: collapse.factor,
      plasticAt: collapse.plasticAt,
      collapse: collapse.factor !== null ? 'mechanism' : lp ? 'none' : 'omitted',
    },
    warnings,
  };
}

/** A number in LP text. */
function num(x: number): string {
  return x.toPrecision(17);
}

/** Terms `+ c name` of a linear expression, zeros left out. */
function terms(list: ReadonlyArray<readonly [number, string]>): string {
  let out = '';
  for (const [c, name] of list) {
    if (c === 0) continue;
    out += `${c < 0 ? ' -' : ' +'} ${num(Math.abs(c))} ${name}`;
  }
  return out === '' ? ' 0 mu' : out;
}

interface Candidate {
  readonly e: number;
  /** T there = x_e + coef·μ. */
  readonly coef: number;
  readonly z: number;
  readonly shaft: number;
  readonly tp: number;
}

/** The lower-bound LP: collapse factor and plastic places; factor null when no mechanism exists. */
function collapseOf(
  model: ResolvedModel,
  layout: StationLayout,
  lp: LpSolver,
  warnings: Warning[],
  loaded: (e: number) => boolean,
): { factor: number | null; plasticAt: Array<{ shaft: string; z: number }> } {
  const { z, elemLeft, elemSegment, elemT1, elemT2, shaftOf, shaftStart, dofCount } = layout;
  const elemCount = elemLeft.length;
  // Scales: torques in units of the largest T_p, the factor in units of Tref/Pref.
  const tps = new Float64Array(elemCount);
  let tref = 0;
  let unbounded = 0;
  const noPlastic = new Set<string>();
  for (let e = 0; e < elemCount; e++) {
    const seg = model.shafts[shaftOf[elemLeft[e]]].segments[elemSegment[e]];
    const tp = plasticTorque(seg);
    tps[e] = tp === null ? Infinity : tp;
    if (tp === null && loaded(e)) noPlastic.add(`${model.shafts[shaftOf[elemLeft[e]]].id}[${seg.index}] (section "${seg.sectionId}")`);
    else if (tp === null) unbounded++;
    else tref = Math.max(tref, tp);
  }
  if (noPlastic.size > 0) {
    // A loaded section without a fully plastic torque (an ellipse: the contract gives no formula).
    warnings.push({
      code: 'SN_NO_PLASTIC_TORQUE',
      message: `collapse factor omitted: segment ${[...noPlastic].join(', ')} carries load and its section has no fully plastic torque`,
    });
    return { factor: null, plasticAt: [] };
  }
  if (unbounded > 0) {
    warnings.push({
      code: 'SN_NO_PLASTIC_TORQUE',
      message: `${unbounded} element(s) carry no load elastically and have no fully plastic torque (no shearYield or no plastic modulus): the collapse factor takes them as strong enough`,
    });
  }
  const P = new Float64Array(dofCount);
  for (const t of model.torques) P[layout.stationAt(t.shaft, t.z)] += t.torque;
  const a = new Float64Array(elemCount);
  const b = new Float64Array(elemCount);
  const sz = new Float64Array(elemCount);
  let pref = 0;
  for (let d = 0; d < dofCount; d++) pref += Math.abs(P[d]);
  for (let e = 0; e < elemCount; e++) {
    const left = elemLeft[e];
    const h = z[left + 1] - z[left];
    a[e] = -loadShare(elemT1[e], elemT2[e], h, h);
    sz[e] = zeroOfLoad(elemT1[e], elemT2[e], h);
    b[e] = sz[e] >= 0 ? -loadShare(elemT1[e], elemT2[e], h, sz[e]) : 0;
    pref += (Math.abs(elemT1[e]) + Math.abs(elemT2[e])) * h;
  }
  if (pref === 0 || tref === 0) return { factor: null, plasticAt: [] };
  // λ = μ·tref/pref; torques divided by tref.
  const lamOf = tref / pref;
  const pc = (x: number) => x / pref;

  // Equilibrium at each station: T(z+) − T(z−) + λ·P + Σ multiplier torques = 0.
  const rows: Array<Array<[number, string]>> = [];
  for (let d = 0; d < dofCount; d++) rows.push([]);
  for (let s = 0; s < model.shafts.length; s++) {
    for (let d = shaftStart[s]; d < shaftStart[s + 1]; d++) {
      const row = rows[d];
      let muCoef = pc(P[d]);
      if (d < shaftStart[s + 1] - 1) row.push([1, `x${d - s}`]); // element to the right
      if (d > shaftStart[s]) {
        const e = d - 1 - s; // element to the left
        row.push([-1, `x${e}`]);
        muCoef -= pc(a[e]);
      }
      row.push([muCoef, 'mu']);
    }
  }
  const free: string[] = [];
  model.supports.forEach((sp, n) => {
    rows[layout.stationAt(sp.shaft, sp.z)].push([1, `r${n}`]);
    free.push(`r${n}`);
  });
  model.meshes.forEach((g, n) => {
    const i = layout.stationAt(g.a.shaft, g.a.z);
    const j = layout.stationAt(g.b.shaft, g.b.z);
    const rmax = Math.max(g.a.radius, g.b.radius);
    rows[i].push([g.a.radius / rmax, `f${n}`]);
    rows[j].push([(-g.sense * g.b.radius) / rmax, `f${n}`]);
    free.push(`f${n}`);
  });
  model.couplings.forEach((c, n) => {
    rows[layout.stationAt(c.a.shaft, c.a.z)].push([1, `c${n}`]);
    rows[layout.stationAt(c.b.shaft, c.b.z)].push([-1, `c${n}`]);
    free.push(`c${n}`);
  });

  // x_e in units of tref; a, b (torques per unit λ) times λ = μ·tref/pref: coefficient a/pref.
  const lines: string[] = [];
  rows.forEach((row, d) => {
    // Merge repeated names (a mesh between two stations merged into one).
    const m = new Map<string, number>();
    for (const [c, n] of row) m.set(n, (m.get(n) ?? 0) + c);
    lines.push(` q${d}:${terms([...m.entries()].map(([n, c]) => [c, n] as const))} = 0`);
  });
  const candidates: Candidate[] = [];
  const bounds: string[] = [];
  for (let e = 0; e < elemCount; e++) {
    const left = elemLeft[e];
    const shaft = shaftOf[left];
    if (!Number.isFinite(tps[e])) {
      bounds.push(` x${e} free`);
      continue;
    }
    const tp = tps[e] / tref;
    bounds.push(` ${num(-tp)} <= x${e} <= ${num(tp)}`);
    candidates.push({ e, coef: 0, z: z[left], shaft, tp });
    const ca = pc(a[e]);
    lines.push(` u${e}:${terms([[1, `x${e}`], [ca, 'mu']])} <= ${num(tp)}`);
    lines.push(` l${e}:${terms([[1, `x${e}`], [ca, 'mu']])} >= ${num(-tp)}`);
    candidates.push({ e, coef: ca, z: z[left + 1], shaft, tp });
    if (sz[e] >= 0) {
      const cb = pc(b[e]);
      lines.push(` v${e}:${terms([[1, `x${e}`], [cb, 'mu']])} <= ${num(tp)}`);
      lines.push(` w${e}:${terms([[1, `x${e}`], [cb, 'mu']])} >= ${num(-tp)}`);
      candidates.push({ e, coef: cb, z: z[left] + sz[e], shaft, tp });
    }
  }
  for (const f of free) bounds.push(` ${f} free`);
  const body = (objective: string, muBound: string) =>
    `${objective}\nSubject To\n${lines.join('\n')}\nBounds\n${bounds.join('\n')}\n${muBound}\nEnd\n`;

  const numerics = (what: string) => {
    warnings.push({ code: 'SN_OVERLOAD_NUMERICS', message: `collapse factor omitted: ${what} (sizes or loads many orders of magnitude apart?)` });
    return { factor: null, plasticAt: [] };
  };
  // HiGHS throws on text it cannot read (a number that overflowed): an LP that ended "Error".
  const solve = (text: string): LpAnswer => {
    try {
      return lp.solve(text);
    } catch {
      return { Status: 'Error', ObjectiveValue: NaN, Columns: {} };
    }
  };
  const first = solve(body('Maximize\n obj: + 1 mu', ' mu >= 0'));
  if (/unbounded/i.test(first.Status)) return { factor: null, plasticAt: [] };
  if (first.Status !== 'Optimal') return numerics(`the linear program ended "${first.Status}"`);
  const mu = first.Columns.mu?.Primal ?? 0;
  const factor = mu * lamOf;
  if (!Number.isFinite(factor) || !(factor > 0)) return numerics(`the factor came out as ${factor}`);

  // Plastic places: the points at ±T_p in this distribution (no other point can be at ±T_p in
  // every one) form the set R. Minimise Σ_R sign·T at λ*: if every point of R is still at ±T_p in
  // the minimum, each is in every distribution (a distribution moving one point of R off ±T_p, the
  // others at most at ±T_p, would have a smaller sum); those that moved are not, leave R, and the
  // rest is tested again. Each round drops at least one point; most models need one or two rounds.
  const columns = (a: LpAnswer) => (c: Candidate) => (a.Columns[`x${c.e}`]?.Primal ?? 0) + c.coef * mu;
  const muFixed = ` mu = ${num(mu)}`;
  let tight = candidates.map((c) => ({ c, sense: Math.sign(columns(first)(c)) })).filter((t) => Math.abs(columns(first)(t.c)) >= t.c.tp * (1 - 1e-7));
  while (tight.length > 0) {
    const coef = new Map<string, number>();
    for (const t of tight) coef.set(`x${t.c.e}`, (coef.get(`x${t.c.e}`) ?? 0) + t.sense);
    const push = solve(body(`Minimize\n obj:${terms([...coef.entries()].map(([n, c]) => [c, n] as const))}`, muFixed));
    if (push.Status !== 'Optimal') {
      warnings.push({ code: 'SN_OVERLOAD_NUMERICS', message: `plastic places omitted: the linear program ended "${push.Status}"` });
      return { factor, plasticAt: [] };
    }
    const at = columns(push);
    const kept = tight.filter((t) => t.sense * at(t.c) >= t.c.tp * (1 - 1e-6));
    if (kept.length === tight.length) break;
    tight = kept;
  }
  const plastic = tight.map((t) => ({ shaft: t.c.shaft, z: t.c.z }));
  plastic.sort((p, q) => p.shaft - q.shaft || p.z - q.z);
  const plasticAt: Array<{ shaft: string; z: number }> = [];
  for (const p of plastic) {
    const prev = plasticAt[plasticAt.length - 1];
    const tol = 1e-12 * model.shafts[p.shaft].length;
    if (prev && prev.shaft === model.shafts[p.shaft].id && Math.abs(prev.z - p.z) <= tol) continue;
    plasticAt.push({ shaft: model.shafts[p.shaft].id, z: p.z });
  }
  return { factor, plasticAt };
}

/**
 * The solve with its overload attached (when `lp` is given and some material has shearYield): the
 * loads' torques are the solve's less the assembled state's, solved alone in a workspace of its own.
 * With load cases the top level is the combination shown, as a model with its loads typed in; each
 * combination gets its own (`combinationOverloads`).
 */
export function withOverload(solved: Solved, lp: LpSolver | undefined, options: PipelineOptions): Solved {
  const { model, layout } = solved;
  if (lp === undefined || !hasShearYield(model)) return solved;
  let state: EndTorques | null = null;
  if (hasAssembledState(model)) {
    const ws = new Workspace();
    const assembled: ResolvedModel = { ...assembledStateModel(model), loadCases: [], combinations: [] };
    state = ws.session(() => {
      const s = solvePipeline(assembled, { solver: options.solver, diagramPoints: 0 }, ws);
      return { TL: Float64Array.from(s.rec.TL), TR: Float64Array.from(s.rec.TR) };
    });
  }
  const n = solved.rec.TL.length;
  const TL = new Float64Array(n);
  const TR = new Float64Array(n);
  for (let e = 0; e < n; e++) {
    TL[e] = solved.rec.TL[e] - (state ? state.TL[e] : 0);
    TR[e] = solved.rec.TR[e] - (state ? state.TR[e] : 0);
  }
  const { overload, warnings } = overloadOf(model, layout, { TL, TR }, state, lp);
  if (solved.cases) warnings.push(...combinationOverloads(solved, overload, lp));
  return { ...solved, overload, warnings: dedupe([...solved.warnings, ...warnings]) };
}

/**
 * Every combination's overload from the superposed columns: the loads' end torques are the case
 * columns times the factors, the assembled state's its own column. The combination shown takes the
 * top level's. First yield for every one; collapse by the rule of COLLAPSE_ALL_UP_TO.
 */
function combinationOverloads(solved: Solved, shownOverload: Overload, lp: LpSolver): Warning[] {
  const cases = solved.cases as NonNullable<Solved['cases']>;
  const sup = cases.superposition;
  const model = sup.model;
  const cols = sup.columns;
  const n = sup.layout.elemLeft.length;
  const state: EndTorques | null = hasAssembledState(model) ? { TL: cols[0].TL, TR: cols[0].TR } : null;
  const shown = cases.combinations.findIndex((c) => c.id === cases.combination);
  const warnings: Warning[] = [];
  const one = (k: number, withCollapse: boolean): Overload => {
    const w = cases.combinations[k].weights;
    const TL = new Float64Array(n);
    const TR = new Float64Array(n);
    const t1 = new Float64Array(n);
    const t2 = new Float64Array(n);
    for (let c = 1; c < cols.length; c++) {
      const f = w[c];
      if (f === 0) continue;
      const col = cols[c];
      for (let e = 0; e < n; e++) {
        TL[e] += f * col.TL[e];
        TR[e] += f * col.TR[e];
        t1[e] += f * col.t1[e];
        t2[e] += f * col.t2[e];
      }
    }
    const m = combinedModel(model, model.combinations[k]);
    const r = overloadOf(m, { ...sup.layout, elemT1: t1, elemT2: t2 }, { TL, TR }, state, withCollapse ? lp : null);
    warnings.push(...r.warnings);
    return r.overload;
  };
  const count = cases.combinations.length;
  const all = count * n <= COLLAPSE_ALL_UP_TO;
  cases.combinations.forEach((c, k) => (c.overload = k === shown ? shownOverload : one(k, all)));
  if (!all) {
    const order = cases.combinations
      .map((c, k) => ({ k, f: c.overload?.firstYieldFactor ?? Infinity }))
      .filter((x) => x.k !== shown && Number.isFinite(x.f))
      .sort((a, b) => a.f - b.f || a.k - b.k)
      .slice(0, COLLAPSE_FEWEST);
    for (const { k } of order) cases.combinations[k].overload = one(k, true);
    const omitted = count - 1 - order.length;
    if (omitted > 0) {
      const named = [cases.combination, ...order.map((x) => cases.combinations[x.k].id)].map((id) => `"${id}"`).join(', ');
      warnings.push({
        code: 'SN_OVERLOAD_OMITTED',
        message:
          `collapse factors are given for combinations ${named} only (the one shown and the ${order.length} with the lowest first-yield factors): ` +
          `${count} combinations × ${n} elements exceed ${COLLAPSE_ALL_UP_TO.toLocaleString('en')}, one linear program each; ` +
          `the other ${omitted} have first-yield factors and collapse "omitted" (another one's: the solve option "combination")`,
      });
    }
  }
  return warnings;
}

/** The warnings without repeats (the same code and text once). */
function dedupe(list: Warning[]): Warning[] {
  const seen = new Set<string>();
  return list.filter((x) => {
    const key = `${x.code} ${x.message}`;
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });
}
