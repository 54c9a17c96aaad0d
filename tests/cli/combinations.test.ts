/**
 * The command line with load cases: tables per combination and the envelope,
 * `--combination ID` for one combination's full tables, JSON and CSV of the
 * combination named, and an unknown id refused.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../../server/cli.js';
import { formatReport } from '../../server/report.js';
import { solveModel } from '../../server/engine/index.js';

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runCli(args, (s) => (out += s + '\n'), (s) => (err += s + '\n'));
  return { code, out, err };
}

/** A cantilever 1 m long: 100 N·m at mid-span (case run), 10 N·m/m over its length (case jam). */
const model = {
  format: 'shaftnet/1',
  name: 'Cantilever with two load cases',
  materials: [{ id: 'st', G: 80e9, allowableShear: 60e6 }],
  sections: [{ id: 's', shape: 'solid', d: 0.05 }],
  shafts: [{ id: 'a', segments: [{ length: 1, section: 's', material: 'st' }] }],
  supports: [{ id: 'L', shaft: 'a', at: 0, kind: 'fixed' }],
  loadCases: [{ id: 'run' }, { id: 'jam' }],
  torques: [{ id: 't1', case: 'run', shaft: 'a', at: 0.5, torque: 100 }],
  distributedTorques: [{ id: 'd1', case: 'jam', shaft: 'a', from: 0, to: 1, start: 10, end: 10 }],
  combinations: [
    { id: 'service', name: 'Service', factors: { run: 1 } },
    { id: 'peak', factors: { run: 1.5, jam: 2 } },
  ],
};

function file(): string {
  const dir = mkdtempSync(join(tmpdir(), 'shaftnet-cli-cases-'));
  const path = join(dir, 'model.json');
  writeFileSync(path, JSON.stringify(model));
  return path;
}

describe('shaftnet solve with load cases', () => {
  it('tables per combination and the envelope (root reactions −100 and −170 N·m: statics of a cantilever)', async () => {
    const r = await run(['solve', file()]);
    expect(r.code).toBe(0);
    expect(r.out).toContain('2 load combinations');
    expect(r.out).toContain('Combination service (Service)');
    expect(r.out).toContain('Combination peak');
    // Reactions in N*m with 4 significant digits: −1.5·100 − 2·10·1 = −170 in "peak".
    expect(r.out).toMatch(/\nL\s+-100\n/);
    expect(r.out).toMatch(/\nL\s+-170\n/);
    expect(r.out).toContain('Envelope over the combinations: extreme reactions');
    expect(r.out).toMatch(/\nL\s+-170\s+peak\s+-100\s+service\n/);
    // The segment envelope: the peak |T| at the root is 170 N·m, in "peak".
    expect(r.out).toMatch(/a\[0\]\s+170\s+peak\s+st/);
  });

  it('--combination ID prints that combination\'s full tables, as the report of a solve showing it', async () => {
    const r = await run(['solve', file(), '--combination', 'peak']);
    expect(r.code).toBe(0);
    expect(r.out).toBe(formatReport(model, solveModel(model, { combination: 'peak' }), 'si') + '\n');
    expect(r.out).toContain('Load combination peak: the tables below are its results');
    const json = await run(['solve', file(), '--json', '--combination=peak']);
    expect(JSON.parse(json.out).combination).toBe('peak');
    expect(JSON.parse(json.out).reactions[0].torque).toBeCloseTo(-170, 9);
    // The station CSV of the combination named: T(0+) = 170 N·m at the root, τ = 16·T/(π·d³) = 6.926 MPa (closed form).
    const csv = await run(['solve', file(), '--csv', '--combination', 'peak']);
    expect(csv.out.split('\n')[1]).toBe('a,0,0,,170,6.926423123');
    expect((await run(['solve', file(), '--csv'])).out.split('\n')[1]).toBe('a,0,0,,100,4.074366543');
  });

  it('an unknown combination exits 2 naming it; a missing id is a usage error', async () => {
    const r = await run(['solve', file(), '--combination', 'storm']);
    expect(r.code).toBe(2);
    expect(r.err).toContain('"storm"');
    const u = await run(['solve', file(), '--combination']);
    expect(u.code).toBe(1);
    expect(u.err).toContain('--combination takes the id of a combination');
  });
});

describe('shaftnet solve with load cases: overload lines and factors refused', () => {
  /** The cantilever with a shear yield stress of 170 MPa on its steel (invented). */
  const yielding = { ...model, materials: [{ id: 'st', G: 80e9, allowableShear: 60e6, shearYield: 170e6 }] };
  function yieldingFile(m: unknown = yielding): string {
    const dir = mkdtempSync(join(tmpdir(), 'shaftnet-cli-cases-'));
    const path = join(dir, 'model.json');
    writeFileSync(path, JSON.stringify(m));
    return path;
  }

  it('each combination prints its overload line; a cantilever yields and collapses at the root (closed form)', async () => {
    // d = 50 mm: T_y = τ_y·π·d³/16 = 4.172 kN·m and T_p = 2π·τ_y·c³/3 = 5.563 kN·m (solid, contract). Root torque 100 N·m
    // (service) and 170 N·m (peak): first yield at 41.72x and 24.54x, collapse at 55.63x and 32.72x, both at the root z = 0
    // (the one segment's torque is not uniform along it: the place is named).
    const r = await run(['solve', yieldingFile()]);
    expect(r.code).toBe(0);
    const lines = r.out.split('\n').filter((l) => l.startsWith('Overload: '));
    expect(lines).toHaveLength(2);
    expect(lines[0]).toMatch(/^Overload: the loads can grow 41\.72x to first yield \(a at z = 0 mm, layer st\), 55\.63x to collapse/);
    expect(lines[1]).toMatch(/^Overload: the loads can grow 24\.54x to first yield \(a at z = 0 mm, layer st\), 32\.72x to collapse/);
  });

  it('--combination ID prints the overload line of that combination', async () => {
    const r = await run(['solve', yieldingFile(), '--combination', 'peak']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/\nOverload: the loads can grow 24\.54x to first yield \(a at z = 0 mm, layer st\), 32\.72x to collapse/);
  });

  it('a factor whose factored load leaves the torque range exits 2 naming the factor, before solving', async () => {
    const huge = { ...model, combinations: [{ id: 'storm', factors: { run: 1e300 } }] };
    const r = await run(['solve', yieldingFile(huge)]);
    expect(r.code).toBe(2);
    expect(r.err).toContain('SN_OUT_OF_RANGE');
    expect(r.err).toContain('/combinations/0/factors/run');
  });
});

