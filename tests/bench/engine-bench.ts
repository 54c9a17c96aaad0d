/**
 * Engine benchmark: ns per station for chains and gear trees of 1e3 … 1e6
 * stations (assembly + solve + recovery of every result; normalising the
 * JSON and writing the answer's JSON text are reported apart), and the
 * sparse/dense speed ratio at 2,000 stations.
 *
 *   npm run bench:engine            all sizes
 *   npm run bench:engine -- --quick up to 1e5
 *   npm run bench:engine -- --combinations   ten load cases and 1,000 combinations on a
 *                                             1e4-station gear tree, against one plain solve
 *   npm run bench:engine -- --progress       the cost of progress reports and abort checks on a
 *                                             50- and a 1e6-station solve written as JSON (none,
 *                                             a listener that does nothing, the worker's throttled
 *                                             one), and how fast a cancelled worker is free again
 *                                             (abort flag against terminate + respawn)
 *
 * The models are synthetic and invented for timing only.
 */
import { normaliseModel, solveResolved, withSolved, Workspace } from '../../server/engine/index.js';
import { writeSolutionJson } from '../../server/engine/output.js';
import { columnWeights, emptyEnvelope } from '../../server/engine/combinations.js';
import { checkpoint, throttled, writingSink, type SolveProgress } from '../../server/engine/progress.js';
import { SolverPool } from '../../server/http/solver-pool.js';
import { calibrationLine } from './calibrate.js';

type Json = Record<string, unknown>;

const materials = [{ id: 'steel', G: 79.3e9, allowableShear: 55e6 }];
const sections = [
  { id: 'a', shape: 'solid', d: 0.04 },
  { id: 'b', shape: 'hollow', d: 0.05, di: 0.03 },
];

/** One shaft of n stations, fixed at both ends, a torque at every tenth station. */
export function chainModel(stations: number): Json {
  const segs = stations - 1;
  const h = 0.01;
  const segments = Array.from({ length: segs }, (_, k) => ({ length: h, section: k % 2 ? 'a' : 'b', material: 'steel' }));
  const torques = [];
  for (let k = 5; k < segs; k += 10) torques.push({ id: `t${k}`, shaft: 's', at: k * h, torque: (k % 7) - 3 });
  return {
    format: 'shaftnet/1',
    name: `Benchmark chain (invented), ${stations} stations`,
    materials,
    sections,
    shafts: [{ id: 's', segments }],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: segs * h, kind: 'fixed' },
    ],
    torques,
    distributedTorques: [{ id: 'd', shaft: 's', from: 0, to: segs * h, start: -5, end: 5 }],
  };
}

/**
 * The chain of `chainModel` with every segment tapered (solid 40 → 36 mm and back, hollow
 * 50/30 → 46/28 mm and back), so each element is a taper with its exact stiffness, consistent
 * loads of the distributed torque and exact peak stress.
 */
export function taperedChainModel(stations: number): Json {
  const m = chainModel(stations);
  const segs = m.shafts as Array<{ segments: Array<Record<string, unknown>> }>;
  segs[0].segments.forEach((seg, k) => {
    const solid = seg.section === 'a';
    const flip = k % 4 < 2;
    seg.section = solid ? (flip ? 'a' : 'a2') : flip ? 'b' : 'b2';
    seg.sectionEnd = solid ? (flip ? 'a2' : 'a') : flip ? 'b2' : 'b';
  });
  return {
    ...m,
    name: `Benchmark tapered chain (invented), ${stations} stations`,
    sections: [...sections, { id: 'a2', shape: 'solid', d: 0.036 }, { id: 'b2', shape: 'hollow', d: 0.046, di: 0.028 }],
  };
}

/** One shaft of n stations made of up to 1,000 segments: most stations come from point torques. */
export function chainOfLoadsModel(stations: number): Json {
  const segs = Math.min(1000, Math.floor(stations / 10));
  const L = 10; // m
  const segments = Array.from({ length: segs }, (_, k) => ({ length: L / segs, section: k % 2 ? 'a' : 'b', material: 'steel' }));
  const torques = [];
  const extra = stations - segs - 1;
  for (let k = 0; k < extra; k++) {
    const z = ((k + 0.5) / extra) * L;
    if (Math.abs(z * (segs / L) - Math.round(z * (segs / L))) < 1e-6) continue; // keep off the segment ends
    torques.push({ id: `t${k}`, shaft: 's', at: z, torque: ((k % 7) - 3) * 1e-3 });
  }
  return {
    format: 'shaftnet/1',
    name: `Benchmark loaded chain (invented), ${stations} stations`,
    materials,
    sections,
    shafts: [{ id: 's', segments }],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: L, kind: 'fixed' },
    ],
    torques,
  };
}

/** Shafts of 10 stations in a tree: each new shaft meshes (rigidly or not) with an earlier one. */
export function gearTreeModel(stations: number): Json {
  const perShaft = 10;
  const nShafts = Math.max(1, Math.floor(stations / perShaft));
  let seed = 12345;
  const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 4294967296);
  const shafts = [];
  const meshes = [];
  const supports = [{ id: 'root', shaft: 'g0', at: 0, kind: 'fixed' }];
  const torques = [];
  for (let s = 0; s < nShafts; s++) {
    // 8 segments + 2 interior gear stations → 10 stations.
    shafts.push({ id: `g${s}`, segments: Array.from({ length: 8 }, (_, k) => ({ length: 0.05, section: k % 2 ? 'a' : 'b', material: 'steel' })) });
    torques.push({ id: `q${s}`, shaft: `g${s}`, at: 0.4, torque: 10 * (rand() - 0.5) });
    if (s > 0) {
      const parent = Math.floor(rand() * s);
      meshes.push({
        id: `m${s}`,
        a: { shaft: `g${parent}`, at: 0.125, radius: 0.03 + 0.02 * rand() },
        b: { shaft: `g${s}`, at: 0.025, radius: 0.03 + 0.02 * rand() },
        sense: 'opposite',
        ...(s % 2 ? { stiffness: 4e8 } : {}),
      });
    }
    if (s % 50 === 7) supports.push({ id: `k${s}`, shaft: `g${s}`, at: 0.4, kind: 'spring', stiffness: 1e4 } as never);
  }
  return { format: 'shaftnet/1', name: `Benchmark gear tree (invented), ${stations} stations`, materials, sections, shafts, supports, torques, gearMeshes: meshes };
}

function time<T>(f: () => T): [T, number] {
  const t0 = process.hrtime.bigint();
  const r = f();
  return [r, Number(process.hrtime.bigint() - t0) / 1e6];
}

/** The work memory this process keeps between its solves, as the CLI process, a worker or the request thread does. */
const workspace = new Workspace();

function gc(): void {
  (globalThis as { gc?: () => void }).gc?.();
}

/**
 * One size of one kind: the first solve at this size in the process (fresh
 * memory, whose pages the system must first supply) and the best of the
 * repeats (memory kept from the solve before). Each solve stops when every
 * result is recovered; writing the JSON text is timed apart, once.
 */
function bench(kind: string, make: (n: number) => Json, n: number, repeats: number): string {
  // The JSON model is built and normalised in one expression, so only the resolved model stays alive.
  const [resolved, parseMs] = time(() => normaliseModel(make(n)));
  let first = 0;
  let best = Infinity;
  let bestPhases: Record<string, number> = {};
  let stations = 0;
  let fill = 0;
  let relResidual = 0;
  for (let r = 0; r < repeats; r++) {
    gc();
    const phases: Record<string, number> = {};
    const [, ms] = time(() =>
      withSolved(resolved, { diagramPoints: 2, workspace, onPhase: (p, t) => (phases[p] = t) }, (solved) => {
        stations = solved.stats.stations;
        fill = solved.stats.factorNonzeros;
        let scale = 0;
        for (const t of solved.rec.segMaxAbs) scale = Math.max(scale, t);
        relResidual = solved.maxResidual / scale;
      }),
    );
    if (r === 0) first = ms;
    if (ms < best) {
      best = ms;
      bestPhases = phases;
    }
  }
  // The JSON text of the solution, written in pieces (a 1e6-station answer is some 500 MB).
  gc();
  let bytes = 0;
  let jsonMs = 0;
  withSolved(resolved, { diagramPoints: 2, workspace, onPhase: (p, t) => p === 'output' && (jsonMs = t) }, (solved) =>
    writeSolutionJson(solved, (text) => (bytes += text.length)),
  );
  const heap = process.memoryUsage().heapUsed / 2 ** 20;
  const core = (bestPhases.stations ?? 0) + (bestPhases.assemble ?? 0) + (bestPhases.factorise ?? 0);
  return [
    kind.padEnd(12),
    String(stations).padStart(9),
    first.toFixed(1).padStart(9),
    best.toFixed(1).padStart(9),
    ((best * 1e6) / stations).toFixed(0).padStart(8),
    core.toFixed(1).padStart(9),
    (bestPhases.recover ?? 0).toFixed(1).padStart(9),
    jsonMs.toFixed(0).padStart(8),
    (bytes / 1e6).toFixed(1).padStart(8),
    parseMs.toFixed(0).padStart(9),
    (fill / stations).toFixed(2).padStart(8),
    relResidual.toExponential(1).padStart(9),
    heap.toFixed(0).padStart(8),
  ].join('  ');
}

/** The gear tree of `gearTreeModel` with its torques spread over `cases` load cases and `combos` seeded combinations. */
export function casedGearTreeModel(stations: number, cases: number, combos: number): Json {
  const m = gearTreeModel(stations) as Json & { torques: Array<Record<string, unknown>> };
  m.torques.forEach((t, k) => (t.case = `c${k % cases}`));
  let seed = 777;
  const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 4294967296);
  const ids = Array.from({ length: cases }, (_, k) => `c${k}`);
  return {
    ...m,
    name: `Benchmark gear tree with load cases (invented), ${stations} stations`,
    loadCases: ids.map((id) => ({ id })),
    combinations: Array.from({ length: combos }, (_, k) => ({ id: `k${k}`, factors: Object.fromEntries(ids.map((id) => [id, 3 * rand() - 1.5])) })),
  };
}

/**
 * Ten cases, 1,000 combinations on a 1e4-station gear tree: total time (solve + JSON with the envelope) against one plain
 * solve. The answer is abridged (1,000 × ~9,000 items: each combination lists what it governs; README, "Load cases").
 */
function benchCombinations(): void {
  console.log(`Engine benchmark, load combinations (node ${process.version})`);
  console.log(calibrationLine());
  const stations = 1e4;
  const plain = normaliseModel(gearTreeModel(stations));
  const cased = normaliseModel(casedGearTreeModel(stations, 10, 1000));
  const run = (model: typeof plain) => {
    const phases: Record<string, number> = {};
    let chars = 0;
    const cpu0 = process.cpuUsage();
    const [, ms] = time(() =>
      withSolved(model, { workspace, onPhase: (p, t) => (phases[p] = (phases[p] ?? 0) + t) }, (sv) => writeSolutionJson(sv, (text) => (chars += text.length))),
    );
    const cpu = process.cpuUsage(cpu0);
    return { ms, phases, chars, cpuMs: (cpu.user + cpu.system) / 1000 };
  };
  // Best of the same number of repeats for both; the first solve with combinations in the process apart (its code not yet optimised).
  const best = (model: typeof plain, repeats: number) => {
    gc();
    const first = run(model);
    let b = first;
    for (let r = 1; r < repeats; r++) {
      gc();
      const x = run(model);
      if (x.ms < b.ms) b = x;
    }
    return { first, best: b };
  };
  const one = best(plain, 5).best;
  const cold = best(cased, 5);
  const many = cold.best;
  const fmt = (x: ReturnType<typeof run>) =>
    `${x.ms.toFixed(0)} ms (CPU ${x.cpuMs.toFixed(0)} ms; factorise+solves ${(x.phases.factorise ?? 0).toFixed(0)}, recover ${(x.phases.recover ?? 0).toFixed(0)}, json ${(x.phases.output ?? 0).toFixed(0)}; ${(x.chars / 1e6).toFixed(1)} MB of JSON)`;
  console.log(`1e4-station gear tree, one plain solve + JSON (best of 5): ${fmt(one)}`);
  console.log(`same, 10 load cases, 1,000 combinations + JSON with the envelope (best of 5): ${fmt(many)}`);
  console.log(`  its first run in this process: ${fmt(cold.first)}`);
  console.log(
    `ratio: ${(many.ms / one.ms).toFixed(1)}x one plain solve (CPU ${(many.cpuMs / one.cpuMs).toFixed(1)}x), ${(many.ms / one.ms / 1000).toFixed(3)} plain solves per combination`,
  );
  // The pass over the combinations alone (envelope, residuals, finiteness), by station and one by one, in turns (best of 5).
  withSolved(cased, { workspace }, (sv) => {
    const sup = (sv.cases as NonNullable<typeof sv.cases>).superposition;
    const weights = cased.combinations.map(columnWeights);
    const bestMs = [Infinity, Infinity];
    for (let r = 0; r < 5; r++) {
      for (const way of [0, 1]) {
        const env = emptyEnvelope(sup);
        const cpu0 = process.cpuUsage();
        sup.combineAll(weights, env, way === 0);
        const cpu = process.cpuUsage(cpu0);
        bestMs[way] = Math.min(bestMs[way], (cpu.user + cpu.system) / 1000);
      }
    }
    console.log(`the pass over the 1,000 combinations alone, CPU (best of 5): ${bestMs[0].toFixed(0)} ms by station, ${bestMs[1].toFixed(0)} ms one by one`);
  });
  console.log('(a loaded machine stretches wall time; CPU time is the steadier figure, the calibration line says how slow the machine is now)');
}

/**
 * Progress reporting's cost: a chain of 50 and of 1e6 stations solved and written as JSON text
 * (as the worker and `solveModelJson` do), with no progress object, with a listener that does
 * nothing, and with the worker's (throttled to one report per 100 ms); the variants interleaved,
 * best of the repeats. Then a cancelled worker: the time until the pool has it free again and has
 * answered a small job, by the abort flag and by terminate + respawn (the time-limit path).
 */
async function benchProgress(): Promise<void> {
  console.log(`Engine benchmark, progress and abort (node ${process.version})`);
  console.log(calibrationLine());
  const variants: Array<[string, SolveProgress | undefined]> = [
    ['no progress', undefined],
    ['listener doing nothing', { report: () => {}, aborted: false }],
    ['throttled listener (worker)', { report: throttled(() => {}, 100), aborted: false }],
  ];
  const runJson = (model: ReturnType<typeof normaliseModel>, progress: SolveProgress | undefined) => {
    let chars = 0;
    withSolved(model, { workspace, progress }, (sv) => writeSolutionJson(sv, writingSink((t) => (chars += t.length), progress, sv.stats.stations)));
    return chars;
  };
  for (const [stations, batch, repeats] of [
    [50, 2000, 7],
    [1e6, 1, 3],
  ] as const) {
    const model = normaliseModel(chainModel(stations));
    const best = variants.map(() => Infinity);
    let chars = 0;
    for (let r = 0; r < repeats; r++) {
      variants.forEach(([, progress], v) => {
        gc();
        const [, ms] = time(() => {
          for (let k = 0; k < batch; k++) chars = runJson(model, progress);
        });
        best[v] = Math.min(best[v], ms / batch);
      });
    }
    // The bound that machine noise cannot hide: checkpoints per solve × the cost of one.
    let calls = 0;
    runJson(model, { report: () => void calls++, aborted: false });
    const one = { report: throttled(() => {}, 100), aborted: false };
    const [, perCallMs] = time(() => {
      for (let k = 0; k < 1e6; k++) checkpoint(one, 'writing', k / 1e6);
    });
    console.log(
      `${stations} stations: ${calls} checkpoints per solve; one costs ${((perCallMs / 1e6) * 1e6).toFixed(0)} ns with the throttled listener: ` +
        `${fmtMs((calls * perCallMs) / 1e6)} per solve`,
    );
    const base = best[0];
    const line = variants.map(([name], v) => `${name} ${fmtMs(best[v])} (${v === 0 ? 'base' : `${(((best[v] - base) / base) * 100).toFixed(1)} %`})`).join('; ');
    console.log(`${stations} stations, solve + JSON (${(chars / 1e6).toFixed(1)} M chars), best of ${repeats}${batch > 1 ? ` × ${batch}` : ''}: ${line}`);
  }

  // A cancelled worker, free again: by the abort flag (cancel at the first progress report), or by
  // terminate + respawn (the time-limit path: a limit of 4 s that the long solve, but not the warm-up,
  // runs past); then a small job on the same pool.
  const small = chainModel(51);
  const freeAgain = async (how: 'abort' | 'terminate') => {
    const long = chainModel(how === 'abort' ? 300_001 : 1_000_001);
    const pool = new SolverPool({ size: 1, queueLimit: 1, timeoutMs: how === 'terminate' ? 4000 : 60_000 });
    await pool.run({ kind: 'model', model: small }); // the worker started and warm
    const ac = new AbortController();
    let t0 = 0;
    const freed = new Promise<number>((r) => pool.events.once('freed', () => r(performance.now())));
    const first = new Promise<void>((r) =>
      void pool.run({ kind: 'model', model: long }, { signal: ac.signal, onProgress: () => r() }).catch(() => {}),
    );
    if (how === 'abort') {
      await first;
      t0 = performance.now();
      ac.abort();
    }
    const tf = await freed;
    if (how === 'terminate') t0 = tf; // the time limit: the slot is freed as the worker is terminated
    await pool.run({ kind: 'model', model: small });
    const t1 = performance.now();
    await pool.close();
    return { freedMs: tf - t0, nextDoneMs: t1 - t0 };
  };
  for (const how of ['abort', 'terminate'] as const) {
    const runs = [await freeAgain(how), await freeAgain(how), await freeAgain(how)];
    const b = runs.reduce((x, y) => (y.nextDoneMs < x.nextDoneMs ? y : x));
    console.log(
      `cancel of a worker solve by ${how === 'abort' ? 'the abort flag (3e5 stations, at its first report)' : 'terminate + respawn (1e6 stations, at the time limit)'}: slot free after ${fmtMs(b.freedMs)}, ` +
        `a 50-station job answered ${fmtMs(b.nextDoneMs)} after the cancel (best of 3)`,
    );
  }
}

function fmtMs(ms: number): string {
  return ms < 1 ? `${(ms * 1000).toFixed(1)} µs` : `${ms.toFixed(ms < 10 ? 2 : 0)} ms`;
}

async function main(): Promise<void> {
  if (process.argv.includes('--combinations')) {
    benchCombinations();
    return;
  }
  if (process.argv.includes('--progress')) {
    await benchProgress();
    return;
  }
  const quick = process.argv.includes('--quick');
  const sizes = quick ? [1e3, 1e4, 1e5] : [1e3, 1e4, 1e5, 1e6];
  console.log(`Engine benchmark (node ${process.version}); parse = normalising the JSON, excluded from the solve times`);
  console.log('first = first solve of this size in the process (fresh memory); best = best of the repeats (memory reused); ns/stn from best');
  console.log('core = stations + assembly + factorisation + solve; recover = every result, in columns; json = writing the JSON text (apart)');
  console.log('residual = largest equilibrium residual / largest |T|');
  console.log(calibrationLine());
  console.log(
    [
      'kind'.padEnd(12),
      'stations'.padStart(9),
      'first ms'.padStart(9),
      'best ms'.padStart(9),
      'ns/stn'.padStart(8),
      'core ms'.padStart(9),
      'recov ms'.padStart(9),
      'json ms'.padStart(8),
      'json MB'.padStart(8),
      'parse ms'.padStart(9),
      'fill/stn'.padStart(8),
      'residual'.padStart(9),
      'heap MiB'.padStart(8),
    ].join('  '),
  );
  for (const n of sizes) console.log(bench('chain', chainModel, n + 1, n >= 1e6 ? 3 : 5));
  for (const n of sizes.filter((x) => x <= 1e5)) console.log(bench('tapered chain', taperedChainModel, n + 1, 5));
  for (const n of sizes) console.log(bench('loaded chain', chainOfLoadsModel, n + 1, n >= 1e6 ? 3 : 5));
  for (const n of sizes) console.log(bench('gear tree', gearTreeModel, n, n >= 1e6 ? 3 : 5));

  // Sparse against dense at 2,000 stations.
  const resolved = normaliseModel(chainModel(2000));
  let sparse = Infinity;
  for (let r = 0; r < 20; r++) sparse = Math.min(sparse, time(() => solveResolved(resolved, { diagramPoints: 2, workspace }))[1]);
  let dense = Infinity;
  for (let r = 0; r < 2; r++) dense = Math.min(dense, time(() => solveResolved(resolved, { solver: 'dense', diagramPoints: 2, workspace }))[1]);
  console.log(`2,000 stations: sparse ${sparse.toFixed(2)} ms, dense ${dense.toFixed(0)} ms, ratio ${(dense / sparse).toFixed(0)}x`);
}

if (!process.env.NO_MAIN) await main();
