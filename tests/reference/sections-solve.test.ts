/**
 * The new section shapes, tapered segments and stress raisers end to end through solveModel
 * (sparse and dense): each expected number is worked out here from its closed form, from the
 * inputs alone, and its source is named beside it (tests/reference/SOURCES.md lists them).
 */
import { describe, expect, it } from 'vitest';
import { solveModel } from '../../server/engine/index.js';
import type { Solution } from '../../shared-types/solution.js';
import { jSolid, SOLVERS } from './helpers.js';

const G = 80e9; // Pa, steel (any value: every check is a closed form in G)
const close = (got: number, want: number, rel: number) => expect(Math.abs(got - want), `got ${got}, want ${want}`).toBeLessThanOrEqual(rel * Math.abs(want));

/**
 * The rectangle's series, summed plainly here (Saint-Venant's solution; Timoshenko & Goodier,
 * torsion of a rectangular bar, from memory): J = β h b³, τmax = G θ b k at the middle of the long side.
 */
function rectangleSeries(b: number, h: number): { J: number; k: number } {
  // Σ_{n odd} tanh(x_n)/n⁵ = (31/32)ζ(5) − Σ (1 − tanh x_n)/n⁵, ζ(5) = 1.036927755143369926… (the
  // tabulated value of the zeta function): the plain sum of tanh/n⁵ to n = 200 misses a tail of
  // Σ 1/n⁵ of about 1e-10, 2e-11 of J; the rest decays like e^{−nπh/b}.
  let sT = (31 / 32) * 1.036927755143369926;
  let sC = 0;
  for (let n = 1; n < 200; n += 2) {
    const e = Math.exp(-(n * Math.PI * h) / b); // e^{−2x_n}
    sT -= (2 * e) / (1 + e) / n ** 5;
    sC += 1 / (n * n * Math.cosh((n * Math.PI * h) / (2 * b)));
  }
  const beta = (1 - ((192 / Math.PI ** 5) * b * sT) / h) / 3;
  return { J: beta * h * b ** 3, k: 1 - (8 / Math.PI ** 2) * sC };
}

/** F(z) = ∫₀ᶻ dζ/J(ζ) of a solid linear taper from dA (Gere & Goodno, tapered bar, from memory). */
function taperF(dA: number, dB: number, L: number, z: number): number {
  const d = dA + ((dB - dA) * z) / L;
  return ((32 / Math.PI) * z * (d * d + d * dA + dA * dA)) / (3 * dA ** 3 * d ** 3);
}

function model(sections: unknown[], segments: unknown[], rest: Record<string, unknown>): unknown {
  return {
    format: 'shaftnet/1',
    name: 'reference',
    materials: [{ id: 'steel', G, allowableShear: 100e6 }],
    sections,
    shafts: [{ id: 's', segments }],
    ...rest,
  };
}

describe.each(SOLVERS)('%s solver', (solver) => {
  const solve = (m: unknown): Solution => (solver === 'sparse' ? solveModel(m) : solveModel(m, { solver: 'dense' }));

  it('a rectangular bar 60 × 20 mm fixed at both ends with an interior torque: reactions T(L − a)/L and T·a/L, φ(a) = T a (L − a)/(G J L), τ = T/(J/(b k))', () => {
    const L = 0.8; // m
    const a = 0.3; // m
    const T = 600; // N·m
    const { J, k } = rectangleSeries(0.02, 0.06);
    const sol = solve(
      model([{ id: 'bar', shape: 'rectangle', width: 0.06, height: 0.02 }], [{ length: L, section: 'bar', material: 'steel' }], {
        supports: [
          { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
          { id: 'B', shaft: 's', at: L, kind: 'fixed' },
        ],
        torques: [{ id: 'T', shaft: 's', at: a, torque: T }],
      }),
    );
    // Closed form: the two parts in parallel, each reaction by the other part's flexibility.
    close(sol.reactions[0].torque, (-T * (L - a)) / L, 1e-12);
    close(sol.reactions[1].torque, (-T * a) / L, 1e-12);
    close(sol.shafts[0].stations[1].rotation, (T * a * (L - a)) / (G * J * L), 1e-11);
    const seg = sol.shafts[0].segments[0];
    close(seg.torsionConstant, J, 1e-12);
    close(seg.torsionalModulus as number, J / (0.02 * k), 1e-12);
    close(seg.polarMoment as number, (0.06 * 0.02 * (0.06 ** 2 + 0.02 ** 2)) / 12, 1e-12);
    // τmax = T_max / Wt, Wt = J/(b k); T_max = T(L − a)/L on the part from 0 to a.
    close(seg.layers[0].maxShear, ((T * (L - a)) / L) * ((0.02 * k) / J), 1e-11);
  });

  it('a thin rectangular tube 80 × 60 × 3 mm as a cantilever: Bredt–Batho twist T L s/(4 A_m² t G) and τ = T/(2 A_m t)', () => {
    const L = 1.2; // m
    const T = 2000; // N·m
    const t = 0.003;
    const Am = (0.08 - t) * (0.06 - t); // centre line, m²
    const s = 2 * (0.08 - t + (0.06 - t)); // m
    const sol = solve(
      model([{ id: 'box', shape: 'rectangularTube', width: '80 mm', height: '60 mm', wall: '3 mm' }], [{ length: L, section: 'box', material: 'steel' }], {
        supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
        torques: [{ id: 'T', shaft: 's', at: L, torque: T }],
      }),
    );
    close(sol.shafts[0].stations[1].rotation, (T * L * s) / (4 * Am * Am * t * G), 1e-12);
    close(sol.shafts[0].segments[0].layers[0].maxShear, T / (2 * Am * t), 1e-12);
    expect(sol.warnings).toEqual([]);
  });

  it('a solid taper 60 → 40 mm fixed at both ends with a torque inside it: reactions by the flexibilities F(a) and F(L) − F(a), peak τ at the governing end', () => {
    const L = 0.5; // m
    const a = 0.2; // m, inside the taper: it is cut into two sub-tapers there
    const T = 1500; // N·m
    const dA = 0.06;
    const dB = 0.04;
    const sol = solve(
      model(
        [
          { id: 'd60', shape: 'solid', d: dA },
          { id: 'd40', shape: 'solid', d: dB },
        ],
        [{ length: L, section: 'd60', sectionEnd: 'd40', material: 'steel' }],
        {
          supports: [
            { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
            { id: 'B', shaft: 's', at: L, kind: 'fixed' },
          ],
          torques: [{ id: 'T', shaft: 's', at: a, torque: T }],
        },
      ),
    );
    const f1 = taperF(dA, dB, L, a) / G;
    const f2 = (taperF(dA, dB, L, L) - taperF(dA, dB, L, a)) / G;
    close(sol.reactions[0].torque, (-T * f2) / (f1 + f2), 1e-12);
    close(sol.reactions[1].torque, (-T * f1) / (f1 + f2), 1e-12);
    close(sol.shafts[0].stations[1].rotation, (T * f1 * f2) / (f1 + f2), 1e-12);
    const seg = sol.shafts[0].segments[0];
    close(seg.stiffness, G / taperF(dA, dB, L, L), 1e-13);
    close(seg.torsionConstant, jSolid(dA), 1e-14);
    close(seg.torsionConstantEnd as number, jSolid(dB), 1e-14);
    close(seg.torsionalRigidityEnd as number, G * jSolid(dB), 1e-14);
    expect(seg.sectionEnd).toBe('d40');
    // |T| is constant on each part, d falls along z: τ = 16T/(πd³) peaks at z = a (left part) or L (right part).
    const dAt = (z: number) => dA + ((dB - dA) * z) / L;
    const left = (16 * Math.abs((T * f2) / (f1 + f2))) / (Math.PI * dAt(a) ** 3);
    const right = (16 * Math.abs((T * f1) / (f1 + f2))) / (Math.PI * dB ** 3);
    close(seg.layers[0].maxShear, Math.max(left, right), 1e-12);
    close(seg.governingZ, left > right ? a : L, 1e-12);
    // Twist rate |T|/(G J(z)), J = πd⁴/32: also largest at z = a or at the small end.
    const rate = Math.max(Math.abs((T * f2) / (f1 + f2)) / (G * jSolid(dAt(a))), Math.abs((T * f1) / (f1 + f2)) / (G * jSolid(dB)));
    close(seg.maxTwistRate, rate, 1e-12);
    // The diagram's τ follows 16T/(πd(z)³) inside the taper (not the start section's factor).
    const d = sol.shafts[0].diagram;
    const m = d.z.findIndex((z) => z > 0 && z < a);
    close(d.shear[m], (16 * d.torque[m]) / (Math.PI * dAt(d.z[m]) ** 3), 1e-12);
  });

  it('a solid taper 60 → 20 mm under a uniform distributed torque, fixed at its wide end: τ and the twist rate peak inside, where d/dz of T/d³ and T/d⁴ vanish', () => {
    const L = 1; // m
    const t = 400; // N·m/m
    const dA = 0.06;
    const dB = 0.02;
    const sol = solve(
      model(
        [
          { id: 'd60', shape: 'solid', d: dA },
          { id: 'd20', shape: 'solid', d: dB },
        ],
        [{ length: L, section: 'd60', sectionEnd: 'd20', material: 'steel' }],
        { supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }], distributedTorques: [{ id: 'q', shaft: 's', from: 0, to: L, start: t, end: t }] },
      ),
    );
    // Closed form (statics): T(z) = t (L − z); d(z) = dA + s z, s = (dB − dA)/L.
    // τ = 16 T/(π d³) peaks where −d − 3s(L − z) = 0: z = (dA + 3sL)/(2s) = 0.75 m, d = 30 mm.
    // θ = 32 T/(G π d⁴) peaks where −d − 4s(L − z) = 0: z = (dA + 4sL)/(3s) = 0.8333 m, d = 26.67 mm.
    const s = (dB - dA) / L;
    const zTau = (dA + 3 * s * L) / (2 * s);
    const zRate = (dA + 4 * s * L) / (3 * s);
    const d = (z: number) => dA + s * z;
    const seg = sol.shafts[0].segments[0];
    close(seg.governingZ, zTau, 1e-12);
    close(seg.layers[0].maxShear, (16 * t * (L - zTau)) / (Math.PI * d(zTau) ** 3), 1e-12);
    close(seg.maxTwistRate, (32 * t * (L - zRate)) / (G * Math.PI * d(zRate) ** 4), 1e-12);
    close(sol.reactions[0].torque, -t * L, 1e-12);
  });

  it('a torque inside a taper and the same taper cut there into two segments give the same answer', () => {
    const taper = (segments: unknown[], extra: unknown[] = []) =>
      solve(
        model([{ id: 'h70', shape: 'hollow', d: 0.07, di: 0.04 }, { id: 'h45', shape: 'hollow', d: 0.045, di: 0.02 }, ...extra], segments, {
          supports: [
            { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
            { id: 'B', shaft: 's', at: 0.6, kind: 'spring', stiffness: 5e4 },
          ],
          torques: [{ id: 'T', shaft: 's', at: 0.25, torque: 900 }],
          distributedTorques: [{ id: 'q', shaft: 's', from: 0.1, to: 0.5, start: -300, end: 200 }],
        }),
      );
    const whole = taper([{ length: 0.6, section: 'h70', sectionEnd: 'h45', material: 'steel' }]);
    // The section at 0.25 m by linear interpolation of both diameters (the taper's definition).
    const f = 0.25 / 0.6;
    const mid = { id: 'mid', shape: 'hollow', d: 0.07 + (0.045 - 0.07) * f, di: 0.04 + (0.02 - 0.04) * f };
    const cut = taper(
      [
        { length: 0.25, section: 'h70', sectionEnd: 'mid', material: 'steel' },
        { length: 0.35, section: 'mid', sectionEnd: 'h45', material: 'steel' },
      ],
      [mid],
    );
    expect(cut.shafts[0].stations.length).toBe(whole.shafts[0].stations.length);
    whole.shafts[0].stations.forEach((st, i) => {
      const other = cut.shafts[0].stations[i];
      expect(Math.abs(other.rotation - st.rotation)).toBeLessThanOrEqual(1e-12 * Math.abs(whole.shafts[0].stations[3].rotation));
    });
    close(cut.reactions[0].torque, whole.reactions[0].torque, 1e-12);
    const peak = Math.max(...cut.shafts[0].segments.map((g) => g.layers[0].maxShear));
    close(peak, whole.shafts[0].segments[0].layers[0].maxShear, 1e-11);
  });

  it('a shoulder 60 → 40 mm with a 4 mm fillet: local peak = Kts·16T/(πd³), Kts from the fit, checked beside the nominal', () => {
    const T = 700; // N·m
    const D = 0.06;
    const d = 0.04;
    const r = 0.004;
    const sol = solve(
      model(
        [
          { id: 'd60', shape: 'solid', d: D },
          { id: 'd40', shape: 'solid', d },
        ],
        [
          { length: 0.3, section: 'd60', material: 'steel' },
          { length: 0.2, section: 'd40', material: 'steel' },
        ],
        {
          supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
          torques: [{ id: 'T', shaft: 's', at: 0.5, torque: T }],
          stressRaisers: [{ id: 'F1', shaft: 's', at: 0.3, kind: 'shoulder', fillet: r, note: 'fillet at the bearing seat' }],
        },
      ),
    );
    // The fit (Pilkey & Pilkey, Chart 3.12 as reproduced at amesweb.info; server/engine/stress-raisers.ts):
    const h = (D - d) / 2;
    const q = Math.sqrt(h / r);
    const c1 = 0.905 + 0.783 * q - 0.075 * (h / r);
    const c2 = -0.437 - 1.969 * q + 0.553 * (h / r);
    const c3 = 1.557 + 1.073 * q - 0.578 * (h / r);
    const c4 = -1.061 + 0.171 * q + 0.086 * (h / r);
    const x = (2 * h) / D;
    const Kts = c1 + c2 * x + c3 * x * x + c4 * x ** 3;
    const nominal = (16 * T) / (Math.PI * d ** 3); // on the smaller side
    const raiser = (sol.stressRaisers ?? [])[0];
    expect(raiser).toMatchObject({ id: 'F1', shaft: 's', kind: 'shoulder', material: 'steel', allowableShear: 100e6, note: 'fillet at the bearing seat' });
    close(raiser.factor, Kts, 1e-14);
    close(raiser.nominalShear, nominal, 1e-12);
    close(raiser.localPeak, Kts * nominal, 1e-12);
    close(raiser.utilisation as number, (Kts * nominal) / 100e6, 1e-12);
    const check = sol.checks.find((c) => c.kind === 'localPeak');
    expect(check).toMatchObject({ shaft: 's', raiser: 'F1', material: 'steel', limit: 100e6, pass: true });
    close(check?.value as number, Kts * nominal, 1e-12);
    // Nominal results are unchanged: the small segment's stress is still 16T/(πd³).
    close(sol.shafts[0].segments[1].layers[0].maxShear, nominal, 1e-12);
  });

  it('a user factor in the middle of a segment multiplies that segment\'s nominal stress', () => {
    const T = 300;
    const sol = solve(
      model([{ id: 'd30', shape: 'solid', d: 0.03 }], [{ length: 0.4, section: 'd30', material: 'steel' }], {
        supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
        torques: [{ id: 'T', shaft: 's', at: 0.4, torque: T }],
        stressRaisers: [{ id: 'K1', shaft: 's', at: 0.15, kind: 'factor', factor: 2.2, note: 'keyseat' }],
      }),
    );
    const raiser = (sol.stressRaisers ?? [])[0];
    close(raiser.nominalShear, (16 * T) / (Math.PI * 0.03 ** 3), 1e-12);
    close(raiser.localPeak, (2.2 * 16 * T) / (Math.PI * 0.03 ** 3), 1e-12);
  });
});

describe('a model without the new items', () => {
  it('has none of the new keys (the solution is as before)', () => {
    const sol = solveModel(
      model([{ id: 'd30', shape: 'solid', d: 0.03 }], [{ length: 0.4, section: 'd30', material: 'steel' }], {
        supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
        torques: [{ id: 'T', shaft: 's', at: 0.4, torque: 100 }],
      }),
    );
    expect('stressRaisers' in sol).toBe(false);
    const seg = sol.shafts[0].segments[0];
    for (const key of ['sectionEnd', 'torsionConstantEnd', 'torsionalRigidityEnd', 'polarMoment', 'torsionalModulus']) expect(key in seg, key).toBe(false);
    for (const c of sol.checks) expect('raiser' in c).toBe(false);
  });
});
