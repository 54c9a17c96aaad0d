/**
 * The engine takes its small work arrays from a reused arena (server/engine/arena.ts).
 * Nothing from the arena may reach a solution: a later solve must not change an earlier answer.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { solveModel } from '../../server/engine/index.js';
import { f64, i32, largeBytesUsed, release, withArena } from '../../server/engine/arena.js';

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

  it('a large array given back is reused zeroed by a later one that fits; only once, and only from its start', () => {
    const n = 100_000; // 800 kB: over the small-array limit, from the slab
    withArena(() => {
      const a = f64(n).fill(7);
      const b = f64(n).fill(8);
      const used = largeBytesUsed();
      release(b.subarray(1000)); // not the start of a region: ignored
      release(a);
      release(a); // twice: ignored
      const c = i32(n); // fits in a's place
      expect(largeBytesUsed()).toBe(used);
      expect(c.buffer).toBe(a.buffer);
      expect(c.byteOffset).toBe(a.byteOffset);
      expect(Array.from(c.subarray(0, 5))).toEqual([0, 0, 0, 0, 0]);
      expect(c.every((v) => v === 0)).toBe(true);
      const d = f64(n); // a's place is taken, b's was never given back: fresh space
      expect(largeBytesUsed()).toBeGreaterThan(used);
      expect(d.every((v) => v === 0)).toBe(true);
      expect(b.every((v) => v === 8)).toBe(true);
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
