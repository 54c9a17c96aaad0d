/**
 * The engine takes its work arrays from a workspace its caller may hold
 * (server/engine/workspace.ts). Nothing from the workspace may reach a
 * solution: a later solve must not change an earlier answer, whether each
 * solve makes its own workspace or all share one.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { solveModel, Workspace } from '../../server/engine/index.js';

const demo = JSON.parse(readFileSync(new URL('../../server/demos/mixer-drive.json', import.meta.url), 'utf8'));

describe('work memory', () => {
  it.each([
    ['its own workspace per solve', () => undefined],
    ['one workspace held by the caller', (() => {
      const ws = new Workspace();
      return () => ws;
    })()],
  ])('a later solve leaves an earlier solution untouched (%s)', (_name, workspace) => {
    const first = solveModel(demo, { workspace: workspace() });
    const snapshot = JSON.stringify(first);
    const other = structuredClone(demo);
    other.torques[0].torque = '-900 N*m';
    other.sections[0].d = '55 mm';
    for (let k = 0; k < 20; k++) solveModel(other, { workspace: workspace() });
    expect(JSON.stringify(first)).toBe(snapshot);
    // And the same model solves to the same bytes again.
    expect(JSON.stringify(solveModel(demo, { workspace: workspace() }))).toBe(snapshot);
  });

  it('hands out zeroed arrays that do not overlap, in one session and the next', () => {
    const ws = new Workspace();
    const first = ws.session(() => {
      const a = ws.f64(100).fill(1);
      const b = ws.f64(100);
      expect(Array.from(b).every((v) => v === 0)).toBe(true);
      b.fill(2);
      expect(Array.from(a).every((v) => v === 1)).toBe(true);
      return a;
    });
    ws.session(() => {
      const again = ws.f64(100); // the same memory as `first`, which holds ones
      expect(again.buffer).toBe(first.buffer);
      expect(again.byteOffset).toBe(first.byteOffset);
      expect(Array.from(again).every((v) => v === 0)).toBe(true);
    });
  });

  it('a large array given back is reused zeroed by a later one that fits; only once, and only from its start', () => {
    const n = 100_000; // 800 kB: over the small-array limit, from the slab
    const ws = new Workspace();
    ws.session(() => {
      const a = ws.f64(n).fill(7);
      const b = ws.f64(n).fill(8);
      const used = ws.largeBytesUsed();
      ws.release(b.subarray(1000)); // not the start of a region: ignored
      ws.release(a);
      ws.release(a); // twice: ignored
      const c = ws.i32(n); // fits in a's place
      expect(ws.largeBytesUsed()).toBe(used);
      expect(c.buffer).toBe(a.buffer);
      expect(c.byteOffset).toBe(a.byteOffset);
      expect(c.every((v) => v === 0)).toBe(true);
      const d = ws.f64(n); // a's place is taken, b's was never given back: fresh space
      expect(ws.largeBytesUsed()).toBeGreaterThan(used);
      expect(d.every((v) => v === 0)).toBe(true);
      expect(b.every((v) => v === 8)).toBe(true);
    });
  });

  it('a stage gives back what it took and did not return, and keeps what its result holds', () => {
    const n = 100_000;
    const ws = new Workspace();
    ws.session(() => {
      const result = ws.stage(() => {
        const scratch = ws.f64(n).fill(3);
        const kept = ws.f64(n).fill(4);
        const inner = ws.i32(n).fill(5);
        const part = ws.f64(2 * n).fill(6);
        expect(scratch[0]).toBe(3);
        // Held directly, one plain object deep, and as a subarray from inside its region.
        return { kept, nested: { inner }, part: part.subarray(10, 20) };
      });
      const used = ws.largeBytesUsed();
      const next = ws.f64(n); // takes the scratch's place, not a held array's
      expect(ws.largeBytesUsed()).toBe(used);
      expect(next.every((v) => v === 0)).toBe(true);
      expect(result.kept.every((v) => v === 4)).toBe(true);
      expect(result.nested.inner.every((v) => v === 5)).toBe(true);
      expect(result.part.every((v) => v === 6)).toBe(true);
      const another = ws.f64(n); // nothing else was given back
      expect(ws.largeBytesUsed()).toBeGreaterThan(used);
      expect(another.every((v) => v === 0)).toBe(true);
    });
  });

  it('outside a session, arrays are allocated as usual and release is ignored', () => {
    const ws = new Workspace();
    const a = ws.f64(100_000);
    ws.release(a);
    expect(a.length).toBe(100_000);
    expect(ws.largeBytesUsed()).toBe(0);
    expect(ws.keptBytes()).toBe(0);
  });

  it('a workspace busy with a solve is not shared: a solve inside another makes its own', () => {
    const ws = new Workspace();
    const inner = ws.session(() => {
      expect(ws.busy).toBe(true);
      return JSON.stringify(solveModel(demo, { workspace: ws }));
    });
    expect(inner).toBe(JSON.stringify(solveModel(demo)));
    expect(() => ws.session(() => ws.session(() => 0))).toThrow(/already in a session/);
  });

  it('a model error inside a solve ends the session: the workspace serves the next solve', () => {
    const ws = new Workspace();
    const bad = structuredClone(demo);
    bad.supports = [];
    bad.couplings = [];
    expect(() => solveModel(bad, { workspace: ws })).toThrow(/spin freely/);
    expect(ws.busy).toBe(false);
    expect(solveModel(demo, { workspace: ws }).reactions.length).toBe(demo.supports.length);
  });
});
