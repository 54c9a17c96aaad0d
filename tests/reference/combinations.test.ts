/**
 * Load combinations on a fixed-fixed bar with a prescribed end rotation: each
 * combination's reactions are the factored closed forms of its cases plus the
 * closed form of the prescribed rotation (held in every combination,
 * unfactored), with sparse and dense solvers alike.
 */
import { describe, expect, it } from 'vitest';
import { solveModel } from '../../server/engine/index.js';
import { SOLVERS, expectClose, jSolid, model } from './helpers.js';

// Inputs, SI (invented): a 50 mm steel bar, 2 m between walls, wall B turned by 0.2°.
const G = 79.3e9; // Pa
const J = jSolid(0.05); // m⁴
const L = 2.0; // m
const a = 0.5; // m: the point torque of case "drive"
const T0 = 1200; // N·m
const t0 = 300; // N·m/m, uniform over the bar: case "drag"
const theta = 0.2 * (Math.PI / 180); // rad: prescribed rotation of B

const bar = model('Fixed-fixed bar, two load cases and a prescribed rotation', {
  materials: [{ id: 'steel', G: '79.3 GPa' }],
  sections: [{ id: 'd50', shape: 'solid', d: '50 mm' }],
  shafts: [{ id: 's', segments: [{ length: '2 m', section: 'd50', material: 'steel' }] }],
  supports: [
    { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
    { id: 'B', shaft: 's', at: '2000 mm', kind: 'fixed', rotation: '0.2 deg' },
  ],
  loadCases: [{ id: 'drive' }, { id: 'drag' }],
  torques: [{ id: 'T0', case: 'drive', shaft: 's', at: '500 mm', torque: '1.2 kN*m' }],
  distributedTorques: [{ id: 'w', case: 'drag', shaft: 's', from: 0, to: '2 m', start: '300 N*m/m', end: '300 N*m/m' }],
  combinations: [
    { id: 'service', factors: { drive: 1, drag: 1 } },
    { id: 'factored', factors: { drive: 1.35, drag: -0.5 } },
  ],
});

// Closed forms (Gere & Goodno, Mechanics of Materials, §3.8, from memory; by compatibility):
// point torque T0 at a: R_A = −T0(L − a)/L, R_B = −T0·a/L; uniform t0: R_A = R_B = −t0·L/2;
// wall B turned by θ: the bar carries GJθ/L, so R_A = −GJθ/L, R_B = +GJθ/L.
const assembled = { A: (-G * J * theta) / L, B: (G * J * theta) / L };
const drive = { A: (-T0 * (L - a)) / L, B: (-T0 * a) / L };
const drag = { A: (-t0 * L) / 2, B: (-t0 * L) / 2 };

describe.each(SOLVERS)('fixed-fixed bar with load combinations (%s solver)', (solver) => {
  const sol = solveModel(bar, { solver });
  it.each([
    ['service', 1, 1],
    ['factored', 1.35, -0.5],
  ] as const)('%s: reactions are the assembled state plus the factored cases', (id, fd, fw) => {
    const c = sol.combinations?.find((x) => x.id === id);
    if (!c) throw new Error(`no combination ${id}`);
    for (const s of ['A', 'B'] as const) {
      const expected = assembled[s] + fd * drive[s] + fw * drag[s];
      expectClose(c.reactions.find((r) => r.support === s)?.torque, expected, 1e-9, T0);
    }
  });
  it('the envelope holds the extreme reactions and the combination of each', () => {
    const A = [assembled.A + drive.A + drag.A, assembled.A + 1.35 * drive.A - 0.5 * drag.A];
    const env = sol.envelope?.reactions.find((r) => r.support === 'A');
    expectClose(env?.min, Math.min(...A), 1e-9, T0);
    expectClose(env?.max, Math.max(...A), 1e-9, T0);
    expect(env?.minCombination).toBe(A[0] < A[1] ? 'service' : 'factored');
    expect(env?.maxCombination).toBe(A[0] < A[1] ? 'factored' : 'service');
  });
});
