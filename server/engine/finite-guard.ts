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
 * Cost: one pass over the columns, multiplying each number by zero into four
 * sums (finite · 0 = ±0, NaN and ±∞ · 0 = NaN), with no branch per number
 * (about 0.5 ms per million numbers); the places are looked up only when a
 * sum is not zero. The twist rates and utilisations that the writers work
 * out per segment (peak torque / G·J, peak shear / allowable) are not walked
 * segment by segment, which would chase millions of objects: with the ranges
 * of normalisation, G ≥ 1 kPa and an outer radius ≥ 50 nm give
 * twist rate = τ / (G·r) ≤ 2e4·τ, and an allowable stress ≥ 1 kPa gives
 * utilisation ≤ τ / 1e3, so both are finite while every peak shear τ is at
 * most TAU_WALK_ABOVE; above it (never for a real machine) they are walked.
 */
import { ModelError, pointer, type ModelIssue } from '../../shared-types/errors.js';
import type { Solved } from './output.js';

/** Throws SN_ILL_CONDITIONED when any number the solution would carry is NaN or ±Infinity. */
export function assertFiniteResults(sv: Solved): void {
  const found = firstNonFinite(sv) ?? combinationNonFinite(sv) ?? dynamicsNonFinite(sv) ?? forcedNonFinite(sv);
  if (found === null) return;
  const shaft = found.shaft >= 0 ? sv.model.shafts[found.shaft].id : undefined;
  const issue: ModelIssue = {
    code: 'SN_ILL_CONDITIONED',
    pointer: found.pointer,
    message:
      `the solve gave ${String(found.value)} for ${found.what}${shaft === undefined ? '' : ` of shaft "${shaft}"`}: ` +
      'numbers of this model run beyond the range of double precision (sizes, stiffnesses or gear ratios many orders of magnitude apart, ' +
      'or a long train of rigid meshes whose ratios multiply past 1e308); check the units',
    ...(shaft === undefined ? {} : { shafts: [shaft] }),
  };
  throw new ModelError([issue]);
}

/**
 * With load cases, the numbers of every combination (the shown one's station columns are checked
 * with the single state; the others' went into the envelope, checked here): the first non-finite,
 * at the combination's pointer (its case's, when each case is its own combination).
 */
function combinationNonFinite(sv: Solved): NonFinite | null {
  const cases = sv.cases;
  if (cases === undefined) return null;
  const given = sv.model.combinationsGiven;
  const bad = (x: number) => !Number.isFinite(x);
  for (const [k, c] of cases.combinations.entries()) {
    // Each combination checked its own numbers when it went into the envelope.
    const value = c.finite ? (Number.isFinite(c.maxResidual) ? undefined : c.maxResidual) : Number.NaN;
    if (value !== undefined) return { pointer: given ? pointer('combinations', k) : pointer('loadCases', k), shaft: -1, what: `a result of combination "${c.id}"`, value };
  }
  const e = cases.envelope;
  const { shaftStart } = sv.layout;
  for (let s = 0; s + 1 < shaftStart.length; s++) {
    for (let d = shaftStart[s]; d < shaftStart[s + 1]; d++) {
      const inner = [e.rotationMin[d], e.rotationMax[d]];
      if (d > shaftStart[s]) inner.push(e.leftMin[d], e.leftMax[d]);
      if (d < shaftStart[s + 1] - 1) inner.push(e.rightMin[d], e.rightMax[d]);
      const value = inner.find(bad);
      if (value !== undefined) return { pointer: pointer('shafts', s), shaft: s, what: 'the envelope over the combinations', value };
    }
  }
  return null;
}

/** Where the first non-finite number is: its JSON pointer into the model, the shaft (or −1), what it is, and the value. */
interface NonFinite {
  readonly pointer: string;
  readonly shaft: number;
  readonly what: string;
  readonly value: number;
}

/** Peak shear stress, Pa, up to which twist rates and utilisations are finite by the ranges of normalisation (2e4 × 1e300 < 1.8e308). */
const TAU_WALK_ABOVE = 1e300;

/** 0 when a[from … to) are all finite, NaN otherwise (four sums: no chain of dependent additions). */
function zeroIfFinite(a: Float64Array, from: number, to: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let k = from;
  for (; k + 3 < to; k += 4) {
    s0 += a[k] * 0;
    s1 += a[k + 1] * 0;
    s2 += a[k + 2] * 0;
    s3 += a[k + 3] * 0;
  }
  for (; k < to; k++) s0 += a[k] * 0;
  return s0 + s1 + s2 + s3;
}

/** The largest of a[from … to) (all ≥ 0 when finite); NaN or Infinity when any is not finite. */
function largest(a: Float64Array, from: number, to: number): number {
  let m0 = 0;
  let m1 = 0;
  let k = from;
  for (; k + 1 < to; k += 2) {
    m0 = Math.max(m0, a[k]);
    m1 = Math.max(m1, a[k + 1]);
  }
  if (k < to) m0 = Math.max(m0, a[k]);
  return Math.max(m0, m1);
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
  const tauMax = largest(rec.layerMaxShear, 0, nLayers);
  if (!Number.isFinite(tauMax)) {
    const l = firstBad(rec.layerMaxShear, 0, nLayers);
    return atSegment(sv, ownerOf(rec.layerBase, nSegments + 1, l), 'the peak shear stress of a layer', undefined, rec.layerMaxShear[l]);
  }
  // What the writers work out from those: twist rate, utilisation (finite by the ranges unless τ is huge).
  for (let s = 0, g = 0; s < nShafts && tauMax > TAU_WALK_ABOVE; s++) {
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

  // Per shaft: total twist, equilibrium residual.
  for (const [a, what] of [
    [rec.totalTwist, 'the total twist'],
    [rec.residual, 'the equilibrium residual'],
  ] as const) {
    if (zeroIfFinite(a, 0, nShafts) !== 0) {
      const s = firstBad(a, 0, nShafts);
      return atShaft(s, what, a[s]);
    }
  }
  // The diagrams: all shafts' room in one pass (room a shaft did not fill is zeroed by the arena);
  // only if that finds something, shaft by shaft over the points written.
  const room = rec.diagStart[nShafts];
  const diagrams = [
    [rec.dZ, 'a diagram position'],
    [rec.dT, 'a diagram torque'],
    [rec.dPhi, 'a diagram rotation'],
    [rec.dTau, 'a diagram shear stress'],
  ] as const;
  for (const [a, what] of diagrams) {
    if (zeroIfFinite(a, 0, room) === 0) continue;
    for (let s = 0; s < nShafts; s++) {
      const from = rec.diagStart[s];
      const k = firstBad(a, from, from + rec.diagCount[s]);
      if (k >= 0) return atShaft(s, what, a[k]);
    }
  }

  // Reactions and connections (objects, one per item of the model): each summed as above, named only on failure.
  for (let i = 0; i < rec.reactions.length; i++) {
    const r = rec.reactions[i];
    if (r.torque * 0 + r.rotation * 0 === 0) continue;
    const [key, v] = Number.isFinite(r.torque) ? ['rotation', r.rotation] : ['torque', r.torque];
    return { pointer: pointer('supports', i), shaft: model.supports[i].shaft, what: `the ${key} of support "${r.support}"`, value: v };
  }
  for (let i = 0; i < rec.gearMeshes.length; i++) {
    const m = rec.gearMeshes[i];
    if (m.force * 0 + m.torqueA * 0 + m.torqueB * 0 + m.gap * 0 + m.radiusA * 0 + m.radiusB * 0 === 0) continue;
    const values: Array<[string, number]> = [['force', m.force], ['torque on gear a', m.torqueA], ['torque on gear b', m.torqueB], ['gap', m.gap], ['radius a', m.radiusA], ['radius b', m.radiusB]];
    const [key, v] = values.find(([, x]) => !Number.isFinite(x)) as [string, number];
    return { pointer: pointer('gearMeshes', i), shaft: model.meshes[i].a.shaft, what: `the ${key} of gear mesh "${m.gearMesh}"`, value: v };
  }
  for (let i = 0; i < rec.couplings.length; i++) {
    const c = rec.couplings[i];
    if (c.torqueA * 0 + c.torqueB * 0 + c.twist * 0 === 0) continue;
    const values: Array<[string, number]> = [['torque on end a', c.torqueA], ['torque on end b', c.torqueB], ['twist', c.twist]];
    const [key, v] = values.find(([, x]) => !Number.isFinite(x)) as [string, number];
    return { pointer: pointer('couplings', i), shaft: model.couplings[i].a.shaft, what: `the ${key} of coupling "${c.coupling}"`, value: v };
  }

  // The checks listed, and the largest residual.
  const c = rec.checks;
  for (let k = 0; k < c.listed.length; k++) {
    const m = c.listed[k];
    if (c.value[m] * 0 + c.limit[m] * 0 + c.utilisation[m] * 0 === 0) continue;
    const v = [c.value[m], c.limit[m], c.utilisation[m]].find((x) => !Number.isFinite(x)) as number;
    return atShaft(c.shaft[m], 'a check', v);
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

/** With dynamics: the first non-finite number of a mode (frequency, shape, energy share) or a crossing speed. */
function dynamicsNonFinite(sv: Solved): NonFinite | null {
  const d = sv.dynamics;
  if (d === undefined) return null;
  const at = (what: string, value: number): NonFinite => ({ pointer: '/dynamics', shaft: -1, what, value });
  for (const [k, m] of d.modes.entries()) {
    const what = `mode ${k + 1}`;
    if (!Number.isFinite(m.angularFrequency)) return at(`the frequency of ${what}`, m.angularFrequency);
    for (const sh of m.shafts) {
      for (const a of [sh.rotation, sh.shape]) {
        if (zeroIfFinite(a, 0, a.length) !== 0) return { pointer: '/dynamics', shaft: sv.model.shafts.findIndex((s) => s.id === sh.id), what: `the shape of ${what}`, value: a[firstBad(a, 0, a.length)] };
      }
    }
    for (const a of [m.strain ?? new Float64Array(0), m.kinetic]) {
      if (zeroIfFinite(a, 0, a.length) !== 0) return at(`an energy share of ${what}`, a[firstBad(a, 0, a.length)]);
    }
  }
  for (const c of d.crossings) if (!Number.isFinite(c.speed)) return at(`the crossing speed of mode ${c.mode}, order ${c.order}`, c.speed);
  return null;
}

/**
 * With a forced response: the first non-finite torque or shear amplitude, peak or check value
 * (a check's static part is NaN on purpose where the statics were not solved: not read).
 */
function forcedNonFinite(sv: Solved): NonFinite | null {
  const f = sv.forced;
  if (f === undefined) return null;
  const at = (what: string, a: Float64Array): NonFinite => ({ pointer: '/dynamics/excitations', shaft: -1, what, value: a[firstBad(a, 0, a.length)] });
  const columns: Array<[string, Float64Array]> = [
    ['the forced response\'s vibratory torque', f.torque],
    ['the forced response\'s vibratory shear', f.shear],
    ['a forced-response peak torque', f.peakTorque],
    ['a forced-response peak speed', f.peakSpeed],
    ['a forced-response peak shear', f.peakShear],
    ['a forced-response peak shear speed', f.peakShearSpeed],
    ['a vibratory check value', f.checks.value],
  ];
  for (const [what, a] of columns) if (zeroIfFinite(a, 0, a.length) !== 0) return at(what, a);
  return null;
}
