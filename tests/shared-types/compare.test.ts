/**
 * shared-types/compare.ts: inputs matched by id within each list (never by index), field by field
 * as typed; results matched by meaning, with absolute and relative deltas. The solved cases use the
 * uniform bar fixed at both ends with a point torque T0 at a: reactions T_A = −T0·b/L,
 * T_B = −T0·a/L, b = L − a (Gere & Goodno §3.8, from memory; as in tests/reference/fixed-fixed).
 */
import { describe, expect, it } from 'vitest';
import { compareInputs, compareResults, compareRevisions, RESULT_NOISE } from '../../shared-types/compare.js';
import { solveModel } from '../../server/engine/index.js';
import type { Solution } from '../../shared-types/solution.js';

function bar(at: string, torque = '1000 N*m', extra: Record<string, unknown> = {}) {
  return {
    format: 'shaftnet/1',
    name: 'Fixed-fixed bar (invented)',
    materials: [{ id: 'steel', G: '80 GPa', allowableShear: '100 MPa' }],
    sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
    shafts: [{ id: 's', segments: [{ length: '1 m', section: 'd40', material: 'steel' }] }],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: '1 m', kind: 'fixed' },
    ],
    torques: [{ id: 'T', shaft: 's', at, torque }],
    ...extra,
  };
}

describe('compareInputs', () => {
  it('matches items by id: reordering a list is no change', () => {
    const a = bar('300 mm');
    const b = { ...a, supports: [...a.supports].reverse() };
    expect(compareInputs(a, b)).toEqual([]);
  });

  it('reports a changed field as typed, old → new, by list, item and field', () => {
    const a = bar('300 mm');
    const b = bar('400 mm');
    expect(compareInputs(a, b)).toEqual([{ change: 'changed', list: 'torques', item: 'T', field: 'at', from: '300 mm', to: '400 mm' }]);
    // The typed form counts: "1 m" and "1000 mm" are equal in SI but not as typed.
    const c = { ...a, supports: [a.supports[0], { ...a.supports[1], at: '1000 mm' }] };
    expect(compareInputs(a, c)).toEqual([{ change: 'changed', list: 'supports', item: 'B', field: 'at', from: '1 m', to: '1000 mm' }]);
  });

  it('reports added and removed items whole, and fields added or removed inside an item', () => {
    const a = bar('300 mm');
    const b = {
      ...a,
      torques: [{ id: 'U', shaft: 's', at: '500 mm', torque: '5 N*m' }],
      materials: [{ id: 'steel', G: '80 GPa' }],
      limits: { twistRate: '0.25 deg/m' },
    };
    expect(compareInputs(a, b)).toEqual([
      { change: 'added', list: 'model', item: '', field: 'limits.twistRate', from: null, to: '0.25 deg/m' },
      { change: 'removed', list: 'materials', item: 'steel', field: 'allowableShear', from: '100 MPa', to: null },
      { change: 'removed', list: 'torques', item: 'T', field: '', from: a.torques[0], to: null },
      { change: 'added', list: 'torques', item: 'U', field: '', from: null, to: b.torques[0] },
    ]);
  });

  it('walks arrays without ids by position (segments, layers) and nested objects by field', () => {
    const a = bar('300 mm');
    const b = { ...a, shafts: [{ id: 's', segments: [{ length: '1 m', section: 'd40', material: 'steel' }, { length: '0.2 m', section: 'd40', material: 'steel' }] }] };
    expect(compareInputs(a, b)).toEqual([
      { change: 'added', list: 'shafts', item: 's', field: 'segments[1].length', from: null, to: '0.2 m' },
      { change: 'added', list: 'shafts', item: 's', field: 'segments[1].section', from: null, to: 'd40' },
      { change: 'added', list: 'shafts', item: 's', field: 'segments[1].material', from: null, to: 'steel' },
    ]);
    const m1 = { gearMeshes: [{ id: 'G', a: { shaft: 's', at: 0, radius: '40 mm' }, b: { shaft: 't', at: 0, radius: '80 mm' }, sense: 'opposite' }] };
    const m2 = { gearMeshes: [{ id: 'G', a: { shaft: 's', at: 0, radius: '40 mm' }, b: { shaft: 't', at: 0, radius: '90 mm' }, sense: 'opposite' }] };
    expect(compareInputs(m1, m2)).toEqual([{ change: 'changed', list: 'gearMeshes', item: 'G', field: 'b.radius', from: '80 mm', to: '90 mm' }]);
  });

  it('two identical models differ in nothing', () => {
    expect(compareInputs(bar('300 mm'), bar('300 mm'))).toEqual([]);
  });
});

describe('compareResults', () => {
  it('reports the reactions that moved with the closed-form deltas', () => {
    const s1 = solveModel(bar('300 mm')) as Solution;
    const s2 = solveModel(bar('400 mm')) as Solution;
    const changes = compareResults(s1, s2);
    const A = changes.find((c) => c.quantity === 'reaction' && c.item === 'A')!;
    // T_A = −T0·b/L: −700 → −600 N·m (T0 = 1000 N·m, L = 1 m).
    expect(A.from).toBeCloseTo(-700, 9);
    expect(A.to).toBeCloseTo(-600, 9);
    expect(A.delta).toBeCloseTo(100, 9);
    expect(A.relative).toBeCloseTo(100 / 700, 12);
    expect(A.unit).toBe('N·m');
    const B = changes.find((c) => c.quantity === 'reaction' && c.item === 'B')!;
    expect(B.delta).toBeCloseTo(-100, 9); // −300 → −400
    // The peak torque of the one segment is max(|T_A|, |T_B|): 700 → 600 N·m.
    const peak = changes.find((c) => c.quantity === 'peakTorque' && c.item === 's[0]')!;
    expect(peak.from).toBeCloseTo(700, 9);
    expect(peak.to).toBeCloseTo(600, 9);
    // Peak stress τ = T·r/J with r = 0.02 m, J = π·0.04⁴/32: scales with the peak torque.
    const tau = changes.find((c) => c.quantity === 'peakShear' && c.item === 's[0] steel')!;
    const J = (Math.PI * 0.04 ** 4) / 32;
    expect(tau.from! / ((700 * 0.02) / J)).toBeCloseTo(1, 12);
    expect(tau.relative).toBeCloseTo(-100 / 700, 12);
    expect(changes.some((c) => c.quantity === 'utilisation' && c.item === 's[0] steel')).toBe(true);
  });

  it('lists nothing for equal solutions, and null sides for a missing solution', () => {
    const s = solveModel(bar('300 mm')) as Solution;
    expect(compareResults(s, solveModel(bar('300 mm')) as Solution)).toEqual([]);
    const gone = compareResults(s, null);
    const A = gone.find((c) => c.quantity === 'reaction' && c.item === 'A')!;
    expect(A.to).toBeNull();
    expect(A.delta).toBeNull();
    expect(A.relative).toBeNull();
  });

  it('relative is null where the old value is zero; noise below RESULT_NOISE is no change', () => {
    const changes = compareResults({ reactions: [{ support: 'A', torque: 0 }, { support: 'B', torque: 1 }] }, { reactions: [{ support: 'A', torque: 5 }, { support: 'B', torque: 1 + RESULT_NOISE / 4 }] });
    expect(changes).toEqual([{ quantity: 'reaction', item: 'A', unit: 'N·m', from: 0, to: 5, delta: 5, relative: null }]);
  });

  it('compares overload factors, combinations and frequencies where present', () => {
    const changes = compareResults(
      { overload: { firstYieldFactor: 2, collapseFactor: 3 }, combinations: [{ id: 'peak', reactions: [{ support: 'A', torque: -10 }] }], modes: [{ frequency: 40 }, { frequency: 90 }] },
      { overload: { firstYieldFactor: 2, collapseFactor: 2.5 }, combinations: [{ id: 'peak', reactions: [{ support: 'A', torque: -12 }] }], modes: [{ frequency: 40 }, { frequency: 99 }] },
    );
    expect(changes.map((c) => [c.quantity, c.item, c.delta])).toEqual([
      ['collapseFactor', 'loads', -0.5],
      ['reaction', 'peak: A', -2],
      ['frequency', 'mode 2', 9],
    ]);
  });
});

describe('compareRevisions', () => {
  it('answers inputs and results together', () => {
    const a = bar('300 mm');
    const b = bar('300 mm', '1200 N*m');
    const c = compareRevisions({ model: a, solution: solveModel(a) as Solution }, { model: b, solution: solveModel(b) as Solution });
    expect(c.inputs).toEqual([{ change: 'changed', list: 'torques', item: 'T', field: 'torque', from: '1000 N*m', to: '1200 N*m' }]);
    // T_A = −T0·b/L = −0.7·T0: −700 → −840 N·m.
    const A = c.results.find((r) => r.quantity === 'reaction' && r.item === 'A')!;
    expect(A.delta).toBeCloseTo(-140, 9);
    expect(A.relative).toBeCloseTo(-0.2, 12);
  });
});
