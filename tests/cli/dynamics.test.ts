/**
 * `shaftnet solve` on a model with dynamics: the frequencies in Hz and rpm with their energy leaders,
 * the crossings, and the failing crossing among the checks; values as the engine's solution has them.
 */
import { describe, expect, it } from 'vitest';
import { runCli } from '../../server/cli.js';
import { solveModel } from '../../server/engine/index.js';
import { readFileSync } from 'node:fs';
import { formatNumber, formatValue } from '../../shared-types/present.js';

const demoPath = new URL('../../server/demos/geared-drive-vibration.json', import.meta.url).pathname;

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runCli(args, (s) => (out += s + '\n'), (s) => (err += s + '\n'));
  return { code, out, err };
}

describe('shaftnet solve with dynamics', () => {
  it('prints every frequency in Hz and rpm, the energy leaders, the crossings and the failing check', async () => {
    const { code, out } = await run(['solve', demoPath]);
    expect(code).toBe(0);
    const sol = solveModel(JSON.parse(readFileSync(demoPath, 'utf8')));
    expect(out).toContain('Natural frequencies');
    for (const [k, m] of (sol.modes ?? []).entries()) {
      // 1 rpm = 2π/60 rad/s (exact definition).
      const line = out.split('\n').find((l) => l.startsWith(`${k + 1} `) && l.includes(formatNumber(m.frequency, 6)));
      expect(line, `mode ${k + 1}`).toBeDefined();
      expect(line).toContain(formatNumber((m.angularFrequency * 60) / (2 * Math.PI), 6));
    }
    // The demo's second mode meets order 2 inside 900–1500 rpm widened by 10 %.
    const failing = (sol.crossings ?? []).filter((c) => c.inRange);
    expect(failing).toHaveLength(1);
    expect(out).toContain('YES: resonance, avoid');
    expect(out).toMatch(/crossing +input mode 2 order 2 .*RESONANCE/);
    // The first mode's largest kinetic share leads its row.
    const lead = [...(sol.modes?.[0].energy.kinetic ?? [])].sort((a, b) => b.share - a.share)[0];
    expect(out.split('\n').find((l) => l.startsWith('1 '))).toContain(`${lead.item} ${formatNumber(100 * lead.share, 3)}%`);
  });

  it('prints each segment\'s forced-response peaks and the vibratory + static check, as the solution has them', async () => {
    const { code, out } = await run(['solve', demoPath, '--units', 'us']);
    expect(code).toBe(0);
    const fr = solveModel(JSON.parse(readFileSync(demoPath, 'utf8'))).forcedResponse;
    expect(fr).toBeDefined();
    expect(out).toContain(`Forced response over the running range (${fr?.speeds.length} speeds`);
    expect(out).toContain('peak torque [lbf*in]');
    for (const g of fr?.segments ?? []) {
      // 1 rpm = 2π/60 rad/s (exact definition); torque and stress in the chosen units.
      const line = out.split('\n').find((l) => l.startsWith(`${g.item} `) && l.includes(formatValue(g.peakTorque, 'torque', 'us', 4)));
      expect(line, g.item).toBeDefined();
      expect(line).toContain(formatNumber((g.peakSpeed * 60) / (2 * Math.PI), 5));
      expect(line).toContain(formatValue(g.peakShear, 'stress', 'us', 4));
    }
    const worst = fr?.checks[0];
    expect(out).toContain('Peak vibratory + static shear against the allowable');
    expect(out.split('\n').find((l) => l.startsWith(`${worst?.shaft}[${worst?.segment}] `) && l.includes(formatValue(worst?.value ?? 0, 'stress', 'us', 4)))).toBeDefined();
  });
});
