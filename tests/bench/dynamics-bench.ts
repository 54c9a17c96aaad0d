/**
 * Natural-frequency benchmark (a benchmark, never a timed test):
 * 1. the lowest 20 frequencies of a geared tree of 100 shafts × 100 segments (about 1e4 stations)
 *    with the shafts' own inertia (goal: under 1 s here);
 * 2. the lowest 10 of a 1e5-segment stepped chain, beside SciPy's sparse shift-invert Lanczos on the
 *    same stations as linear finite elements with consistent mass (../shared/bench/scipy_modes.py:
 *    an approximation of what the engine computes exactly; its time is the anchor, not its values).
 * Both models come from ../shared/bench/scale_models.py, given a density and a `dynamics` here.
 * Prints the machine-speed calibration line first (this machine's speed drifts).
 * Usage: npm run bench:dynamics  (SHAFTNET_BENCH_DIR: the folder of the anchor scripts)
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { normaliseModel, solveResolved } from '../../server/engine/index.js';
import { calibrationLine } from './calibrate.js';
import { anchorsDir } from './anchors.js';

const anchors = anchorsDir();
const RUNS = 3;

function generate(args: string[]): Record<string, unknown> {
  const gen = spawnSync('python3', [path.join(anchors, 'scale_models.py'), ...args], { maxBuffer: 1 << 30 });
  if (gen.status !== 0) throw new Error(`scale_models.py failed: ${String(gen.stderr)}`);
  return JSON.parse(String(gen.stdout)) as Record<string, unknown>;
}

/** The model with inertia (steel, 7850 kg/m³) and dynamics asking `modes`. */
function withDynamics(model: Record<string, unknown>, modes: number): Record<string, unknown> {
  const materials = (model.materials as Array<Record<string, unknown>>).map((m) => ({ ...m, density: 7850 }));
  return { ...model, materials, dynamics: { modes } };
}

/** CPU time of this process so far, ms (user + system): the machine is shared, so wall time overstates. */
function cpuMs(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
}

/**
 * Best of RUNS: the dynamics phase (wall and CPU time; the phase starts after the stations, so it
 * holds the elastic parts and the reduction too) and the whole solve (parsing and units excluded), ms.
 */
function timeEngine(model: Record<string, unknown>): { dynamics: number; dynamicsCpu: number; total: number; frequencies: number[]; stations: number } {
  const resolved = normaliseModel(model);
  let best = { dynamics: Infinity, dynamicsCpu: Infinity, total: Infinity, frequencies: [] as number[], stations: 0 };
  for (let r = 0; r < RUNS; r++) {
    let dyn = 0;
    let dynCpu = 0;
    let lastCpu = cpuMs();
    const t0 = performance.now();
    const sol = solveResolved(resolved, {
      diagramPoints: 0,
      onPhase: (p, ms) => {
        const now = cpuMs();
        if (p === 'dynamics') {
          dyn = ms;
          dynCpu = now - lastCpu;
        }
        lastCpu = now;
      },
    });
    const total = performance.now() - t0;
    if (dyn < best.dynamics) best = { dynamics: dyn, dynamicsCpu: dynCpu, total, frequencies: (sol.modes ?? []).map((m) => m.frequency), stations: sol.stats.stations };
  }
  return best;
}

console.log(calibrationLine());

const tree = withDynamics(generate(['tree', '100', '100']), 20);
const t = timeEngine(tree);
console.log(`tree 100 x 100 (${t.stations} stations), lowest 20 frequencies: dynamics ${t.dynamics.toFixed(0)} ms (CPU ${t.dynamicsCpu.toFixed(0)} ms), whole solve ${t.total.toFixed(0)} ms (goal: dynamics under 1000 ms)`);
console.log(`  f1 … f20 = ${t.frequencies[0].toPrecision(6)} … ${t.frequencies[19].toPrecision(6)} Hz`);

const chain = withDynamics(generate(['chain', '100000']), 10);
const c = timeEngine(chain);
console.log(`chain 1e5 segments (${c.stations} stations), lowest 10 frequencies: dynamics ${c.dynamics.toFixed(0)} ms (CPU ${c.dynamicsCpu.toFixed(0)} ms), whole solve ${c.total.toFixed(0)} ms`);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-dyn-bench-'));
try {
  const file = path.join(dir, 'chain.json');
  fs.writeFileSync(file, JSON.stringify(chain));
  const times: number[] = [];
  let freqs: number[] = [];
  for (let r = 0; r < RUNS; r++) {
    const t0 = performance.now();
    const py = spawnSync('python3', [path.join(anchors, 'scipy_modes.py'), file, '10'], { maxBuffer: 1 << 28 });
    const wall = performance.now() - t0;
    if (py.status !== 0) throw new Error(`scipy_modes.py failed: ${String(py.stderr)}`);
    const out = JSON.parse(String(py.stdout)) as { frequencies: number[]; seconds: number };
    times.push(Math.min(wall, 1000 * out.seconds));
    freqs = out.frequencies;
  }
  const best = Math.min(...times);
  console.log(`  SciPy shift-invert (linear elements, consistent mass): ${best.toFixed(0)} ms in-script (read, assemble, eigsh); ratio engine dynamics / SciPy = ${(c.dynamics / best).toFixed(2)}`);
  const worst = c.frequencies.reduce((m, f, k) => Math.max(m, Math.abs(freqs[k] - f) / f), 0);
  console.log(`  largest relative difference of SciPy's approximation from the exact frequencies: ${worst.toExponential(2)}`);
} finally {
  fs.rmSync(dir, { recursive: true, force: true });
}
