import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { byteWriter, runCli } from '../../server/cli.js';
import { formatReport } from '../../server/report.js';
import { solveModel } from '../../server/engine/index.js';
import { STATION_CSV_HEADER, stationCsv } from '../../shared-types/present.js';

const demoPath = new URL('../../server/demos/mixer-drive.json', import.meta.url).pathname;
const demo = JSON.parse(readFileSync(demoPath, 'utf8'));

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runCli(args, (s) => (out += s + '\n'), (s) => (err += s + '\n'));
  return { code, out, err };
}

function writeModel(model: unknown): string {
  const dir = mkdtempSync(join(tmpdir(), 'shaftnet-cli-'));
  const file = join(dir, 'model.json');
  writeFileSync(file, typeof model === 'string' ? model : JSON.stringify(model));
  return file;
}

/** A shaft of n segments of two sizes, fixed at both ends, a point torque on every seventh station (invented). */
function chainModel(n: number) {
  return {
    format: 'shaftnet/1',
    name: 'Chain for the command line (invented)',
    materials: [{ id: 's', G: 79.3e9 }],
    sections: [
      { id: 'a', shape: 'solid', d: 0.04 },
      { id: 'b', shape: 'hollow', d: 0.05, di: 0.03 },
    ],
    shafts: [{ id: 'bar', segments: Array.from({ length: n }, (_, i) => ({ length: 0.01, section: i % 3 === 0 ? 'b' : 'a', material: 's' })) }],
    supports: [
      { id: 'A', shaft: 'bar', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 'bar', at: n * 0.01, kind: 'fixed' },
    ],
    torques: Array.from({ length: Math.floor(n / 7) }, (_, i) => ({ id: `t${i}`, shaft: 'bar', at: (7 * i + 3) * 0.01, torque: (i % 11) - 5 })),
    distributedTorques: [{ id: 'w', shaft: 'bar', from: 0, to: n * 0.01, start: -20, end: 35 }],
  };
}

describe('shaftnet solve', () => {
  it('--json prints the solution object of the engine', async () => {
    const r = await run(['solve', demoPath, '--json']);
    expect(r.code).toBe(0);
    const printed = JSON.parse(r.out);
    expect(printed.format).toBe('shaftnet-solution/1');
    expect(printed.reactions).toEqual(solveModel(demo).reactions);
  });

  it('--json with a raw writer streams the text in pieces: JSON.stringify of the solution, then a newline', async () => {
    const n = 40_000; // segments: an answer of several pieces of 1 Mi characters
    const model = {
      format: 'shaftnet/1',
      name: 'Long bar for the command line (invented)',
      materials: [{ id: 's', G: 79.3e9 }],
      sections: [{ id: 'd', shape: 'solid', d: 0.04 }],
      shafts: [{ id: 'bar', segments: Array.from({ length: n }, () => ({ length: 2 ** -12, section: 'd', material: 's' })) }],
      supports: [
        { id: 'A', shaft: 'bar', at: 0, kind: 'fixed' },
        { id: 'B', shaft: 'bar', at: n * 2 ** -12, kind: 'fixed' },
      ],
      torques: [{ id: 'T', shaft: 'bar', at: 1, torque: 250 }],
    };
    const pieces: string[] = [];
    const code = await runCli(['solve', writeModel(model), '--json'], () => undefined, () => undefined, (t) => pieces.push(t));
    expect(code).toBe(0);
    expect(pieces.length).toBeGreaterThan(2);
    expect(pieces.join('')).toBe(JSON.stringify(solveModel(model)) + '\n');
  });

  it('tables show each reaction in the chosen units', async () => {
    const s = solveModel(demo);
    const si = await run(['solve', demoPath]);
    const us = await run(['solve', demoPath, '--units', 'us']);
    expect(si.code).toBe(0);
    expect(si.out).toContain('torque [N*m]');
    expect(us.out).toContain('torque [lbf*in]');
    // 1 lbf·in = 0.45359237 kg × 9.80665 m/s² × 0.0254 m exactly (definitions of the pound, standard gravity and inch).
    const lbfIn = 0.45359237 * 9.80665 * 0.0254;
    for (const reaction of s.reactions) {
      const row = us.out.split('\n').find((line) => line.startsWith(reaction.support + ' '));
      expect(row, reaction.support).toBeDefined();
      const shown = Number(row!.trim().split(/\s+/)[3]);
      expect(Math.abs(shown - reaction.torque / lbfIn)).toBeLessThanOrEqual(Math.abs(reaction.torque / lbfIn) * 5e-4 + 1e-9);
    }
    for (const text of [si.out, us.out]) expect(text).toContain('qualified engineer');
  });

  it('tables give each segment J, GJ and k = GJ/L', () => {
    // Solid 40 mm shaft, G = 80 GPa, segments of 0.25 m: J = π d⁴ / 32, GJ, k = GJ / L (Saint-Venant torsion).
    const model = {
      format: 'shaftnet/1',
      name: 'Cantilever (invented)',
      materials: [{ id: 's', G: 80e9 }],
      sections: [{ id: 'd40', shape: 'solid', d: 0.04 }],
      shafts: [{ id: 'bar', segments: Array.from({ length: 4 }, () => ({ length: 0.25, section: 'd40', material: 's' })) }],
      supports: [{ id: 'A', shaft: 'bar', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 'bar', at: 1, torque: 100 }],
    };
    const J = (Math.PI * 0.04 ** 4) / 32;
    const GJ = 80e9 * J;
    const s = solveModel(model);
    const row = (text: string) => text.split('\n').find((l) => l.startsWith('bar[2] '))!.trim().split(/\s+/);
    const si = formatReport(model, s, 'si');
    const table = si.slice(si.indexOf('Segment stiffness'));
    expect(table).toContain('J [mm4]');
    expect(table).toContain('GJ [N*m2]');
    expect(table).toContain('k [N*m/rad]');
    // Ip = J and Wt = J/r for a round section of one material (r = 20 mm).
    expect(row(table).slice(2).map(Number)).toEqual([J * 1e12, GJ, GJ / 0.25, J * 1e12, (J / 0.02) * 1e9].map((v) => Number(v.toPrecision(4))));
    // US: 1 in = 0.0254 m and 1 lbf = 0.45359237 kg × 9.80665 m/s², exactly.
    const us = formatReport(model, s, 'us');
    const usTable = us.slice(us.indexOf('Segment stiffness'));
    const lbf = 0.45359237 * 9.80665;
    expect(usTable).toContain('J [in4]');
    expect(row(usTable).slice(2).map(Number)).toEqual(
      [J / 0.0254 ** 4, GJ / (lbf * 0.0254 ** 2), GJ / 0.25 / (lbf * 0.0254), J / 0.0254 ** 4, J / 0.02 / 0.0254 ** 3].map((v) => Number(v.toPrecision(4))),
    );
  });

  it('tables give a taper J and GJ at both ends and its exact k, a rectangle its Ip and Wt, and the stress raisers as local peaks', async () => {
    const path = new URL('../../server/demos/tapered-bar-shoulder.json', import.meta.url).pathname;
    const model = JSON.parse(readFileSync(path, 'utf8'));
    const s = solveModel(model);
    const r = await run(['solve', path]);
    expect(r.code).toBe(0);
    const lines = r.out.split('\n');
    const cells = (start: string, from = 0) => lines.slice(from).find((l) => l.trimStart().startsWith(start))!.trim().split(/\s+/);
    const props = lines.findIndex((l) => l.startsWith('Segment stiffness and section properties'));
    expect(props).toBeGreaterThan(0);
    const p4 = (v: number) => Number(v.toPrecision(4));
    const [taper, , link] = s.shafts[0].segments;
    // Values read back from the solution: mm4, N*m2, N*m/rad, mm4, mm3 (the table's SI display units).
    expect(cells('main[0]', props).slice(2, 5).map(Number)).toEqual([taper.torsionConstant * 1e12, taper.torsionalRigidity, taper.stiffness].map(p4));
    expect(cells('end', props).slice(1, 4)).toEqual(['d45', String(p4((taper.torsionConstantEnd as number) * 1e12)), String(p4(taper.torsionalRigidityEnd as number))]);
    expect(cells('main[2]', props).slice(5, 7).map(Number)).toEqual([(link.polarMoment as number) * 1e12, (link.torsionalModulus as number) * 1e9].map(p4));
    const raisers = lines.findIndex((l) => l.startsWith('Stress raisers: local peaks'));
    expect(raisers).toBeGreaterThan(0);
    for (const x of s.stressRaisers ?? []) {
      const row = cells(`${x.id} (${x.kind})`, raisers);
      // "F1 (shoulder)" is two cells; then shaft, z [mm], Kts, nominal, local peak, allowable [MPa], util.
      expect(row[2]).toBe(x.shaft);
      expect(row.slice(3, 9).map(Number)).toEqual([
        p4(x.z * 1e3),
        Number(x.factor.toPrecision(3)),
        p4(x.nominalShear / 1e6),
        p4(x.localPeak / 1e6),
        p4((x.allowableShear as number) / 1e6),
        Number((x.utilisation as number).toPrecision(3)),
      ]);
    }
    expect(r.out).toMatch(/localPeak +main F1 steel/);
  });

  it('--csv prints the station table of the presentation module, one row per station', async () => {
    const r = await run(['solve', demoPath, '--csv']);
    const solution = solveModel(demo);
    expect(r.code).toBe(0);
    expect(r.out).toBe(stationCsv(solution, 'si'));
    const rows = r.out.trim().split('\n');
    const stations = solution.shafts.reduce((n, s) => n + s.stations.length, 0);
    expect(rows[0]).toBe(STATION_CSV_HEADER);
    expect(rows.length - 1).toBe(stations);
    const us = await run(['solve', demoPath, '--csv', '--units', 'us']);
    expect(us.out).toBe(stationCsv(solution, 'us'));
  });

  it('--csv from the columns of the solve matches the CSV of the solution object, on a large model too', async () => {
    const pieces: string[] = [];
    const model = chainModel(30_000);
    const code = await runCli(['solve', writeModel(model), '--csv', '--units=us'], () => undefined, () => undefined, (t) => pieces.push(t));
    expect(code).toBe(0);
    expect(pieces.length).toBeGreaterThan(1);
    expect(pieces.join('')).toBe(stationCsv(solveModel(model), 'us'));
  });

  it('an invalid model exits 2 and names the field', async () => {
    const bad = structuredClone(demo);
    bad.sections[0].d = '40 GPa';
    const r = await run(['solve', writeModel(bad)]);
    expect(r.code).toBe(2);
    expect(r.err).toContain(`SN_UNIT_KIND /sections/0/d (section ${JSON.stringify(demo.sections[0].id)}, d): `);
  });

  it('a mechanism exits 2 and names the shafts', async () => {
    const free = structuredClone(demo);
    free.supports = free.supports.filter((s: { shaft: string }) => s.shaft !== 'tail');
    free.couplings = [];
    const r = await run(['solve', writeModel(free)]);
    expect(r.code).toBe(2);
    expect(r.err).toContain('SN_MECHANISM');
    expect(r.err).toContain('tail');
  });

  it('malformed JSON exits 2, a missing file or a bad option exits 1', async () => {
    expect((await run(['solve', writeModel('{"format": ')])).code).toBe(2);
    expect((await run(['solve', '/nonexistent/model.json'])).code).toBe(1);
    expect((await run(['solve', demoPath, '--units', 'imperial'])).code).toBe(1);
  });
});

describe('writing to stdout', () => {
  it('packs text into fresh buffers of the given size, the text unchanged', () => {
    const chunks: Buffer[] = [];
    const w = byteWriter((b) => chunks.push(b), 64);
    const parts = ['shaft,z\n', 'ä,1\n'.repeat(7), 'x'.repeat(100), 'τ\n', ''];
    for (const p of parts) w.write(p);
    w.end();
    // Joined only after every write: a buffer handed over and then written into again would show here.
    expect(Buffer.concat(chunks).toString('utf8')).toBe(parts.join(''));
    expect(chunks.length).toBeGreaterThan(2);
    for (const c of chunks) expect(c.length).toBeGreaterThan(0);
  });
});

describe('the installed command', () => {
  const bin = new URL('../../dist/server/cli.js', import.meta.url).pathname;
  it('is one bundled file: it imports no module of its own but the server for serve and the library commands (keys, backup) and the PostgreSQL copy (migrate)', () => {
    const text = readFileSync(bin, 'utf8');
    expect(text.startsWith('#!/usr/bin/env node')).toBe(true);
    const imports = [...text.matchAll(/(?:^|\n)import\s[^;]*?from\s*["']([^"']+)["']|import\(\s*["']([^"']+)["']\s*\)/g)].map((m) => m[1] ?? m[2]);
    const onDemand = ['./main.js', './cli-keys.js', './cli-backup.js', './cli-migrate.js']; // each opens a library (a native module or the PostgreSQL client)
    for (const spec of imports) expect(onDemand.includes(spec) || spec.startsWith('node:'), spec).toBe(true);
    expect(imports).toContain('./main.js');
  });

  it('runs from dist with the exit codes of the contract', () => {
    expect(existsSync(bin), 'dist/server/cli.js: run npm run build').toBe(true);
    const ok = execFileSync(process.execPath, [bin, 'demo', '--json'], { encoding: 'utf8' });
    expect(JSON.parse(ok).reactions).toEqual(solveModel(demo).reactions);
    const bad = spawnSync(process.execPath, [bin, 'solve', writeModel({ format: 'shaftnet/1' })], { encoding: 'utf8' });
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain('/name');
  });
});
