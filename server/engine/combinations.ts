/**
 * Load cases and combinations: the loads of one combination (each case's
 * loads times its factor), and the envelope over the combinations solved.
 *
 * A combination is solved with the one factorisation of the model (the
 * pipeline's): its own load vector and right-hand side, the assembled state
 * (prescribed rotations, misfits, offsets) held unfactored. Every result is
 * then recovered from that combination's rotations, so peaks and utilisations,
 * which are not linear in the loads, are exact for it.
 */
import { ModelError } from '../../shared-types/errors.js';
import type { ResolvedCombination, ResolvedModel } from './normalise.js';
import type { Recovered } from './recover.js';
import { distributedIntensities, type StationLayout } from './stations.js';
import type { Workspace } from './workspace.js';

/** One combination solved: its results in columns (station columns of all but the shown one given back). */
export interface CombinationSolved {
  readonly id: string;
  readonly name?: string;
  readonly rec: Recovered;
  readonly maxResidual: number;
}

/** Extremes over the combinations, with the index of the combination that governs each. */
export interface Envelope {
  /** Per dof: rotation, T(z−) (of the element to the left) and T(z+) (to the right); NaN where a side does not exist. */
  readonly rotationMin: Float64Array;
  readonly rotationMax: Float64Array;
  readonly leftMin: Float64Array;
  readonly leftMax: Float64Array;
  readonly rightMin: Float64Array;
  readonly rightMax: Float64Array;
  /** Per global segment: the largest |T| and its combination. */
  readonly segMaxAbs: Float64Array;
  readonly segCombination: Int32Array;
  /** Per global layer: the largest |τ| and its combination. */
  readonly layerMaxShear: Float64Array;
  readonly layerCombination: Int32Array;
  /** Per support: the extreme reactions and their combinations. */
  readonly reactionMin: Float64Array;
  readonly reactionMax: Float64Array;
  readonly reactionMinAt: Int32Array;
  readonly reactionMaxAt: Int32Array;
}

/** The index of the combination to show: the one named, else the first; an unknown id is refused. */
export function shownCombination(model: ResolvedModel, id: string | undefined): number {
  if (model.loadCases.length === 0 || id === undefined) return 0;
  const k = model.combinations.findIndex((c) => c.id === id);
  if (k < 0) {
    const known = model.combinations.map((c) => `"${c.id}"`).join(', ');
    throw new ModelError([{ code: 'SN_UNRESOLVED', pointer: '', message: `no combination "${id}" in the model (it has ${known})` }]);
  }
  return k;
}

/** The model with one combination's loads: each load times its case's factor (the list and order kept, so stations agree). */
export function combinedModel(model: ResolvedModel, c: ResolvedCombination): ResolvedModel {
  const f = c.factors;
  return {
    ...model,
    torques: model.torques.map((t) => ({ ...t, torque: f[t.caseIndex] * t.torque })),
    distributed: model.distributed.map((d) => ({ ...d, start: f[d.caseIndex] * d.start, end: f[d.caseIndex] * d.end })),
  };
}

/** The station layout with the distributed intensities of `combined` (stations and elements shared). */
export function combinedLayout(combined: ResolvedModel, layout: StationLayout, ws: Workspace): StationLayout {
  const t = distributedIntensities(combined, layout.z, layout.elemLeft.length, layout.stationAt, ws);
  return { ...layout, elemT1: t.elemT1, elemT2: t.elemT2 };
}

/** An empty envelope for a model of `dofs` stations, `segments` segments, `layers` layers and `supports` supports. */
export function emptyEnvelope(dofs: number, segments: number, layers: number, supports: number): Envelope {
  const f = (n: number, v: number) => new Float64Array(n).fill(v);
  return {
    rotationMin: f(dofs, Infinity),
    rotationMax: f(dofs, -Infinity),
    leftMin: f(dofs, Infinity),
    leftMax: f(dofs, -Infinity),
    rightMin: f(dofs, Infinity),
    rightMax: f(dofs, -Infinity),
    segMaxAbs: f(segments, -Infinity),
    segCombination: new Int32Array(segments),
    layerMaxShear: f(layers, -Infinity),
    layerCombination: new Int32Array(layers),
    reactionMin: f(supports, Infinity),
    reactionMax: f(supports, -Infinity),
    reactionMinAt: new Int32Array(supports),
    reactionMaxAt: new Int32Array(supports),
  };
}

/** Takes combination `k`'s results into the envelope (the first combination wins ties). */
export function addToEnvelope(env: Envelope, layout: StationLayout, r: Recovered, k: number): void {
  const { shaftStart } = layout;
  const { phi, TL, TR } = r;
  for (let s = 0; s + 1 < shaftStart.length; s++) {
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    for (let d = first; d <= last; d++) {
      env.rotationMin[d] = Math.min(env.rotationMin[d], phi[d]);
      env.rotationMax[d] = Math.max(env.rotationMax[d], phi[d]);
      if (d > first) {
        const t = TR[d - 1 - s];
        env.leftMin[d] = Math.min(env.leftMin[d], t);
        env.leftMax[d] = Math.max(env.leftMax[d], t);
      }
      if (d < last) {
        const t = TL[d - s];
        env.rightMin[d] = Math.min(env.rightMin[d], t);
        env.rightMax[d] = Math.max(env.rightMax[d], t);
      }
    }
  }
  for (let g = 0; g < env.segMaxAbs.length; g++) {
    if (r.segMaxAbs[g] > env.segMaxAbs[g]) {
      env.segMaxAbs[g] = r.segMaxAbs[g];
      env.segCombination[g] = k;
    }
  }
  for (let l = 0; l < env.layerMaxShear.length; l++) {
    if (r.layerMaxShear[l] > env.layerMaxShear[l]) {
      env.layerMaxShear[l] = r.layerMaxShear[l];
      env.layerCombination[l] = k;
    }
  }
  r.reactions.forEach((x, n) => {
    if (x.torque < env.reactionMin[n]) {
      env.reactionMin[n] = x.torque;
      env.reactionMinAt[n] = k;
    }
    if (x.torque > env.reactionMax[n]) {
      env.reactionMax[n] = x.torque;
      env.reactionMaxAt[n] = k;
    }
  });
}
