/**
 * The engine takes its small work arrays from a reused arena (server/engine/arena.ts).
 * Nothing from the arena may reach a solution: a later solve must not change an earlier answer.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { solveModel } from '../../server/engine/index.js';
import { f64, withArena } from '../../server/engine/arena.js';

const demo = JSON.parse(readFileSync(new URL('../../server/demos/mixer-drive.json', import.meta.url), 'utf8'));

describe('work arena', () => {
  it('a later solve leaves an earlier solution untouched', () => {
    const first = solveModel(demo);
    const snapshot = JSON.stringify(first);
    const other = structuredClone(demo);
    other.torques[0].torque = '-900 N*m';
    other.sections[0].d = '55 mm';
    for (let k = 0; k < 20; k++) solveModel(other);
    expect(JSON.stringify(first)).toBe(snapshot);
    // And the same model solves to the same bytes again.
    expect(JSON.stringify(solveModel(demo))).toBe(snapshot);
  });

  it('hands out zeroed arrays that do not overlap', () => {
    withArena(() => {
      const a = f64(100).fill(1);
      const b = f64(100);
      expect(Array.from(b).every((v) => v === 0)).toBe(true);
      b.fill(2);
      expect(Array.from(a).every((v) => v === 1)).toBe(true);
    });
    withArena(() => {
      const again = f64(100);
      expect(Array.from(again).every((v) => v === 0)).toBe(true);
    });
  });

  it('a model error inside a solve releases the arena for the next solve', () => {
    const bad = structuredClone(demo);
    bad.supports = [];
    bad.couplings = [];
    expect(() => solveModel(bad)).toThrow(/spin freely/);
    expect(solveModel(demo).reactions.length).toBe(demo.supports.length);
  });
});
