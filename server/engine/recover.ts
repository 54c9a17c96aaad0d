/**
 * Recovery: from the rotations at the stations to everything an engineer
 * reads. Inside an element of rigidity GJ and length h with distributed torque
 * t(s) = t1 + (t2 − t1)·s/h, the exact solution of GJ·φ'' = −t is
 *   T(s) = T1 − t1·s − (t2 − t1)·s²/(2h),
 *   φ(s) = φ1 + (T1·s − t1·s²/2 − (t2 − t1)·s³/(6h)) / GJ,
 * with T1 = k·(φ2 − φ1) + f1 (k = GJ/h, f1 the consistent load share at the
 * left end), so T(z), φ(z) and τ(z) are exact between stations too.
 */
import { Matrix, pseudoInverse } from 'ml-matrix';
import type { ResolvedModel } from './normalise.js';
import type { StationLayout } from './stations.js';
import type { Assembly } from './assemble.js';
import type { CheckResult, CouplingResult, GearMeshResult, ReactionResult, SegmentResult, ShaftResult, Warning } from '../../shared-types/solution.js';
import { f64, i32, u8 } from './arena.js';

export interface Recovered {
  readonly shafts: ShaftResult[];
  readonly reactions: ReactionResult[];
  readonly gearMeshes: GearMeshResult[];
  readonly couplings: CouplingResult[];
  readonly residuals: Array<{ shaft: string; residual: number }>;
  readonly checks: CheckResult[];
  /** Checks evaluated; more than listed when over MAX_LISTED_CHECKS. */
  readonly checksEvaluated: number;
  readonly warnings: Warning[];
}

/** Rotation of every dof from the reduced unknowns. */
export function expandRotations(asm: Assembly, x: Float64Array): Float64Array {
  const { varOf, alpha, beta } = asm.reduction;
  const phi = f64(varOf.length);
  for (let d = 0; d < phi.length; d++) {
    const u = varOf[d];
    phi[d] = u >= 0 ? alpha[d] * x[u] + beta[d] : beta[d];
  }
  return phi;
}

/** Everything from the rotations. `diagramPoints` interior samples per loaded element. */
export function recover(model: ResolvedModel, layout: StationLayout, asm: Assembly, phi: Float64Array, diagramPoints: number): Recovered {
  const { springs, edges, load, elemF1, elemF2 } = asm;
  const { z, elemLeft, shaftStart } = layout;
  const elemCount = springs.elemCount;

  // Element end torques.
  const TL = f64(elemCount); // T(z1+)
  const TR = f64(elemCount); // T(z2−)
  for (let e = 0; e < elemCount; e++) {
    const d = elemLeft[e];
    const kd = springs.k[e] * (phi[d + 1] - phi[d]);
    TL[e] = kd + elemF1[e];
    TR[e] = kd - elemF2[e];
  }

  // Torque each elastic part puts on its dofs, and the constraint torque every dof needs: r = K·φ − F.
  const need = f64(layout.dofCount);
  for (let m = 0; m < springs.count; m++) {
    const i = springs.i[m];
    const j = springs.j[m];
    const g = springs.p[m] * phi[i] + (j >= 0 ? springs.q[m] * phi[j] : 0) - springs.c[m];
    const f = springs.k[m] * g;
    need[i] += f * springs.p[m];
    if (j >= 0) need[j] += f * springs.q[m];
  }
  for (let d = 0; d < need.length; d++) need[d] -= load[d];
  const lambda = constraintTorques(edges, need);

  const warnings: Warning[] = [];
  for (const loop of asm.reduction.lockedLoops) {
    warnings.push({
      code: 'SN_LOCKED_LOOP',
      message: `rigid connections ${loop.join(', ')} form a loop whose ratios do not multiply to one: the stations they join cannot turn`,
      connections: [...loop],
    });
  }
  for (const tie of asm.reduction.redundantTies) {
    warnings.push({
      code: 'SN_RIGID_SPLIT',
      message: `${tie.join(', ')} tie the same rotations rigidly more than once: how they share torque is not decided by a rigid model; the least-squares split is shown (make one compliant to decide it)`,
      connections: [...tie],
    });
  }

  // Reactions, mesh and coupling results, and the torque each puts on each dof.
  const applied = f64(layout.dofCount); // torques from supports and connections, per dof
  const reactions: ReactionResult[] = model.supports.map((s) => ({
    support: s.id,
    shaft: model.shafts[s.shaft].id,
    kind: s.kind,
    torque: 0,
    rotation: phi[layout.stationAt(s.shaft, s.z)],
  }));
  const gearMeshes: GearMeshResult[] = model.meshes.map((g) => {
    const i = layout.stationAt(g.a.shaft, g.a.z);
    const j = layout.stationAt(g.b.shaft, g.b.z);
    return {
      gearMesh: g.id,
      force: 0,
      torqueA: 0,
      torqueB: 0,
      radiusA: g.a.radius,
      radiusB: g.b.radius,
      gap: g.a.radius * phi[i] - g.sense * g.b.radius * phi[j] - g.offset,
    };
  });
  const couplings: CouplingResult[] = model.couplings.map((c) => ({
    coupling: c.id,
    torqueA: 0,
    torqueB: 0,
    twist: phi[layout.stationAt(c.a.shaft, c.a.z)] - phi[layout.stationAt(c.b.shaft, c.b.z)] - c.misfit,
  }));
  // A constraint torque λ acts as λ·p on dof i and λ·q on dof j; a spring's as −k·g·p and −k·g·q.
  const put = (kind: 'support' | 'mesh' | 'coupling', ref: number, i: number, j: number, onI: number, onJ: number, force: number) => {
    applied[i] += onI;
    if (j >= 0) applied[j] += onJ;
    if (kind === 'support') reactions[ref].torque = onI;
    else if (kind === 'mesh') Object.assign(gearMeshes[ref], { torqueA: onI, torqueB: onJ, force });
    else Object.assign(couplings[ref], { torqueA: onI, torqueB: onJ });
  };
  edges.forEach((e, n) => put(e.kind, e.ref, e.i, e.j, lambda[n] * e.p, lambda[n] * e.q, -lambda[n]));
  for (let m = elemCount; m < springs.count; m++) {
    const i = springs.i[m];
    const j = springs.j[m];
    const f = springs.k[m] * (springs.p[m] * phi[i] + (j >= 0 ? springs.q[m] * phi[j] : 0) - springs.c[m]);
    put(springs.kind[m - elemCount], springs.ref[m - elemCount], i, j, -f * springs.p[m], -f * springs.q[m], f);
  }

  // Equilibrium of every shaft, summed from the recovered torques (not assumed).
  const sums = f64(model.shafts.length);
  for (let d = 0; d < applied.length; d++) sums[layout.shaftOf[d]] += applied[d];
  for (const t of model.torques) sums[t.shaft] += t.torque;
  for (const dt of model.distributed) sums[dt.shaft] += ((dt.start + dt.end) / 2) * (dt.to - dt.from);
  const residuals = model.shafts.map((shaft, s) => ({ shaft: shaft.id, residual: Math.abs(sums[s]) }));

  // Stations where T may jump: a point torque, a support or a connection acts there.
  const jumps = u8(layout.dofCount);
  for (const t of model.torques) jumps[layout.stationAt(t.shaft, t.z)] = 1;
  for (const e of edges) {
    jumps[e.i] = 1;
    if (e.j >= 0) jumps[e.j] = 1;
  }
  for (let m = elemCount; m < springs.count; m++) {
    jumps[springs.i[m]] = 1;
    if (springs.j[m] >= 0) jumps[springs.j[m]] = 1;
  }
  // Per-segment work arrays, sized once for the longest shaft and reused by every shaft.
  const maxSegments = model.shafts.reduce((m, sh) => Math.max(m, sh.segments.length), 0);
  const scratch: Scratch = { segMax: f64(maxSegments), segAt: f64(maxSegments), segPhiFrom: f64(maxSegments), segPhiTo: f64(maxSegments), roots: f64(2) };
  const shafts = model.shafts.map((shaft, s) => shaftResult(model, layout, phi, TL, TR, jumps, scratch, s, diagramPoints));
  const checks = buildChecks(model, shafts);
  for (const mat of missingAllowables(model)) {
    warnings.push({ code: 'SN_NO_ALLOWABLE', message: `material "${mat}" has no allowableShear: its stresses are reported but not checked` });
  }
  return { shafts, reactions, gearMeshes, couplings, residuals, checks: checks.list, checksEvaluated: checks.total, warnings };
}

/**
 * Multipliers λ of the rigid edges from Σ_e λ_e·a_e,d = need_d at every dof.
 * Peels dofs with a single undecided edge (trees: exact, linear time); loops
 * that remain are solved together by least squares (minimum norm).
 */
function constraintTorques(edges: Assembly['edges'], need: Float64Array): Float64Array {
  const lambda = f64(edges.length);
  if (edges.length === 0) return lambda;
  const rest = new Map<number, number>(); // dof → undecided edge count
  const incident = new Map<number, number[]>();
  edges.forEach((e, n) => {
    for (const d of e.j >= 0 && e.j !== e.i ? [e.i, e.j] : [e.i]) {
      rest.set(d, (rest.get(d) ?? 0) + 1);
      const list = incident.get(d);
      if (list) list.push(n);
      else incident.set(d, [n]);
    }
  });
  const coef = (e: (typeof edges)[number], d: number) => (e.i === d ? e.p : 0) + (e.j === d ? e.q : 0);
  const decided = u8(edges.length);
  const residual = new Map<number, number>();
  for (const d of rest.keys()) residual.set(d, need[d]);
  const stack = [...rest.entries()].filter(([, c]) => c === 1).map(([d]) => d);
  while (stack.length > 0) {
    const d = stack.pop()!;
    if (rest.get(d) !== 1) continue;
    const n = incident.get(d)!.find((m) => !decided[m]);
    if (n === undefined) continue;
    const e = edges[n];
    const a = coef(e, d);
    if (a === 0) continue;
    lambda[n] = residual.get(d)! / a;
    decided[n] = 1;
    for (const o of e.j >= 0 && e.j !== e.i ? [e.i, e.j] : [e.i]) {
      rest.set(o, rest.get(o)! - 1);
      if (o !== d) {
        residual.set(o, residual.get(o)! - lambda[n] * coef(e, o));
        if (rest.get(o) === 1) stack.push(o);
      }
    }
  }
  const open = edges.map((_, n) => n).filter((n) => !decided[n]);
  if (open.length === 0) return lambda;
  const dofs = [...new Set(open.flatMap((n) => [edges[n].i, edges[n].j]).filter((d) => d >= 0))];
  const row = new Map(dofs.map((d, r) => [d, r]));
  const A = Matrix.zeros(dofs.length, open.length);
  open.forEach((n, c) => {
    const e = edges[n];
    A.set(row.get(e.i)!, c, A.get(row.get(e.i)!, c) + e.p);
    if (e.j >= 0) A.set(row.get(e.j)!, c, A.get(row.get(e.j)!, c) + e.q);
  });
  const b = Matrix.columnVector(dofs.map((d) => residual.get(d)!));
  const x = pseudoInverse(A).mmul(b);
  open.forEach((n, c) => (lambda[n] = x.get(c, 0)));
  return lambda;
}

function shaftResult(
  model: ResolvedModel,
  layout: StationLayout,
  phi: Float64Array,
  TL: Float64Array,
  TR: Float64Array,
  jumps: Uint8Array,
  scratch: Scratch,
  s: number,
  diagramPoints: number,
): ShaftResult {
  const shaft = model.shafts[s];
  const { z, shaftStart, elemSegment, elemT1, elemT2 } = layout;
  const first = shaftStart[s];
  const last = shaftStart[s + 1] - 1;
  const e0 = first - s; // element index of the first element of this shaft
  const stations = [];
  for (let d = first; d <= last; d++) {
    stations.push({
      z: z[d],
      rotation: phi[d],
      torqueLeft: d === first ? null : TR[d - 1 - s],
      torqueRight: d === last ? null : TL[d - s],
    });
  }
  // Diagram: breakpoints (two at a jump) plus interior points of loaded elements,
  // at most DIAGRAM_INTERIOR_BUDGET of them per shaft: with that many elements the
  // breakpoints alone already trace the curve.
  const elemN = last - first;
  let loadedElements = 0;
  for (let e = e0; e < e0 + elemN; e++) if (elemT1[e] !== 0 || elemT2[e] !== 0) loadedElements++;
  const interior = Math.min(diagramPoints, Math.floor(DIAGRAM_INTERIOR_BUDGET / Math.max(1, loadedElements)));
  const dz: number[] = [];
  const dT: number[] = [];
  const dPhi: number[] = [];
  const dTau: number[] = [];
  const point = (zz: number, T: number, p: number, tau: number) => {
    dz.push(zz);
    dT.push(T);
    dPhi.push(p);
    dTau.push(tau);
  };
  const nSeg = shaft.segments.length;
  const { segMax, segAt, segPhiFrom, segPhiTo, roots } = scratch;
  segMax.fill(0, 0, nSeg);
  segPhiFrom.fill(Number.NaN, 0, nSeg);
  for (let k = 0; k < nSeg; k++) segAt[k] = shaft.segments[k].z0;
  let phiMin = Infinity;
  let phiMax = -Infinity;
  for (let e = e0; e < e0 + elemN; e++) {
    const d = first + (e - e0);
    const k = elemSegment[e];
    const sg = shaft.segments[k];
    if (Number.isNaN(segPhiFrom[k])) segPhiFrom[k] = phi[d];
    segPhiTo[k] = phi[d + 1];
    const h = z[d + 1] - z[d];
    const t1 = elemT1[e];
    const t2 = elemT2[e];
    const T1 = TL[e];
    const T2 = TR[e];
    const gj = sg.rigidity;
    const c = sg.shearFactor;
    if (Math.abs(T1) > segMax[k]) {
      segMax[k] = Math.abs(T1);
      segAt[k] = z[d];
    }
    if (Math.abs(T2) > segMax[k]) {
      segMax[k] = Math.abs(T2);
      segAt[k] = z[d + 1];
    }
    if (phi[d] < phiMin) phiMin = phi[d];
    if (phi[d] > phiMax) phiMax = phi[d];
    if (phi[d + 1] < phiMin) phiMin = phi[d + 1];
    if (phi[d + 1] > phiMax) phiMax = phi[d + 1];
    // A second point at the same z draws a jump; elsewhere T is continuous (up to round-off).
    if (dT.length === 0 || (jumps[d] && dT[dT.length - 1] !== T1)) point(z[d], T1, phi[d], c * T1);
    if (t1 !== 0 || t2 !== 0) {
      const dt = t2 - t1;
      // Interior extreme of T where t(s) = 0.
      if (dt !== 0) {
        const x = (-t1 * h) / dt;
        if (x > 0 && x < h) {
          const T = elementTorque(T1, t1, dt, h, x);
          if (Math.abs(T) > segMax[k]) {
            segMax[k] = Math.abs(T);
            segAt[k] = z[d] + x;
          }
        }
      }
      // Interior extremes of φ where T(s) = 0.
      const na = -dt / (2 * h);
      const nr = quadraticRoots(na, -t1, T1, roots);
      for (let r = 0; r < nr; r++) {
        const x = roots[r];
        if (x > 0 && x < h) {
          const p = elementRotation(phi[d], T1, t1, dt, h, gj, x);
          if (p < phiMin) phiMin = p;
          if (p > phiMax) phiMax = p;
        }
      }
      for (let m = 1; m <= interior; m++) {
        const x = (h * m) / (interior + 1);
        const T = elementTorque(T1, t1, dt, h, x);
        point(z[d] + x, T, elementRotation(phi[d], T1, t1, dt, h, gj, x), c * T);
      }
    }
    point(z[d + 1], T2, phi[d + 1], c * T2);
  }
  if (elemN === 0) {
    point(z[first], 0, phi[first], 0);
    phiMin = phiMax = phi[first];
  }
  const segments: SegmentResult[] = shaft.segments.map((sg, k) => {
    const maxAbs = segMax[k];
    return {
      index: k,
      section: sg.sectionId,
      from: sg.z0,
      to: sg.z1,
      torsionalRigidity: sg.rigidity,
      maxAbsTorque: maxAbs,
      governingZ: segAt[k],
      maxTwistRate: maxAbs / sg.rigidity,
      twist: segPhiTo[k] - segPhiFrom[k],
      layers: sg.layers.map((l) => {
        const maxShear = (l.G * l.rOuter * maxAbs) / sg.rigidity;
        return {
          material: l.materialId,
          outerRadius: l.rOuter,
          maxShear,
          allowableShear: l.allowableShear,
          utilisation: l.allowableShear === null ? null : maxShear / l.allowableShear,
          shearYield: l.shearYield,
        };
      }),
    };
  });
  return {
    id: shaft.id,
    ...(shaft.name === undefined ? {} : { name: shaft.name }),
    length: shaft.length,
    stations,
    segments,
    totalTwist: phiMax - phiMin,
    diagram: { z: dz, torque: dT, rotation: dPhi, shear: dTau },
  };
}

/** Work arrays of shaftResult, indexed by segment within a shaft. */
interface Scratch {
  readonly segMax: Float64Array;
  readonly segAt: Float64Array;
  readonly segPhiFrom: Float64Array;
  readonly segPhiTo: Float64Array;
  readonly roots: Float64Array;
}

/** Interior diagram points per shaft at most. */
const DIAGRAM_INTERIOR_BUDGET = 50_000;

/** T(s) inside an element: T1 − t1·s − (t2 − t1)·s²/(2h). */
function elementTorque(T1: number, t1: number, dt: number, h: number, x: number): number {
  return T1 - t1 * x - (dt * x * x) / (2 * h);
}

/** φ(s) inside an element: φ1 + (T1·s − t1·s²/2 − (t2 − t1)·s³/(6h)) / GJ. */
function elementRotation(phi1: number, T1: number, t1: number, dt: number, h: number, gj: number, x: number): number {
  return phi1 + (T1 * x - (t1 * x * x) / 2 - (dt * x * x * x) / (6 * h)) / gj;
}

/** Real roots of a·x² + b·x + c (a may be 0), computed without cancellation, into `out`; answers how many. */
function quadraticRoots(a: number, b: number, c: number, out: Float64Array): number {
  if (a === 0) {
    if (b === 0) return 0;
    out[0] = -c / b;
    return 1;
  }
  const disc = b * b - 4 * a * c;
  if (disc < 0) return 0;
  const q = -0.5 * (b + Math.sign(b || 1) * Math.sqrt(disc));
  out[0] = q / a;
  if (q === 0) return 1;
  out[1] = c / q;
  return 2;
}

/** Most checks listed in a solution; every utilisation is also in shafts[].segments[].layers[]. */
export const MAX_LISTED_CHECKS = 10_000;

/**
 * The checks, worst utilisation first: at most MAX_LISTED_CHECKS of them (a
 * million-segment model has a million checks; the table wants the worst).
 * Candidates are gathered in typed arrays and objects are made only for the
 * ones listed. Answers the list and how many checks were evaluated.
 */
function buildChecks(model: ResolvedModel, shafts: ShaftResult[]): { list: CheckResult[]; total: number } {
  const { twistRate, totalTwist } = model.limits;
  let n = 0;
  for (const sr of shafts) {
    for (const seg of sr.segments) {
      for (const l of seg.layers) if (l.allowableShear !== null) n++;
      if (twistRate !== null) n++;
    }
    if (totalTwist !== null) n++;
  }
  // kind: 0 shear, 1 twist rate, 2 total twist; where: shaft, segment, layer.
  const kind = u8(n);
  const shaftIx = i32(n);
  const segIx = i32(n);
  const layerIx = i32(n);
  const value = f64(n);
  const limit = f64(n);
  let k = 0;
  shafts.forEach((sr, s) => {
    for (const seg of sr.segments) {
      for (let j = 0; j < seg.layers.length; j++) {
        const l = seg.layers[j];
        if (l.allowableShear === null) continue;
        kind[k] = 0;
        shaftIx[k] = s;
        segIx[k] = seg.index;
        layerIx[k] = j;
        value[k] = l.maxShear;
        limit[k++] = l.allowableShear;
      }
      if (twistRate !== null) {
        kind[k] = 1;
        shaftIx[k] = s;
        segIx[k] = seg.index;
        value[k] = seg.maxTwistRate;
        limit[k++] = twistRate;
      }
    }
    if (totalTwist !== null) {
      kind[k] = 2;
      shaftIx[k] = s;
      value[k] = sr.totalTwist;
      limit[k++] = totalTwist;
    }
  });
  const util = f64(n);
  for (let m = 0; m < n; m++) util[m] = value[m] / limit[m];
  // Threshold of the worst MAX_LISTED_CHECKS by a native numeric sort of a copy.
  let chosen: number[] = [];
  if (n <= MAX_LISTED_CHECKS) {
    for (let m = 0; m < n; m++) chosen.push(m);
  } else {
    const sorted = util.slice().sort();
    const threshold = sorted[n - MAX_LISTED_CHECKS];
    for (let m = 0; m < n && chosen.length < MAX_LISTED_CHECKS; m++) if (util[m] > threshold) chosen.push(m);
    for (let m = 0; m < n && chosen.length < MAX_LISTED_CHECKS; m++) if (util[m] === threshold) chosen.push(m);
  }
  chosen = chosen.sort((x, y) => util[y] - util[x] || x - y);
  const list = chosen.map((m): CheckResult => {
    const shaft = shafts[shaftIx[m]];
    const pass = value[m] <= limit[m];
    if (kind[m] === 0) {
      const material = shaft.segments[segIx[m]].layers[layerIx[m]].material;
      return { kind: 'shear', shaft: shaft.id, value: value[m], limit: limit[m], utilisation: util[m], pass, segment: segIx[m], layer: layerIx[m], material };
    }
    if (kind[m] === 1) return { kind: 'twistRate', shaft: shaft.id, value: value[m], limit: limit[m], utilisation: util[m], pass, segment: segIx[m] };
    return { kind: 'totalTwist', shaft: shaft.id, value: value[m], limit: limit[m], utilisation: util[m], pass };
  });
  return { list, total: n };
}

/** Materials used by some segment without an allowable shear stress. */
function missingAllowables(model: ResolvedModel): string[] {
  const missing = new Set<string>();
  for (const shaft of model.shafts) {
    for (const seg of shaft.segments) for (const l of seg.layers) if (l.allowableShear === null) missing.add(l.materialId);
  }
  return [...missing];
}
