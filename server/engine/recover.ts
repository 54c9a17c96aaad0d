/**
 * Recovery: from the rotations at the stations to everything an engineer
 * reads. Inside an element of rigidity GJ and length h with distributed torque
 * t(s) = t1 + (t2 − t1)·s/h, the exact solution of GJ·φ'' = −t is
 *   T(s) = T1 − t1·s − (t2 − t1)·s²/(2h),
 *   φ(s) = φ1 + (T1·s − t1·s²/2 − (t2 − t1)·s³/(6h)) / GJ,
 * with T1 = k·(φ2 − φ1) + f1 (k = GJ/h, f1 the consistent load share at the
 * left end), so T(z), φ(z) and τ(z) are exact between stations too.
 *
 * The stages, in the order the pipeline runs them: rotations of every dof
 * (`expandRotations`), element end torques (`elementTorques`), what supports
 * and connections carry (`jointTorques`), per-segment and per-shaft results
 * with the diagrams (`recoverShafts`), and the checks (`buildChecks`).
 */
import { Matrix, pseudoInverse } from 'ml-matrix';
import type { ResolvedModel, ResolvedSegment, ResolvedTaper } from './normalise.js';
import { polarMomentAt } from './taper.js';
import type { RaiserColumns } from './raisers.js';
import type { StationLayout } from './stations.js';
import { consistentLeft, consistentRight, SpringCursor, type ElasticParts, type SpringSet } from './assemble.js';
import type { Reduction } from './constraints.js';
import type { CouplingResult, GearMeshResult, ReactionResult, Warning } from '../../shared-types/solution.js';
import type { Workspace } from './workspace.js';
import { taperElementLoads, taperElementState, taperTwistRatePeak } from './taper-element.js';

/**
 * Everything recovered, in columns (typed arrays from the workspace) rather
 * than in millions of small objects, gathered by the pipeline from the stages
 * below; `output.ts` walks it into the solution object or its JSON text. Segments and layers are numbered across
 * all shafts: shaft s has segments segBase[s] … segBase[s + 1] − 1, and global
 * segment g has layers layerBase[g] … layerBase[g + 1] − 1.
 */
export interface Recovered {
  /** Rotation of every dof, rad. */
  readonly phi: Float64Array;
  /** T(z+) at the left end and T(z−) at the right end of every element, N·m. */
  readonly TL: Float64Array;
  readonly TR: Float64Array;
  readonly segBase: Int32Array;
  /** Per segment: largest |T|, where it acts, twist φ(to) − φ(from). */
  readonly segMaxAbs: Float64Array;
  readonly segAt: Float64Array;
  readonly segTwist: Float64Array;
  /**
   * Per segment, only when the model has tapers (else empty): the largest twist rate |T|/(G·J(z)),
   * rad/m (NaN for a uniform segment, whose rate is segMaxAbs / rigidity). A tapered segment's
   * segAt is where its peak stress lies and its layer's maxShear that peak.
   */
  readonly segRate: Float64Array;
  readonly layerBase: Int32Array;
  /** Per layer: largest |τ| over its segment, Pa. */
  readonly layerMaxShear: Float64Array;
  /** Per shaft: max φ − min φ, rad; |Σ torques|, N·m. */
  readonly totalTwist: Float64Array;
  readonly residual: Float64Array;
  /** Diagram of shaft s: points diagStart[s] … diagStart[s] + diagCount[s] − 1 of dZ, dT, dPhi, dTau. */
  readonly diagStart: Int32Array;
  readonly diagCount: Int32Array;
  readonly dZ: Float64Array;
  readonly dT: Float64Array;
  readonly dPhi: Float64Array;
  readonly dTau: Float64Array;
  readonly reactions: ReactionResult[];
  readonly gearMeshes: GearMeshResult[];
  readonly couplings: CouplingResult[];
  readonly checks: CheckColumns;
  /** Stress raisers' nominal and local peaks; absent when the model has none. */
  readonly raisers?: RaiserColumns;
}

/** The checks evaluated, and the order of those listed (worst first). */
export interface CheckColumns {
  /** Checks evaluated; more than listed when over MAX_LISTED_CHECKS. */
  readonly total: number;
  /** Indices of the listed checks, worst utilisation first. */
  readonly listed: Int32Array;
  /** 0 shear, 1 twist rate, 2 total twist, 3 local peak at a stress raiser (its index in `segment`). */
  readonly kind: Uint8Array;
  readonly shaft: Int32Array;
  /** Segment index within its shaft, and layer index within its segment. */
  readonly segment: Int32Array;
  readonly layer: Int32Array;
  readonly value: Float64Array;
  readonly limit: Float64Array;
  readonly utilisation: Float64Array;
}

/** Rotation of every dof from the reduced unknowns. */
export function expandRotations(red: Reduction, x: Float64Array, ws: Workspace): Float64Array {
  const { varOf, alpha, beta } = red;
  const phi = ws.f64(varOf.length);
  for (let d = 0; d < phi.length; d++) {
    const u = varOf[d];
    phi[d] = u >= 0 ? alpha[d] * x[u] + beta[d] : beta[d];
  }
  return phi;
}

/** T(z+) at the left end and T(z−) at the right end of every element, N·m. */
export interface ElementTorques {
  readonly TL: Float64Array;
  readonly TR: Float64Array;
}

/** Element end torques: k·(φ2 − φ1) plus or minus the consistent load share (of a taper: by its exact shape function). */
export function elementTorques(model: ResolvedModel, layout: StationLayout, springs: SpringSet, phi: Float64Array, ws: Workspace): ElementTorques {
  const { z, elemLeft, elemT1, elemT2, shaftOf, elemSegment } = layout;
  const elemCount = springs.elemCount;
  const TL = ws.f64(elemCount); // T(z1+)
  const TR = ws.f64(elemCount); // T(z2−)
  for (let e = 0; e < elemCount; e++) {
    const d = elemLeft[e];
    const kd = springs.k[e] * (phi[d + 1] - phi[d]);
    const t1 = elemT1[e];
    const t2 = elemT2[e];
    const loaded = t1 !== 0 || t2 !== 0;
    const h = z[d + 1] - z[d];
    if (loaded) {
      const seg = model.shafts[shaftOf[d]].segments[elemSegment[e]];
      if (seg.taper) {
        const f = taperElementLoads(seg, seg.taper, z[d], z[d + 1], t1, t2);
        TL[e] = kd + f.fa;
        TR[e] = kd - f.fb;
        continue;
      }
    }
    TL[e] = kd + (loaded ? consistentLeft(h, t1, t2) : 0);
    TR[e] = kd - (loaded ? consistentRight(h, t1, t2) : 0);
  }
  return { TL, TR };
}

/** What supports and connections do: their results, each shaft's residual, and where T may jump. */
export interface JointTorques {
  readonly reactions: ReactionResult[];
  readonly gearMeshes: GearMeshResult[];
  readonly couplings: CouplingResult[];
  /** Per shaft: |Σ torques|, N·m. */
  readonly residual: Float64Array;
  /** 1 at stations where T may jump: a point torque, a support or a connection acts there. */
  readonly jumps: Uint8Array;
  /** Per shaft: Σ torques with its sign (linear in the loads: a combination's is the factored sum). */
  readonly sums: Float64Array;
}

/**
 * Torques of supports, meshes and couplings from the rotations: a spring's
 * from its stretch, a rigid part's from the multiplier λ that balances every
 * dof (K·φ − F = Σ λ·a), and the equilibrium residual of every shaft summed
 * from them (not assumed).
 */
export function jointTorques(model: ResolvedModel, layout: StationLayout, parts: ElasticParts, phi: Float64Array, ws: Workspace): JointTorques {
  const { springs, edges, load } = parts;
  const elemCount = springs.elemCount;

  // Torque each elastic part puts on its dofs, and the constraint torque every dof needs: r = K·φ − F.
  const need = ws.f64(layout.dofCount);
  const spring = new SpringCursor(springs);
  for (let m = 0; m < springs.count; m++) {
    spring.read(m);
    const { i, j, p, q } = spring;
    const g = p * phi[i] + (j >= 0 ? q * phi[j] : 0) - spring.c;
    const f = springs.k[m] * g;
    need[i] += f * p;
    if (j >= 0) need[j] += f * q;
  }
  for (let d = 0; d < need.length; d++) need[d] -= load[d];
  const lambda = constraintTorques(edges, need, ws);

  // Reactions, mesh and coupling results, and the torque each puts on each dof.
  const applied = ws.f64(layout.dofCount); // torques from supports and connections, per dof
  const jumps = ws.u8(layout.dofCount);
  for (const t of model.torques) jumps[layout.stationAt(t.shaft, t.z)] = 1;
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
    jumps[i] = 1;
    if (j >= 0) {
      applied[j] += onJ;
      jumps[j] = 1;
    }
    if (kind === 'support') reactions[ref].torque = onI;
    else if (kind === 'mesh') Object.assign(gearMeshes[ref], { torqueA: onI, torqueB: onJ, force });
    else Object.assign(couplings[ref], { torqueA: onI, torqueB: onJ });
  };
  edges.forEach((e, n) => put(e.kind, e.ref, e.i, e.j, lambda[n] * e.p, lambda[n] * e.q, -lambda[n]));
  for (let m = elemCount; m < springs.count; m++) {
    spring.read(m);
    const { i, j, p, q } = spring;
    const f = springs.k[m] * (p * phi[i] + (j >= 0 ? q * phi[j] : 0) - spring.c);
    put(springs.kind[m - elemCount], springs.ref[m - elemCount], i, j, -f * p, -f * q, f);
  }

  // Equilibrium of every shaft, summed from the recovered torques (not assumed).
  const sums = ws.f64(model.shafts.length);
  for (let d = 0; d < applied.length; d++) sums[layout.shaftOf[d]] += applied[d];
  for (const t of model.torques) sums[t.shaft] += t.torque;
  for (const dt of model.distributed) sums[dt.shaft] += ((dt.start + dt.end) / 2) * (dt.to - dt.from);
  const signed = ws.f64Copy(sums, sums.length);
  for (let s = 0; s < sums.length; s++) sums[s] = Math.abs(sums[s]);

  for (let s = 0; s < sums.length; s++) sums[s] = Math.abs(sums[s]);
  return { reactions, gearMeshes, couplings, residual: sums, jumps, sums: signed };
}

/** Warnings of a solved model: locked loops and rigid splits of the reduction, materials without an allowable. */
export function recoveryWarnings(model: ResolvedModel, red: Reduction): Warning[] {
  const warnings: Warning[] = [];
  for (const loop of red.lockedLoops) {
    warnings.push({
      code: 'SN_LOCKED_LOOP',
      message: `rigid connections ${loop.join(', ')} form a loop whose ratios do not multiply to one: the stations they join cannot turn`,
      connections: [...loop],
    });
  }
  for (const tie of red.redundantTies) {
    warnings.push({
      code: 'SN_RIGID_SPLIT',
      message: `${tie.join(', ')} tie the same rotations rigidly more than once: how they share torque is not decided by a rigid model; the least-squares split is shown (make one compliant to decide it)`,
      connections: [...tie],
    });
  }
  for (const mat of missingAllowables(model)) {
    warnings.push({ code: 'SN_NO_ALLOWABLE', message: `material "${mat}" has no allowableShear: its stresses are reported but not checked` });
  }
  return warnings;
}

/**
 * Multipliers λ of the rigid edges from Σ_e λ_e·a_e,d = need_d at every dof.
 * Peels dofs with a single undecided edge (trees: exact, linear time); loops
 * that remain are solved together by least squares (minimum norm).
 */
function constraintTorques(edges: ElasticParts['edges'], need: Float64Array, ws: Workspace): Float64Array {
  const lambda = ws.f64(edges.length);
  if (edges.length === 0) return lambda;
  // Incidence of dofs and edges in compressed rows (a dof appears once per edge, even if the edge ties it to itself).
  const nDof = need.length;
  const rest = ws.i32(nDof); // undecided edges at each dof
  const ends = (e: (typeof edges)[number]) => (e.j >= 0 && e.j !== e.i ? 2 : 1);
  for (const e of edges) {
    rest[e.i]++;
    if (ends(e) === 2) rest[e.j]++;
  }
  const rowStart = ws.i32(nDof + 1);
  for (let d = 0; d < nDof; d++) rowStart[d + 1] = rowStart[d] + rest[d];
  const incident = ws.i32(rowStart[nDof]);
  const fill = ws.i32Copy(rowStart, nDof);
  edges.forEach((e, n) => {
    incident[fill[e.i]++] = n;
    if (ends(e) === 2) incident[fill[e.j]++] = n;
  });
  const coef = (e: (typeof edges)[number], d: number) => (e.i === d ? e.p : 0) + (e.j === d ? e.q : 0);
  const decided = ws.u8(edges.length);
  const residual = ws.f64Copy(need, nDof);
  const stack = ws.i32(2 * rowStart[nDof]); // a dof is pushed at most once at the start and once per edge it loses
  let sp = 0;
  for (let d = 0; d < nDof; d++) if (rest[d] === 1) stack[sp++] = d;
  while (sp > 0) {
    const d = stack[--sp];
    if (rest[d] !== 1) continue;
    let n = -1;
    for (let p = rowStart[d]; p < rowStart[d + 1]; p++) {
      if (!decided[incident[p]]) {
        n = incident[p];
        break;
      }
    }
    if (n < 0) continue;
    const e = edges[n];
    const a = coef(e, d);
    if (a === 0) continue;
    lambda[n] = residual[d] / a;
    decided[n] = 1;
    rest[e.i]--;
    if (e.i !== d) {
      residual[e.i] -= lambda[n] * coef(e, e.i);
      if (rest[e.i] === 1) stack[sp++] = e.i;
    }
    if (ends(e) === 2) {
      rest[e.j]--;
      if (e.j !== d) {
        residual[e.j] -= lambda[n] * coef(e, e.j);
        if (rest[e.j] === 1) stack[sp++] = e.j;
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
  const b = Matrix.columnVector(dofs.map((d) => residual[d]));
  const x = pseudoInverse(A).mmul(b);
  open.forEach((n, c) => (lambda[n] = x.get(c, 0)));
  return lambda;
}

export type ShaftColumns = Pick<
  Recovered,
  | 'segBase'
  | 'segMaxAbs'
  | 'segAt'
  | 'segTwist'
  | 'segRate'
  | 'layerBase'
  | 'layerMaxShear'
  | 'totalTwist'
  | 'diagStart'
  | 'diagCount'
  | 'dZ'
  | 'dT'
  | 'dPhi'
  | 'dTau'
>;

/** True when τ may jump between segments a and b of one shaft (T continuous): a different section factor, or a taper. */
function sectionChanges(segments: readonly ResolvedSegment[], a: number, b: number): boolean {
  return a !== b && (segments[a].shearFactor !== segments[b].shearFactor || segments[a].taper !== undefined || segments[b].taper !== undefined);
}

/**
 * Segments and layers numbered across all shafts (as in `Recovered`): shaft s has segments
 * segBase[s] … segBase[s + 1] − 1, and global segment g has layers layerBase[g] … layerBase[g + 1] − 1.
 */
export function globalNumbering(model: ResolvedModel, ws: Workspace): { segBase: Int32Array; layerBase: Int32Array } {
  const nShafts = model.shafts.length;
  const segBase = ws.i32(nShafts + 1);
  for (let s = 0; s < nShafts; s++) segBase[s + 1] = segBase[s] + model.shafts[s].segments.length;
  const layerBase = ws.i32(segBase[nShafts] + 1);
  for (let s = 0, g = 0; s < nShafts; s++) {
    for (const sg of model.shafts[s].segments) layerBase[g + 1] = layerBase[g++] + sg.layers.length;
  }
  return { segBase, layerBase };
}

/** Per segment, per layer and per shaft extremes, and the diagrams, of every shaft. */
export function recoverShafts(
  model: ResolvedModel,
  layout: StationLayout,
  phi: Float64Array,
  ends: ElementTorques,
  jumps: Uint8Array,
  diagramPoints: number,
  ws: Workspace,
): ShaftColumns {
  const { TL, TR } = ends;
  const { z, shaftStart, elemSegment, elemT1, elemT2 } = layout;
  const nShafts = model.shafts.length;
  const { segBase, layerBase } = globalNumbering(model, ws);
  const nSegments = segBase[nShafts];
  // Diagram: breakpoints (two at a jump) plus interior points of loaded elements,
  // at most DIAGRAM_INTERIOR_BUDGET of them per shaft: with that many elements the
  // breakpoints alone already trace the curve. Room for the most points a shaft can have.
  const interior = ws.i32(nShafts);
  const diagStart = ws.i32(nShafts + 1);
  for (let s = 0; s < nShafts; s++) {
    const e0 = shaftStart[s] - s;
    const elemN = shaftStart[s + 1] - shaftStart[s] - 1;
    let loaded = 0;
    let jumped = 0;
    const segs = model.shafts[s].segments;
    for (let e = e0; e < e0 + elemN; e++) {
      // A taper's τ curves even under a constant torque: its elements get interior points too.
      if (elemT1[e] !== 0 || elemT2[e] !== 0 || segs[elemSegment[e]].taper) loaded++;
      // τ jumps where the section changes even where T does not: a segment boundary may take a second point too.
      jumped += jumps[shaftStart[s] + (e - e0)] | (e > e0 && sectionChanges(segs, elemSegment[e - 1], elemSegment[e]) ? 1 : 0);
    }
    interior[s] = Math.min(diagramPoints, Math.floor(DIAGRAM_INTERIOR_BUDGET / Math.max(1, loaded)));
    // First point, a second point at each jump, interior points, and the right end of each element.
    diagStart[s + 1] = diagStart[s] + 1 + jumped + interior[s] * loaded + elemN;
  }
  const room = diagStart[nShafts];
  const dZ = ws.f64(room);
  const dT = ws.f64(room);
  const dPhi = ws.f64(room);
  const dTau = ws.f64(room);
  const diagCount = ws.i32(nShafts);
  const segMax = ws.f64(nSegments);
  const segAt = ws.f64(nSegments);
  const segPhiFrom = ws.f64(nSegments).fill(Number.NaN);
  const segPhiTo = ws.f64(nSegments);
  const totalTwist = ws.f64(nShafts);
  const roots = ws.f64(2);
  const hasTaper = model.shafts.some((sh) => sh.segments.some((sg) => sg.taper));
  const segRate = ws.f64(hasTaper ? nSegments : 0).fill(Number.NaN);
  const segPeak = ws.f64(hasTaper ? nSegments : 0);
  const peaks: TaperPeakColumns = { segMax, segAt, segPeak, segRate };
  const phiRange = ws.f64(2);

  for (let s = 0; s < nShafts; s++) {
    const shaft = model.shafts[s];
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    const e0 = first - s; // element index of the first element of this shaft
    const g0 = segBase[s];
    const elemN = last - first;
    const nInterior = interior[s];
    let n = diagStart[s]; // next diagram point
    const point = (zz: number, T: number, p: number, tau: number) => {
      dZ[n] = zz;
      dT[n] = T;
      dPhi[n] = p;
      dTau[n++] = tau;
    };
    for (let k = 0; k < shaft.segments.length; k++) segAt[g0 + k] = shaft.segments[k].z0;
    let phiMin = Infinity;
    let phiMax = -Infinity;
    /** True when element e is the first of a segment after another segment of this shaft. */
    const startsSegment = (e: number): boolean => e > e0 && sectionChanges(shaft.segments, elemSegment[e - 1], elemSegment[e]);
    /** An element of a tapered segment: exact T, φ, τ inside; the peaks of τ and twist rate wherever they lie. */
    const taperElement = (sg: ResolvedSegment, taper: ResolvedTaper, g: number, d: number, e: number, next: number): number => {
      n = next;
      const h = z[d + 1] - z[d];
      const t1 = elemT1[e];
      const t2 = elemT2[e];
      const dt = t2 - t1;
      const T1 = TL[e];
      const T2 = TR[e];
      phiRange[0] = phiMin;
      phiRange[1] = phiMax;
      const { state, input } = taperElementPeaks(sg, taper, g, z[d], z[d + 1], phi[d], phi[d + 1], T1, T2, t1, t2, peaks, phiRange, roots);
      phiMin = phiRange[0];
      phiMax = phiRange[1];
      const tauA = (T1 * input.dA) / 2 / polarMomentAt(input, 0);
      if (n === diagStart[s] || ((jumps[d] || startsSegment(e)) && (dT[n - 1] !== T1 || dTau[n - 1] !== tauA))) point(z[d], T1, phi[d], tauA);
      for (let m = 1; m <= nInterior; m++) {
        const x = (h * m) / (nInterior + 1);
        const T = elementTorque(T1, t1, dt, h, x);
        point(z[d] + x, T, state.rotationAt(x), state.shearAt(x));
      }
      point(z[d + 1], T2, phi[d + 1], (T2 * input.dB) / 2 / polarMomentAt(input, h));
      return n;
    };
    for (let e = e0; e < e0 + elemN; e++) {
      const d = first + (e - e0);
      const k = elemSegment[e];
      const g = g0 + k;
      const sg = shaft.segments[k];
      if (Number.isNaN(segPhiFrom[g])) segPhiFrom[g] = phi[d];
      segPhiTo[g] = phi[d + 1];
      const h = z[d + 1] - z[d];
      const t1 = elemT1[e];
      const t2 = elemT2[e];
      const T1 = TL[e];
      const T2 = TR[e];
      const gj = sg.rigidity;
      const c = sg.shearFactor;
      if (sg.taper) {
        n = taperElement(sg, sg.taper, g, d, e, n);
        continue;
      }
      if (Math.abs(T1) > segMax[g]) {
        segMax[g] = Math.abs(T1);
        segAt[g] = z[d];
      }
      if (Math.abs(T2) > segMax[g]) {
        segMax[g] = Math.abs(T2);
        segAt[g] = z[d + 1];
      }
      if (phi[d] < phiMin) phiMin = phi[d];
      if (phi[d] > phiMax) phiMax = phi[d];
      if (phi[d + 1] < phiMin) phiMin = phi[d + 1];
      if (phi[d + 1] > phiMax) phiMax = phi[d + 1];
      // A second point at the same z draws a jump (of T where a torque acts, of τ where the section
      // changes); elsewhere T and τ are continuous (up to round-off).
      if (n === diagStart[s] || ((jumps[d] || startsSegment(e)) && (dT[n - 1] !== T1 || dTau[n - 1] !== c * T1))) point(z[d], T1, phi[d], c * T1);
      if (t1 !== 0 || t2 !== 0) {
        const dt = t2 - t1;
        phiRange[0] = phiMin;
        phiRange[1] = phiMax;
        loadedElementPeaks(g, z[d], h, phi[d], T1, t1, t2, gj, segMax, segAt, phiRange, roots);
        phiMin = phiRange[0];
        phiMax = phiRange[1];
        for (let m = 1; m <= nInterior; m++) {
          const x = (h * m) / (nInterior + 1);
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
    diagCount[s] = n - diagStart[s];
    totalTwist[s] = phiMax - phiMin;
  }

  // Twist of each segment, and the largest stress in each of its layers.
  const segTwist = segPhiFrom; // reused in place: φ(to) − φ(from)
  const layerMaxShear = ws.f64(layerBase[nSegments]);
  for (let s = 0, g = 0; s < nShafts; s++) {
    for (const sg of model.shafts[s].segments) {
      segTwist[g] = segPhiTo[g] - segPhiFrom[g];
      const maxAbs = segMax[g];
      if (sg.taper) {
        layerMaxShear[layerBase[g]] = segPeak[g];
        g++;
        continue;
      }
      for (let j = 0; j < sg.layers.length; j++) {
        const l = sg.layers[j];
        layerMaxShear[layerBase[g] + j] = (l.G * l.rOuter * maxAbs) / sg.rigidity;
      }
      g++;
    }
  }
  return { segBase, segMaxAbs: segMax, segAt, segTwist, segRate, layerBase, layerMaxShear, totalTwist, diagStart, diagCount, dZ, dT, dPhi, dTau };
}

/**
 * The interior peaks of a uniform element of segment g (rigidity gj) from z0, of length h, under a
 * distributed torque t1 → t2 (not both zero), for the single solve and the combinations: raises
 * segMax[g] (and segAt[g]) to |T| where t(s) = 0 inside, and widens phiRange ([min, max], in and
 * out) by φ where T(s) = 0 inside.
 */
export function loadedElementPeaks(
  g: number,
  z0: number,
  h: number,
  phi0: number,
  T1: number,
  t1: number,
  t2: number,
  gj: number,
  segMax: Float64Array,
  segAt: Float64Array,
  phiRange: Float64Array,
  roots: Float64Array,
): void {
  const dt = t2 - t1;
  // Interior extreme of T where t(s) = 0.
  if (dt !== 0) {
    const x = (-t1 * h) / dt;
    if (x > 0 && x < h) {
      const T = elementTorque(T1, t1, dt, h, x);
      if (Math.abs(T) > segMax[g]) {
        segMax[g] = Math.abs(T);
        segAt[g] = z0 + x;
      }
    }
  }
  // Interior extremes of φ where T(s) = 0.
  const nr = quadraticRoots(-dt / (2 * h), -t1, T1, roots);
  for (let r = 0; r < nr; r++) {
    const x = roots[r];
    if (x > 0 && x < h) {
      const p = elementRotation(phi0, T1, t1, dt, h, gj, x);
      if (p < phiRange[0]) phiRange[0] = p;
      if (p > phiRange[1]) phiRange[1] = p;
    }
  }
}

/** The per-segment columns a tapered element's peaks go into (see `taperElementPeaks`). */
export interface TaperPeakColumns {
  /** Largest |T|, N·m. */
  readonly segMax: Float64Array;
  /** Where the peak shear stress lies, m. */
  readonly segAt: Float64Array;
  /** Peak shear stress, Pa. */
  readonly segPeak: Float64Array;
  /** Peak twist rate, rad/m (NaN until the segment's first element). */
  readonly segRate: Float64Array;
}

/**
 * One element of a tapered segment g from z0 to z1 (rotations φ0, φ1, left end torque T1, right T2,
 * distributed torque t1 → t2): the one recovery of its peaks for the single solve and the
 * combinations. Raises segMax[g] to |T| at the ends and where t(s) = 0 inside, segPeak[g] (and
 * segAt[g]) to its peak shear stress, segRate[g] to its peak twist rate, and widens phiRange
 * ([min, max], in and out) by φ at the ends and where T(s) = 0 inside. Returns the element's exact
 * state for the diagram.
 */
export function taperElementPeaks(
  sg: ResolvedSegment,
  taper: ResolvedTaper,
  g: number,
  z0: number,
  z1: number,
  phi0: number,
  phi1: number,
  T1: number,
  T2: number,
  t1: number,
  t2: number,
  cols: TaperPeakColumns,
  phiRange: Float64Array,
  roots: Float64Array,
): ReturnType<typeof taperElementState> {
  const { segMax, segAt, segPeak, segRate } = cols;
  const h = z1 - z0;
  const dt = t2 - t1;
  const loaded = t1 !== 0 || t2 !== 0;
  const elem = taperElementState(sg, taper, z0, z1, phi0, phi1, T1, t1, t2);
  const { state, input } = elem;
  if (Math.abs(T1) > segMax[g]) segMax[g] = Math.abs(T1);
  if (Math.abs(T2) > segMax[g]) segMax[g] = Math.abs(T2);
  if (loaded && dt !== 0) {
    const x = (-t1 * h) / dt;
    if (x > 0 && x < h) segMax[g] = Math.max(segMax[g], Math.abs(elementTorque(T1, t1, dt, h, x)));
  }
  if (state.peak.shear > segPeak[g]) {
    segPeak[g] = state.peak.shear;
    segAt[g] = z0 + state.peak.z;
  }
  const rate = taperTwistRatePeak(input, taper.G, state, t1, t2).rate;
  if (!(rate <= segRate[g])) segRate[g] = Number.isNaN(segRate[g]) ? rate : Math.max(segRate[g], rate);
  let phiMin = phiRange[0];
  let phiMax = phiRange[1];
  for (const p of [phi0, phi1]) {
    if (p < phiMin) phiMin = p;
    if (p > phiMax) phiMax = p;
  }
  if (loaded) {
    const nr = quadraticRoots(-dt / (2 * h), -t1, T1, roots);
    for (let r = 0; r < nr; r++) {
      const x = roots[r];
      if (x > 0 && x < h) {
        const p = state.rotationAt(x);
        if (p < phiMin) phiMin = p;
        if (p > phiMax) phiMax = p;
      }
    }
  }
  phiRange[0] = phiMin;
  phiRange[1] = phiMax;
  return elem;
}

/** Interior diagram points per shaft at most. */
const DIAGRAM_INTERIOR_BUDGET = 50_000;

/** T(s) inside an element: T1 − t1·s − (t2 − t1)·s²/(2h). */
export function elementTorque(T1: number, t1: number, dt: number, h: number, x: number): number {
  return T1 - t1 * x - (dt * x * x) / (2 * h);
}

/** φ(s) inside an element: φ1 + (T1·s − t1·s²/2 − (t2 − t1)·s³/(6h)) / GJ. */
export function elementRotation(phi1: number, T1: number, t1: number, dt: number, h: number, gj: number, x: number): number {
  return phi1 + (T1 * x - (t1 * x * x) / 2 - (dt * x * x * x) / (6 * h)) / gj;
}

/** Real roots of a·x² + b·x + c (a may be 0), computed without cancellation, into `out`; answers how many. */
export function quadraticRoots(a: number, b: number, c: number, out: Float64Array): number {
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
 * Candidates are gathered in typed arrays; `listed` orders those shown.
 */
export function buildChecks(model: ResolvedModel, cols: ShaftColumns, ws: Workspace, raisers?: RaiserColumns): CheckColumns {
  const { twistRate, totalTwist } = model.limits;
  const { segBase, layerBase, layerMaxShear, segMaxAbs } = cols;
  let n = 0;
  for (const shaft of model.shafts) {
    for (const seg of shaft.segments) {
      for (const l of seg.layers) if (l.allowableShear !== null) n++;
      if (twistRate !== null) n++;
    }
    if (totalTwist !== null) n++;
  }
  const raiserMaterial = (i: number) => {
    const r = model.raisers[i];
    const layers = model.shafts[r.shaft].segments[raisers ? raisers.segment[i] : 0].layers;
    return layers[layers.length - 1];
  };
  if (raisers) for (let i = 0; i < model.raisers.length; i++) if (raiserMaterial(i).allowableShear !== null) n++;
  const kind = ws.u8(n);
  const shaftIx = ws.i32(n);
  const segIx = ws.i32(n);
  const layerIx = ws.i32(n);
  const value = ws.f64(n);
  const limit = ws.f64(n);
  let k = 0;
  model.shafts.forEach((shaft, s) => {
    shaft.segments.forEach((seg, index) => {
      const g = segBase[s] + index;
      for (let j = 0; j < seg.layers.length; j++) {
        const allowable = seg.layers[j].allowableShear;
        if (allowable === null) continue;
        kind[k] = 0;
        shaftIx[k] = s;
        segIx[k] = index;
        layerIx[k] = j;
        value[k] = layerMaxShear[layerBase[g] + j];
        limit[k++] = allowable;
      }
      if (twistRate !== null) {
        kind[k] = 1;
        shaftIx[k] = s;
        segIx[k] = index;
        value[k] = seg.taper ? cols.segRate[g] : segMaxAbs[g] / seg.rigidity;
        limit[k++] = twistRate;
      }
    });
    if (totalTwist !== null) {
      kind[k] = 2;
      shaftIx[k] = s;
      value[k] = cols.totalTwist[s];
      limit[k++] = totalTwist;
    }
  });
  // Local peaks at stress raisers (kind 3; `segment` holds the raiser's index).
  if (raisers) {
    for (let i = 0; i < model.raisers.length; i++) {
      const allowable = raiserMaterial(i).allowableShear;
      if (allowable === null) continue;
      kind[k] = 3;
      shaftIx[k] = model.raisers[i].shaft;
      segIx[k] = i;
      value[k] = raisers.peak[i];
      limit[k++] = allowable;
    }
  }
  const util = ws.f64(n);
  for (let m = 0; m < n; m++) util[m] = value[m] / limit[m];
  // Threshold of the worst MAX_LISTED_CHECKS by a native numeric sort of a copy.
  let chosen: number[] = [];
  if (n <= MAX_LISTED_CHECKS) {
    for (let m = 0; m < n; m++) chosen.push(m);
  } else {
    const copy = ws.f64(n);
    copy.set(util);
    const threshold = kthSmallest(copy, n - MAX_LISTED_CHECKS);
    for (let m = 0; m < n && chosen.length < MAX_LISTED_CHECKS; m++) if (util[m] > threshold) chosen.push(m);
    for (let m = 0; m < n && chosen.length < MAX_LISTED_CHECKS; m++) if (util[m] === threshold) chosen.push(m);
  }
  chosen = chosen.sort((x, y) => util[y] - util[x] || x - y);
  const listed = ws.i32(chosen.length);
  listed.set(chosen);
  return { total: n, listed, kind, shaft: shaftIx, segment: segIx, layer: layerIx, value, limit, utilisation: util };
}

/**
 * The k-th smallest value (0-based) of `a`, which it reorders: Hoare's
 * selection with the median of three as pivot, expected linear time.
 * NaN is not expected (utilisations are finite).
 */
export function kthSmallest(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (hi > lo) {
    const mid = (lo + hi) >>> 1;
    // Median of three of a[lo], a[mid], a[hi] as the pivot.
    const x = a[lo];
    const y = a[mid];
    const z = a[hi];
    const pivot = x < y ? (y < z ? y : x < z ? z : x) : x < z ? x : y < z ? z : y;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i];
        a[i++] = a[j];
        a[j--] = t;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k];
  }
  return a[k];
}

/** Materials used by some segment without an allowable shear stress. */
function missingAllowables(model: ResolvedModel): string[] {
  const missing = new Set<string>();
  for (const shaft of model.shafts) {
    for (const seg of shaft.segments) for (const l of seg.layers) if (l.allowableShear === null) missing.add(l.materialId);
  }
  return [...missing];
}
