/**
 * The last gate before an answer: every number a solution would carry must be
 * finite. JSON has no NaN or Infinity (they are written as null), so a
 * non-finite result would reach the user as a null where a number belongs.
 *
 * Inputs are held to physical ranges in `normalise.ts`, which keep every
 * product the engine forms from one item finite; what remains possible is
 * trouble that arises in the solve itself: a train of rigid gear meshes whose
 * ratios multiply past double range, or stiffnesses so far apart that the
 * factorisation divides by round-off. Such a model is refused with
 * SN_ILL_CONDITIONED (422), naming the shaft (segment, support or connection)
 * where the first non-finite number appeared.
 *
 * Cost: one pass over the columns, multiplying each number by zero into one
 * sum (finite · 0 = ±0, NaN and ±∞ · 0 = NaN), with no branch per number;
 * the places are looked up only when that sum is not zero.
 */
import { ModelError, pointer, type ModelIssue } from '../../shared-types/errors.js';
import type { Solved } from './output.js';

/** Throws SN_ILL_CONDITIONED when any number the solution would carry is NaN or ±Infinity. */
export function assertFiniteResults(sv: Solved): void {
  const found = firstNonFinite(sv);
  if (found === null) return;
  const shaft = found.shaft >= 0 ? sv.model.shafts[found.shaft].id : undefined;
  const issue: ModelIssue = {
    code: 'SN_ILL_CONDITIONED',
    pointer: found.pointer,
    message:
      `the solve gave ${String(found.value)} for ${found.what}${shaft === undefined ? '' : ` of shaft "${shaft}"`}: ` +
      'numbers of this model run beyond double precision (sizes, stiffnesses or gear ratios many orders of magnitude apart, ' +
      'or a long train of rigid meshes whose ratios multiply past 1e308); check the units',
    ...(shaft === undefined ? {} : { shafts: [shaft] }),
  };
  throw new ModelError([issue]);
}

/** Where the first non-finite number is: its JSON pointer into the model, the shaft (or −1), what it is, and the value. */
interface NonFinite {
  readonly pointer: string;
  readonly shaft: number;
  readonly what: string;
  readonly value: number;
}

/** 0 when a[from … to) are all finite, NaN otherwise. */
function zeroIfFinite(a: Float64Array, from: number, to: number): number {
  let acc = 0;
  for (let k = from; k < to; k++) acc += a[k] * 0;
  return acc;
}

/** The first index in a[from … to) that is not finite, or −1. */
function firstBad(a: Float64Array, from: number, to: number): number {
  for (let k = from; k < to; k++) if (!Number.isFinite(a[k])) return k;
  return -1;
}

/** The last i with base[i] ≤ k (base ascending): the owner of item k in a prefix-summed numbering. */
function ownerOf(base: Int32Array, count: number, k: number): number {
  let lo = 0;
  let hi = count - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >>> 1;
    if (base[mid] <= k) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

function firstNonFinite(sv: Solved): NonFinite | null {
  const { model, layout, rec } = sv;
  const nShafts = model.shafts.length;
  const dofs = layout.dofCount;
  const elems = dofs - nShafts;
  const nSegments = rec.segBase[nShafts];
  const nLayers = rec.layerBase[nSegments];
  const atShaft = (s: number, what: string, value: number): NonFinite => ({ pointer: pointer('shafts', s), shaft: s, what, value });

  // Station columns: z, rotation; element end torques.
  for (const [a, what] of [
    [layout.z, 'the position of a station'],
    [rec.phi, 'the rotation at a station'],
  ] as const) {
    if (zeroIfFinite(a, 0, dofs) !== 0) {
      const d = firstBad(a, 0, dofs);
      return atShaft(layout.shaftOf[d], `${what} (z = ${layout.z[d]} m)`, a[d]);
    }
  }
  for (const [a, what] of [
    [rec.TL, 'the torque T(z+) at a station'],
    [rec.TR, 'the torque T(z−) at a station'],
  ] as const) {
    if (zeroIfFinite(a, 0, elems) !== 0) {
      const e = firstBad(a, 0, elems);
      return atShaft(layout.shaftOf[layout.elemLeft[e]], what, a[e]);
    }
  }

  // Per segment and per layer: peak torque, where, twist; peak shear.
  for (const [a, what] of [
    [rec.segMaxAbs, 'the peak torque'],
    [rec.segAt, 'the position of the peak torque'],
    [rec.segTwist, 'the twist'],
  ] as const) {
    if (zeroIfFinite(a, 0, nSegments) !== 0) return atSegment(sv, firstBad(a, 0, nSegments), what, a);
  }
  if (zeroIfFinite(rec.layerMaxShear, 0, nLayers) !== 0) {
    const l = firstBad(rec.layerMaxShear, 0, nLayers);
    return atSegment(sv, ownerOf(rec.layerBase, nSegments + 1, l), 'the peak shear stress of a layer', undefined, rec.layerMaxShear[l]);
  }
  // What the writers work out from those: twist rate, utilisation.
  for (let s = 0, g = 0; s < nShafts; s++) {
    for (const seg of model.shafts[s].segments) {
      const rate = rec.segMaxAbs[g] / seg.rigidity;
      if (!Number.isFinite(rate)) return atSegment(sv, g, 'the peak twist rate', undefined, rate);
      for (let j = 0; j < seg.layers.length; j++) {
        const allowable = seg.layers[j].allowableShear;
        if (allowable === null) continue;
        const u = rec.layerMaxShear[rec.layerBase[g] + j] / allowable;
        if (!Number.isFinite(u)) return atSegment(sv, g, 'the utilisation of a layer', undefined, u);
      }
      g++;
    }
  }

  // Per shaft: total twist, equilibrium residual, the diagram.
  for (let s = 0; s < nShafts; s++) {
    if (!Number.isFinite(rec.totalTwist[s])) return atShaft(s, 'the total twist', rec.totalTwist[s]);
    if (!Number.isFinite(rec.residual[s])) return atShaft(s, 'the equilibrium residual', rec.residual[s]);
    const from = rec.diagStart[s];
    const to = from + rec.diagCount[s];
    for (const [a, what] of [
      [rec.dZ, 'a diagram position'],
      [rec.dT, 'a diagram torque'],
      [rec.dPhi, 'a diagram rotation'],
      [rec.dTau, 'a diagram shear stress'],
    ] as const) {
      if (zeroIfFinite(a, from, to) !== 0) return atShaft(s, what, a[firstBad(a, from, to)]);
    }
  }

  // Reactions and connections (objects, one per item of the model).
  for (let i = 0; i < rec.reactions.length; i++) {
    const r = rec.reactions[i];
    for (const [key, v] of [['torque', r.torque], ['rotation', r.rotation]] as const) {
      if (!Number.isFinite(v)) return { pointer: pointer('supports', i), shaft: model.supports[i].shaft, what: `the ${key} of support "${r.support}"`, value: v };
    }
  }
  for (let i = 0; i < rec.gearMeshes.length; i++) {
    const m = rec.gearMeshes[i];
    for (const [key, v] of [['force', m.force], ['torque on gear a', m.torqueA], ['torque on gear b', m.torqueB], ['gap', m.gap], ['radius a', m.radiusA], ['radius b', m.radiusB]] as const) {
      if (!Number.isFinite(v)) return { pointer: pointer('gearMeshes', i), shaft: model.meshes[i].a.shaft, what: `the ${key} of gear mesh "${m.gearMesh}"`, value: v };
    }
  }
  for (let i = 0; i < rec.couplings.length; i++) {
    const c = rec.couplings[i];
    for (const [key, v] of [['torque on end a', c.torqueA], ['torque on end b', c.torqueB], ['twist', c.twist]] as const) {
      if (!Number.isFinite(v)) return { pointer: pointer('couplings', i), shaft: model.couplings[i].a.shaft, what: `the ${key} of coupling "${c.coupling}"`, value: v };
    }
  }

  // The checks listed, and the largest residual.
  const c = rec.checks;
  for (let k = 0; k < c.listed.length; k++) {
    const m = c.listed[k];
    for (const v of [c.value[m], c.limit[m], c.utilisation[m]]) if (!Number.isFinite(v)) return atShaft(c.shaft[m], 'a check', v);
  }
  if (!Number.isFinite(sv.maxResidual)) return { pointer: '', shaft: -1, what: 'the largest equilibrium residual', value: sv.maxResidual };
  return null;
}

/** The place of global segment g (and the value found there, from column `a` or given). */
function atSegment(sv: Solved, g: number, what: string, a?: Float64Array, value?: number): NonFinite {
  const nShafts = sv.model.shafts.length;
  const s = ownerOf(sv.rec.segBase, nShafts + 1, g);
  const k = g - sv.rec.segBase[s];
  return { pointer: pointer('shafts', s, 'segments', k), shaft: s, what: `${what} of segment ${k}`, value: a === undefined ? (value as number) : a[g] };
}
