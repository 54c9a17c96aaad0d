/**
 * Command-line benchmark (not a test): `shaftnet solve --json` and `--csv` on
 * a chain of 1e5 stations, end to end as a process (start, read, solve,
 * write to a file), side by side with the Python + NumPy + SciPy script that
 * does the same read–solve–write (../shared/bench/scipy_statics.py).
 * Goal (issue 9): each of the two at most half the time of the script.
 *
 * The machine's speed drifts (other guests share the host), so the three
 * commands run in turns, round after round, in a rotating order, and the
 * figures are medians; a calibration line is printed before and after.
 * The command line runs as its installed bin does: node with the options of
 * the bin's first line, then dist/server/cli.js (run `npm run build` first).
 *
 * Run: npm run bench:cli   (env BENCH_ROUNDS=7 the rounds, BENCH_STATIONS=100000 the chain,
 *      SHAFTNET_BENCH_DIR the folder of scale_models.py and scipy_statics.py)
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { calibrationLine } from './calibrate.js';
import { anchorsDir } from './anchors.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const ROUNDS = Number(process.env.BENCH_ROUNDS ?? 7);
const STATIONS = Number(process.env.BENCH_STATIONS ?? 100_000);
const anchors = anchorsDir();
const cli = path.join(root, 'dist', 'server', 'cli.js');

/** Node options the bin's first line gives ("#!/usr/bin/env -S node --opt"), as the installed command runs. */
function binNodeOptions(): string[] {
  const first = fs.readFileSync(cli, 'utf8').split('\n', 1)[0];
  const m = /^#!\S*env(?:\s+-S)?\s+node(.*)$/.exec(first);
  return m ? m[1].trim().split(/\s+/).filter(Boolean) : [];
}

interface Command {
  readonly name: string;
  readonly file: string;
  readonly args: readonly string[];
  readonly out: string;
  readonly wall: number[];
  readonly cpu: number[];
}

/** Runs one command with stdout to a file; wall time, ms, and the child's CPU time (user + system), ms. */
function timeOnce(c: Command): void {
  const fd = fs.openSync(c.out, 'w');
  const childrenBefore = childCpuMs();
  const t0 = performance.now();
  const r = spawnSync(c.file, c.args, { stdio: ['ignore', fd, 'pipe'], maxBuffer: 1 << 20 });
  const wall = performance.now() - t0;
  fs.closeSync(fd);
  if (r.status !== 0) throw new Error(`${c.name} exited with ${r.status}: ${String(r.stderr).slice(0, 500)}`);
  c.wall.push(wall);
  const cpu = childCpuMs() - childrenBefore;
  if (Number.isFinite(cpu)) c.cpu.push(cpu);
}

/** CPU time of this process's finished children, ms (Linux: /proc/self/stat fields cutime and cstime). */
function childCpuMs(): number {
  try {
    const stat = fs.readFileSync('/proc/self/stat', 'utf8');
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    const ticks = Number(fields[13]) + Number(fields[14]); // cutime, cstime (fields 16 and 17 of stat)
    return (ticks * 1000) / 100; // USER_HZ is 100 on Linux
  } catch {
    return Number.NaN;
  }
}

function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** The stations' rotations of both answers agree (the same work was done): largest difference over largest |φ|. */
function agreement(pyOut: string, jsonOut: string): { stations: number; relDiff: number } {
  const py = JSON.parse(fs.readFileSync(pyOut, 'utf8')) as { shafts: Array<{ stations: Array<{ rotation: number }> }> };
  const ours = JSON.parse(fs.readFileSync(jsonOut, 'utf8')) as { shafts: Array<{ stations: Array<{ rotation: number }> }> };
  const a = py.shafts[0].stations;
  const b = ours.shafts[0].stations;
  if (a.length !== b.length) throw new Error(`station counts differ: ${a.length} (script) and ${b.length} (shaftnet)`);
  let scale = 0;
  let diff = 0;
  for (let i = 0; i < a.length; i++) {
    scale = Math.max(scale, Math.abs(a[i].rotation));
    diff = Math.max(diff, Math.abs(a[i].rotation - b[i].rotation));
  }
  return { stations: a.length, relDiff: diff / scale };
}

function main(): void {
  if (!fs.existsSync(cli)) throw new Error(`${cli} is missing: run npm run build first`);
  for (const f of ['scale_models.py', 'scipy_statics.py']) {
    if (!fs.existsSync(path.join(anchors, f))) throw new Error(`${path.join(anchors, f)} is missing (set SHAFTNET_BENCH_DIR)`);
  }
  const probe = spawnSync('python3', ['-c', 'import numpy, scipy.sparse.linalg']);
  if (probe.status !== 0) throw new Error('python3 with numpy and scipy is needed for the side-by-side figures (pip install numpy scipy)');

  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-cli-bench-'));
  try {
    const model = path.join(dir, 'chain.json');
    const gen = spawnSync('python3', [path.join(anchors, 'scale_models.py'), 'chain', String(STATIONS)], { maxBuffer: 1 << 30 });
    if (gen.status !== 0) throw new Error(`scale_models.py failed: ${String(gen.stderr)}`);
    fs.writeFileSync(model, gen.stdout);

    const nodeOptions = binNodeOptions();
    const commands: Command[] = [
      { name: 'python', file: 'python3', args: [path.join(anchors, 'scipy_statics.py'), model], out: path.join(dir, 'py.json'), wall: [], cpu: [] },
      { name: 'json', file: process.execPath, args: [...nodeOptions, cli, 'solve', model, '--json'], out: path.join(dir, 'out.json'), wall: [], cpu: [] },
      { name: 'csv', file: process.execPath, args: [...nodeOptions, cli, 'solve', model, '--csv'], out: path.join(dir, 'out.csv'), wall: [], cpu: [] },
    ];

    console.log(`# shaftnet command line vs Python + SciPy, chain of ${STATIONS} stations (${(fs.statSync(model).size / 1e6).toFixed(1)} MB model)`);
    console.log(calibrationLine());
    console.log(`node ${process.version}; the bin runs as: node ${[...nodeOptions, 'dist/server/cli.js'].join(' ')}`);
    // One untimed turn of each: file caches warm, and the answers are checked against each other.
    for (const c of commands) timeOnce(c);
    const check = agreement(commands[0].out, commands[1].out);
    console.log(`same work: ${check.stations} stations in both answers, rotations agree to ${check.relDiff.toExponential(1)} of the largest`);
    for (const c of commands) {
      c.wall.length = 0;
      c.cpu.length = 0;
    }
    for (let round = 0; round < ROUNDS; round++) {
      for (let k = 0; k < commands.length; k++) timeOnce(commands[(round + k) % commands.length]);
    }
    const [py, json, csv] = commands;
    const row = (c: Command) =>
      `${c.name.padEnd(7)} wall median ${median(c.wall).toFixed(0).padStart(5)} ms (min ${Math.min(...c.wall).toFixed(0)}, max ${Math.max(...c.wall).toFixed(0)})` +
      (c.cpu.length ? `   cpu median ${median(c.cpu).toFixed(0).padStart(5)} ms` : '') +
      `   output ${(fs.statSync(c.out).size / 1e6).toFixed(1)} MB`;
    console.log(`\n${ROUNDS} rounds, each command once per round in rotating order:`);
    for (const c of commands) console.log(row(c));
    const ratio = (c: Command) => median(c.wall) / median(py.wall);
    const cpuRatio = (c: Command) => (c.cpu.length && py.cpu.length ? ` (cpu ${(median(c.cpu) / median(py.cpu)).toFixed(2)})` : '');
    console.log(`\nratio --json / script: ${ratio(json).toFixed(2)}${cpuRatio(json)}   goal <= 0.50: ${ratio(json) <= 0.5 ? 'met' : 'NOT met'}`);
    console.log(`ratio --csv  / script: ${ratio(csv).toFixed(2)}${cpuRatio(csv)}   goal <= 0.50: ${ratio(csv) <= 0.5 ? 'met' : 'NOT met'}`);
    console.log(calibrationLine());
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

main();
