/**
 * Forced-response benchmark: a sweep of 400 reference speeds (with every local peak of every
 * segment's curves refined to 1e-9 in speed) on a geared drivetrain of about 1e3 stations with
 * distributed inertia, discs, compliant meshes and two excitations of different orders.
 * Reported: the sweep alone (grid), and the whole forced response (grid + peak refinement),
 * with the complex solves made, best of three runs (or as many as the second argument says),
 * beside the machine-speed calibration. The first argument sets the segments per shaft (333).
 *
 *   npm run bench:forced
 *
 * The model is synthetic and invented for timing only.
 */
import { normaliseModel } from '../../server/engine/normalise.js';
import { buildStations } from '../../server/engine/stations.js';
import { Workspace } from '../../server/engine/workspace.js';
import { forcedResponse, type ForcedOptions } from '../../server/engine/dynamics/forced.js';
import { inertiaFromDensity } from '../engine/forced-helpers.js';
import type { ResolvedDynamics } from '../../server/engine/dynamics/types.js';
import { calibrationLine } from './calibrate.js';

/** Three shafts of `per` segments each, joined by two compliant meshes, discs every 25 segments, a spring support at the load. */
export function drivetrainModel(per: number): Record<string, unknown> {
  const h = 0.004;
  const shaft = (id: string) => ({ id, segments: Array.from({ length: per }, (_, k) => ({ length: h, section: k % 3 ? 'a' : 'b', material: 'steel' })) });
  const L = per * h;
  const discs = [];
  for (const s of ['in', 'mid', 'out']) for (let k = 25; k < per; k += 25) discs.push({ id: `${s}${k}`, shaft: s, at: k * h, inertia: 0.002 * (1 + (k % 4)) });
  return {
    format: 'shaftnet/1',
    name: `Forced-response benchmark drivetrain (invented), ${3 * (per + 1)} stations`,
    materials: [{ id: 'steel', G: 79.3e9, allowableShear: 55e6 }],
    sections: [
      { id: 'a', shape: 'solid', d: 0.04 },
      { id: 'b', shape: 'hollow', d: 0.05, di: 0.03 },
    ],
    shafts: [shaft('in'), shaft('mid'), shaft('out')],
    gearMeshes: [
      { id: 'G1', a: { shaft: 'in', at: L, radius: 0.03 }, b: { shaft: 'mid', at: 0, radius: 0.075 }, sense: 'opposite', stiffness: 4e8 },
      { id: 'G2', a: { shaft: 'mid', at: L, radius: 0.04 }, b: { shaft: 'out', at: 0, radius: 0.1 }, sense: 'opposite', stiffness: 6e8 },
    ],
    supports: [{ id: 'K', shaft: 'out', at: L, kind: 'spring', stiffness: 2e4 }],
    discs: [{ id: 'rotor', shaft: 'in', at: 0, inertia: 0.05 }, { id: 'load', shaft: 'out', at: L, inertia: 2 }, ...discs],
    torques: [{ id: 'mark', shaft: 'mid', at: L / 2, torque: 0 }],
  };
}

function run(per: number, options: ForcedOptions, repeats = 3): { ms: number; solves: number; stations: number } {
  const resolved = normaliseModel(drivetrainModel(per));
  const dynamics: ResolvedDynamics = {
    modes: 6,
    maxFrequency: null,
    speed: { shaft: 0, min: 50, max: 600 },
    orders: [1, 4],
    margin: 0.1,
    damping: 0.02,
    excitations: [
      { id: 'motor', shaft: 0, z: 0, amplitude: 40, order: 1 },
      { id: 'mesh', shaft: 1, z: (per * 0.004) / 2, amplitude: 8, order: 4 },
    ],
  };
  const ws = new Workspace();
  let best = Infinity;
  let solves = 0;
  let stations = 0;
  for (let r = 0; r < repeats; r++) {
    ws.session(() => {
      const t0 = performance.now();
      const layout = buildStations(resolved, ws);
      const fr = forcedResponse({ model: resolved, layout, dynamics, inertia: inertiaFromDensity(resolved, () => 7850), staticShear: null }, ws, options);
      best = Math.min(best, performance.now() - t0);
      solves = fr!.solves;
      stations = layout.dofCount;
    });
  }
  return { ms: best, solves, stations };
}

console.log(calibrationLine());
const per = Number(process.argv[2] ?? 333);
const repeats = Number(process.argv[3] ?? 3);
const grid = run(per, { refine: false }, repeats);
console.log(`${grid.stations} stations, 400 speeds, 2 orders: sweep alone ${grid.ms.toFixed(0)} ms (${grid.solves} complex solves)`);
for (const tol of [1e-6, 1e-9]) {
  const all = run(per, { peakTolerance: tol }, repeats);
  console.log(`${all.stations} stations, 400 speeds, 2 orders: sweep + every local peak refined to ${tol} in speed ${all.ms.toFixed(0)} ms (${all.solves} complex solves)`);
}
