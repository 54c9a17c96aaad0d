/**
 * Models large enough that the engine's work arrays come from the workspace's
 * slab (arrays over 256 KiB, some 32,000 stations) and are given back and
 * reused within the solve (a stage's scratch, results no later stage reads). Small models never reach that path,
 * so it is checked here against closed forms, and against itself across
 * solves that reuse the kept memory.
 *
 * Closed form: a uniform bar fixed at both ends, length L, with point torques
 * T_i at a_i: T_A = −Σ T_i·(L − a_i)/L, T_B = −Σ T_i·a_i/L, and the rotation
 * is the sum over the torques of φ_i(z) = T_i·(L − a_i)·z/(L·G·J) for z ≤ a_i
 * and T_i·a_i·(L − z)/(L·G·J) for z ≥ a_i
 * (Gere & Goodno, Mechanics of Materials, §3.8, statically indeterminate torsional members; from memory).
 * Tolerances are round-off allowances for a chain of 60,000 elements, common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { normaliseModel, solveModel, solveModelJson, withSolved, Workspace } from '../../server/engine/index.js';
import { LARGE_BYTES_PER_STATION, stationEstimate } from '../../server/engine/pipeline.js';

const N = 60_000; // segments
const H = 2 ** -14; // m per segment: segment ends are exact in binary
const L = N * H; // m
const G = 79.3e9; // Pa
const D = 0.04; // m
const J = (Math.PI * D ** 4) / 32; // m⁴

/** The torques: every 97th station, sizes from a fixed pattern (N·m). */
function loads(): Array<{ at: number; torque: number }> {
  const out = [];
  for (let k = 13; k < N; k += 97) out.push({ at: k * H, torque: ((k * 7919) % 41) - 20 });
  return out;
}

function barModel(): Record<string, unknown> {
  return {
    format: 'shaftnet/1',
    name: 'Long fixed-fixed bar with many torques (invented)',
    materials: [{ id: 'steel', G, allowableShear: 60e6 }],
    sections: [{ id: 'd', shape: 'solid', d: D }],
    shafts: [{ id: 'bar', segments: Array.from({ length: N }, () => ({ length: H, section: 'd', material: 'steel' })) }],
    supports: [
      { id: 'A', shaft: 'bar', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 'bar', at: L, kind: 'fixed' },
    ],
    torques: loads().map((t, i) => ({ id: `t${i}`, shaft: 'bar', ...t })),
  };
}

describe('large models (work arrays from the slab, released and reused)', () => {
  it('a 60,001-station fixed-fixed bar matches the closed form in reactions, rotations and torques', () => {
    const sol = solveModel(barModel());
    expect(sol.stats.stations).toBe(N + 1);
    const ts = loads();
    const TA = -ts.reduce((s, t) => s + (t.torque * (L - t.at)) / L, 0);
    const TB = -ts.reduce((s, t) => s + (t.torque * t.at) / L, 0);
    const scale = ts.reduce((s, t) => s + Math.abs(t.torque), 0);
    const [A, B] = sol.reactions;
    expect(Math.abs(A.torque - TA)).toBeLessThan(1e-9 * scale);
    expect(Math.abs(B.torque - TB)).toBeLessThan(1e-9 * scale);
    // Rotations at every 1000th station, by superposition.
    const stations = sol.shafts[0].stations;
    let worst = 0;
    let phiScale = 0;
    for (let k = 0; k <= N; k += 1000) {
      const z = k * H;
      let phi = 0;
      for (const t of ts) phi += t.at >= z ? (t.torque * (L - t.at) * z) / (L * G * J) : (t.torque * t.at * (L - z)) / (L * G * J);
      phiScale = Math.max(phiScale, Math.abs(phi));
      worst = Math.max(worst, Math.abs(stations[k].rotation - phi));
      expect(stations[k].z).toBe(z);
    }
    expect(worst).toBeLessThan(1e-9 * phiScale);
    // Internal torque just right of A is −T_A; it falls by each T_i passed (dT/dz + t = 0 with point loads).
    expect(Math.abs((stations[0].torqueRight ?? NaN) + A.torque)).toBeLessThan(1e-9 * scale);
    let T = -A.torque;
    const byStation = new Map(ts.map((t) => [Math.round(t.at / H), t.torque]));
    let torqueWorst = 0;
    for (let k = 1; k < N; k++) {
      torqueWorst = Math.max(torqueWorst, Math.abs((stations[k].torqueLeft ?? NaN) - T));
      T -= byStation.get(k) ?? 0;
      torqueWorst = Math.max(torqueWorst, Math.abs((stations[k].torqueRight ?? NaN) - T));
    }
    expect(torqueWorst).toBeLessThan(1e-9 * scale);
    expect(sol.equilibrium.maxResidual).toBeLessThan(1e-9 * scale);
  });

  it('the same answer, byte for byte, with fresh memory, with kept memory, and after other large solves', () => {
    const workspace = new Workspace();
    const text = () => {
      let t = '';
      solveModelJson(barModel(), (piece) => (t += piece), { workspace });
      return t;
    };
    const fresh = text();
    expect(workspace.keptBytes()).toBeGreaterThan(1 << 20); // the slab was kept for the next solve
    const kept = text();
    // Another large model in between leaves other values in the kept memory.
    const other = barModel() as { torques: Array<{ torque: number }> };
    for (const t of other.torques) t.torque = -3 * t.torque + 1;
    solveModel(other, { workspace });
    const again = text();
    expect(kept).toBe(fresh);
    expect(again).toBe(fresh);
    expect(JSON.stringify(solveModel(barModel()))).toBe(fresh);
  });

  it('the slab reserved up front holds the whole solve: scratch and dead results are given back and reused', () => {
    const workspace = new Workspace();
    const resolved = normaliseModel(barModel());
    const reserved = LARGE_BYTES_PER_STATION * stationEstimate(resolved);
    let used = 0;
    let stations = 0;
    withSolved(resolved, { workspace }, (solved) => {
      used = workspace.largeBytesUsed();
      stations = solved.stats.stations;
    });
    expect(used).toBeGreaterThan(0);
    // Measured on this model: 152 bytes per station of large arrays, 344 when nothing is given back
    // (node 20); the bound sits between (common practice, no source).
    expect(used).toBeLessThanOrEqual(200 * stations);
    // Not outgrown: the slab kept is the one reserved (rounded up to its alignment), never a doubled one.
    expect(used).toBeLessThanOrEqual(reserved);
    expect(workspace.keptBytes()).toBeLessThan(reserved + 64);
  });
});
