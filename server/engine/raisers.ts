/**
 * Stress raisers after the solve: the nominal peak shear at the raiser's station on the side
 * (or sides) it reads, and the local peak K·τ_nominal beside it. Nominal results are unchanged.
 */
import type { ResolvedModel } from './normalise.js';
import type { StationLayout } from './stations.js';
import type { ElementTorques } from './recover.js';
import { stationShearFactor } from './taper-element.js';

/** One row per raiser of the model, in its order. */
export interface RaiserColumns {
  /** |τ| nominal at the raiser (the largest of the sides read), Pa. */
  readonly nominal: Float64Array;
  /** factor · nominal, Pa. */
  readonly peak: Float64Array;
  /** Segment (within the shaft) of the side that governs: its outer layer's material is checked. */
  readonly segment: Int32Array;
}

/** The nominal and local peak of every stress raiser. */
export function recoverRaisers(model: ResolvedModel, layout: StationLayout, ends: ElementTorques): RaiserColumns {
  const n = model.raisers.length;
  const nominal = new Float64Array(n);
  const peak = new Float64Array(n);
  const segment = new Int32Array(n);
  model.raisers.forEach((r, i) => {
    const shaft = model.shafts[r.shaft];
    const d = layout.stationAt(r.shaft, r.z);
    for (const side of r.sides) {
      const e = side.left ? d - 1 - r.shaft : d - r.shaft;
      const T = side.left ? ends.TR[e] : ends.TL[e];
      const seg = shaft.segments[side.segment];
      // τ = T·r(z)/J(z) at the raiser's place (along a taper too).
      const tau = Math.abs(T) * stationShearFactor(seg, r.z);
      if (side === r.sides[0] || tau > nominal[i]) {
        nominal[i] = tau;
        segment[i] = side.segment;
      }
    }
    peak[i] = r.factor * nominal[i];
  });
  return { nominal, peak, segment };
}
