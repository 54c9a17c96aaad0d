/**
 * Runs the forced response of a model without `dynamics` in its input (the model schema takes it
 * only after the merge): the model is normalised as it is and the resolved dynamics given beside
 * it; excitations must sit at points that are already stations. Results are copied out of the
 * workspace session.
 */
import { normaliseModel } from '../../server/engine/normalise.js';
import { buildStations } from '../../server/engine/stations.js';
import { Workspace } from '../../server/engine/workspace.js';
import { forcedResponse, type ForcedOptions } from '../../server/engine/dynamics/forced.js';
import type { SegmentInertia } from '../../server/engine/dynamics/forced-assembly.js';
import type { ResolvedModel } from '../../server/engine/normalise.js';
import type { ResolvedDynamics, ResolvedExcitation } from '../../server/engine/dynamics/types.js';

export interface ForcedRun {
  speeds: number[];
  segments: number;
  curves: number;
  /** torque[c][g][i], shear[c][g][i] */
  torque: number[][][];
  shear: number[][][];
  peakTorque: number[][];
  peakSpeed: number[][];
  peakShear: number[][];
  layerPeakShear: number[];
  checks: Array<{ shaft: number; segment: number; layer: number; vibratory: number; static: number; value: number; limit: number; speed: number }>;
  solves: number;
}

/** A resolved dynamics object with the defaults the tests do not vary. */
export function dynamicsOf(speed: { shaft: number; min: number; max: number }, damping: number, excitations: ResolvedExcitation[]): ResolvedDynamics {
  return { modes: 6, maxFrequency: null, speed, orders: [...new Set(excitations.map((e) => e.order))], margin: 0.1, damping, excitations };
}

export function runForced(
  model: unknown,
  dynamics: ResolvedDynamics,
  density: Record<string, number>,
  options: ForcedOptions & { staticShear?: (layers: number) => Float64Array } = {},
): ForcedRun {
  const resolved = normaliseModel(model);
  const ws = new Workspace();
  return ws.session(() => {
    const layout = buildStations(resolved, ws);
    const inertia = inertiaFromDensity(resolved, (id) => density[id] ?? null);
    let layers = 0;
    for (const sh of resolved.shafts) for (const sg of sh.segments) layers += sg.layers.length;
    const fr = forcedResponse({ model: resolved, layout, dynamics, inertia, staticShear: options.staticShear ? options.staticShear(layers) : null }, ws, options);
    if (fr === null) throw new Error('no forced response');
    const nS = fr.speeds.length;
    const series = (cols: Float64Array) =>
      Array.from({ length: fr.curves }, (_, c) => Array.from({ length: fr.segments }, (_, g) => Array.from(cols.subarray((c * fr.segments + g) * nS, (c * fr.segments + g + 1) * nS))));
    const perCurve = (cols: Float64Array) => Array.from({ length: fr.curves }, (_, c) => Array.from(cols.subarray(c * fr.segments, (c + 1) * fr.segments)));
    const checks = Array.from({ length: fr.checks.count }, (_, k) => ({
      shaft: fr.checks.shaft[k],
      segment: fr.checks.segment[k],
      layer: fr.checks.layer[k],
      vibratory: fr.checks.vibratory[k],
      static: fr.checks.static[k],
      value: fr.checks.value[k],
      limit: fr.checks.limit[k],
      speed: fr.checks.speed[k],
    }));
    return {
      speeds: Array.from(fr.speeds),
      segments: fr.segments,
      curves: fr.curves,
      torque: series(fr.torque),
      shear: series(fr.shear),
      peakTorque: perCurve(fr.peakTorque),
      peakSpeed: perCurve(fr.peakSpeed),
      peakShear: perCurve(fr.peakShear),
      layerPeakShear: Array.from(fr.layerPeakShear),
      checks,
      solves: fr.solves,
    };
  });
}

/**
 * Segment inertias from a density given per material here (kg/m³, null: massless), for models
 * whose materials carry none (the engine reads ρ·Ip as normalise resolved it, forced-assembly.ts
 * segmentInertia). Round layers: ρ·J of the ring; a non-circular shape: ρ·its polarMoment; a
 * taper: ρ of its material.
 */
export function inertiaFromDensity(model: ResolvedModel, densityOf: (materialId: string) => number | null): SegmentInertia {
  let n = 0;
  for (const sh of model.shafts) n += sh.segments.length;
  const perLength = new Float64Array(n);
  const taperDensity = new Float64Array(n);
  let g = 0;
  for (const sh of model.shafts) {
    for (const sg of sh.segments) {
      if (sg.taper) taperDensity[g] = densityOf(sg.layers[0].materialId) ?? 0;
      else if (sg.shape) perLength[g] = (densityOf(sg.layers[0].materialId) ?? 0) * (sg.shape.polarMoment ?? 0);
      else for (const l of sg.layers) perLength[g] += (densityOf(l.materialId) ?? 0) * l.J;
      g++;
    }
  }
  return { perLength, taperDensity };
}
