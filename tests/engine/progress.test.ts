/**
 * Progress and abort of a solve (server/engine/progress.ts): the reports come
 * in phase order with fractions that do not go back, the answer is the same
 * text with and without a listener, an abort at any checkpoint throws
 * SolveAborted, and the workspace it ran in is free and gives the same answer
 * on the next solve. Models from the engine bench (invented, for timing).
 * No expected number here is physical: the answer is compared with itself.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { DYNAMICS_PHASES, PROGRESS_PHASES, SolveAborted, overallFraction, solveModelJson, throttled, Workspace, type ProgressPhase } from '../../server/engine/index.js';
import { longChain } from '../helpers/long-chain.js';

let pieces = 0;
function json(model: unknown, opts: Parameters<typeof solveModelJson>[2] = {}): string {
  let text = '';
  pieces = 0;
  solveModelJson(model, (t) => void ((text += t), pieces++), opts, 1 << 12);
  return text;
}

describe('solve progress', () => {
  const model = longChain(33_001); // slab path: large arrays given back within the solve

  it('reports every phase in order, fractions within [0, 1] and the overall fraction never going back; same text as without', () => {
    const plain = json(model);
    const seen: Array<[ProgressPhase, number]> = [];
    const text = json(model, { progress: { report: (p, f) => seen.push([p, f]), aborted: false } });
    expect(text).toBe(plain);
    expect([...new Set(seen.map(([p]) => p))]).toEqual(PROGRESS_PHASES.filter((p) => !DYNAMICS_PHASES.includes(p)));
    let last = 0;
    for (const [p, f] of seen) {
      expect(f).toBeGreaterThanOrEqual(0);
      expect(f).toBeLessThanOrEqual(1);
      const o = overallFraction(p, f);
      expect(o).toBeGreaterThanOrEqual(last);
      last = o;
    }
    expect(seen.at(-1)).toEqual(['writing', 1]);
    expect(last).toBeCloseTo(1, 12); // the shares add up to one (common practice, no source)
    // Writing reports once per piece written, and at its start (twice) and end.
    expect(pieces).toBeGreaterThan(1000);
    expect(seen.filter(([p]) => p === 'writing').length).toBe(pieces + 3);
  });

  it('an abort at each checkpoint throws SolveAborted; the workspace is free and solves the same answer next', () => {
    const ws = new Workspace();
    const plain = json(model, { workspace: ws });
    // Count the checkpoints, then abort at each of a spread of them.
    let total = 0;
    json(model, { workspace: ws, progress: { report: () => void total++, aborted: false } });
    expect(total).toBeGreaterThan(15);
    for (const at of [0, 5, 13, total - 3]) {
      let calls = 0;
      const progress = {
        report: () => void calls++,
        get aborted() {
          return calls > at; // the (at + 2)-th checkpoint throws
        },
      };
      expect(() => json(model, { workspace: ws, progress })).toThrow(SolveAborted);
      expect(ws.busy).toBe(false);
      expect(json(model, { workspace: ws })).toBe(plain);
    }
  });

  it('with load cases, the solve phase reports one step per right-hand side: each case, then the combination shown', () => {
    // Two cases and five combinations: the combinations are factored sums of the two case
    // solutions (superposition), so three right-hand sides are solved, not five.
    const cased = longChain(200, 2, 5);
    const solves: number[] = [];
    const recovery: number[] = [];
    json(cased, { progress: { report: (p, f) => void (p === 'solve' ? solves.push(f) : p === 'recovery' && recovery.push(f)), aborted: false } });
    expect(solves).toEqual([0, 1 / 3, 2 / 3]);
    // Recovery: each column (the assembled state, none here, and the two cases) over the first 0.6,
    // then before and after the one pass over the five combinations.
    expect(recovery).toEqual([...[0, 1, 2].map((c) => (0.6 * c) / 3), 0.7, 0.95]);
  });

  it('throttled passes on at most one report per interval', () => {
    let now = 0;
    const out: number[] = [];
    const r = throttled((_p, f) => out.push(f), 100, () => now);
    for (let k = 0; k < 50; k++) {
      r('writing', k / 50);
      now += 30; // ms
    }
    // Reports at 0, 120, 240, … ms: every fourth of those sent 30 ms apart.
    expect(out).toEqual(Array.from({ length: 13 }, (_, k) => (4 * k) / 50));
  });

  it('a model with dynamics reports each root found and each speed swept, in phase order; aborted among the roots, it stops', () => {
    // The invented demo with dynamics and one excitation (server/demos/geared-drive-vibration.json).
    const demo = JSON.parse(readFileSync(new URL('../../server/demos/geared-drive-vibration.json', import.meta.url), 'utf8'));
    const seen: Array<[ProgressPhase, number]> = [];
    const text = json(demo, { progress: { report: (p, f) => seen.push([p, f]), aborted: false } });
    expect(text).toBe(json(demo));
    const phases = [...new Set(seen.map(([p]) => p))];
    expect(phases).toEqual(PROGRESS_PHASES.filter((p) => phases.includes(p)));
    expect(phases).toContain('frequencies');
    expect(phases).toContain('forced response');
    // Within each dynamics phase the fraction never goes back; the sweep reports once per grid speed at least.
    for (const phase of DYNAMICS_PHASES) {
      const f = seen.filter(([p]) => p === phase).map(([, x]) => x);
      for (let k = 1; k < f.length; k++) expect(f[k]).toBeGreaterThanOrEqual(f[k - 1]);
    }
    expect(seen.filter(([p]) => p === 'forced response').length).toBeGreaterThanOrEqual(400);
    let roots = 0;
    const stop = { report: (p: ProgressPhase) => void (p === 'frequencies' && roots++), get aborted() { return roots >= 3; } };
    expect(() => json(demo, { progress: stop })).toThrow(SolveAborted);
  });
});
