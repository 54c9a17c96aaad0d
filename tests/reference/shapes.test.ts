/**
 * Section properties of the non-circular shapes (server/engine/shapes.ts) against published
 * tables and closed forms. Nothing here reads the engine's coefficients to build an expectation:
 * the series and closed forms are written out again from their sources.
 */
import { describe, expect, it } from 'vitest';
import { rectangleCoefficients, sectionProperties } from '../../server/engine/shapes.js';
import { expectClose, expectPublished } from './helpers.js';

// The coefficients of Saint-Venant's solution for rectangular bars as tabulated by Timoshenko &
// Goodier (Theory of Elasticity, torsion of rectangular bars) and reproduced in Beer & Johnston,
// Mechanics of Materials, Table 3.1 (c1 = k1, c2 = k) — both recalled from memory; the copy
// consulted for the digits is "Appendix II, It and Wt formulas for different types of
// cross-sectional shapes of members in torsion", https://www.scribd.com/doc/149903883/Anexa-bmom:
// rectangle h × b (h ≥ b), It = k·h·b³, Wt = k1·h·b², printed to three decimals.
const APPENDIX_II_RECTANGLE: readonly { hb: number; k: number; k1: number }[] = [
  { hb: 1.0, k: 0.141, k1: 0.208 },
  { hb: 1.5, k: 0.196, k1: 0.231 },
  { hb: 2.0, k: 0.229, k1: 0.246 },
  { hb: 3.0, k: 0.263, k1: 0.267 },
  { hb: 4.0, k: 0.281, k1: 0.282 },
];

describe('rectangle: published coefficients', () => {
  for (const row of APPENDIX_II_RECTANGLE) {
    it(`h/b = ${row.hb}: It = ${row.k}·h·b³ and Wt = ${row.k1}·h·b² (Appendix II table)`, () => {
      const b = 0.02; // m
      const h = row.hb * b;
      const p = sectionProperties({ shape: 'rectangle', width: h, height: b });
      // Appendix II: It = k h b³, at its printed rounding (half a unit of the third decimal)
      expectPublished(p.torsionConstant / (h * b ** 3), row.k, 0.0005);
      // Appendix II: Wt = k1 h b², τmax = T/Wt at the middle of the long side
      expectPublished(p.torsionalModulus / (h * b * b), row.k1, 0.0005);
      expect(p.peakAt).toEqual({ x: 0, y: b / 2 });
    });
  }

  it('tends to 1/3 for a slender bar (Appendix II, h/b → ∞: 0.33)', () => {
    // Appendix II: k = k1 = 0.33 for t << h; closed-form limit 1/3 (J = h t³/3)
    const c = rectangleCoefficients(1e6);
    expectPublished(c.beta, 0.33, 0.005);
    // closed form: β = (1/3)(1 − (192/π⁵)(b/h)·λ(5)) when every tanh is 1, λ(5) = (31/32)ζ(5)
    expectClose(c.beta, (1 - ((192 / Math.PI ** 5) * (31 / 32) * 1.0369277551433699) / 1e6) / 3, 1e-14);
    expectClose(c.alpha, c.beta, 1e-12);
  });
});

describe('rectangle: the series itself, summed plainly', () => {
  // Closed form (Saint-Venant's series as printed in Timoshenko & Goodier, from memory), summed here
  // term by term with Math.tanh and Math.cosh to n = 200001: the tail after N is below 1/(8N⁴)
  // for the tanh sum (< 1e-22) and decays like e^{−nπ h/2b} for the cosh sum.
  function plain(hb: number): { beta: number; k: number } {
    let st = 0;
    let sc = 0;
    for (let n = 200001; n >= 1; n -= 2) {
      const x = (n * Math.PI * hb) / 2;
      st += Math.tanh(x) / n ** 5;
      sc += x > 700 ? 0 : 1 / (n * n * Math.cosh(x));
    }
    return { beta: (1 - (192 / Math.PI ** 5) * st / hb) / 3, k: 1 - (8 / Math.PI ** 2) * sc };
  }
  for (const hb of [1, 1.3, 2.5, 7, 40]) {
    it(`h/b = ${hb}: β and k to 1e-13`, () => {
      const c = rectangleCoefficients(hb);
      const e = plain(hb);
      expectClose(c.beta, e.beta, 1e-13);
      expectClose(c.k, e.k, 1e-13);
      expectClose(c.alpha, e.beta / e.k, 1e-13);
    });
  }
});

describe('ellipse', () => {
  it('J = π a³c³/(a² + c²) and Wt = π a c²/2 (Appendix II ellipse row; Timoshenko & Goodier, from memory)', () => {
    const a = 0.03; // semi-major, m
    const c = 0.02; // semi-minor, m
    const p = sectionProperties({ shape: 'ellipse', width: 2 * a, height: 2 * c });
    // closed form: J = π a³ c³ / (a² + c²)
    expectClose(p.torsionConstant, (Math.PI * a ** 3 * c ** 3) / (a * a + c * c), 1e-14);
    // closed form: τmax = 2T/(π a c²) at the ends of the minor axis
    expectClose(p.torsionalModulus, (Math.PI * a * c * c) / 2, 1e-14);
    // closed form: Ip = π a c (a² + c²)/4
    expectClose(p.polarMoment, (Math.PI * a * c * (a * a + c * c)) / 4, 1e-14);
    expect(p.peakAt).toEqual({ x: 0, y: c });
  });

  it('a circle is the round bar: J = Ip = π r⁴/2, Wt = π r³/2 (elastic torsion formula)', () => {
    const r = 0.025;
    const p = sectionProperties({ shape: 'ellipse', width: 2 * r, height: 2 * r });
    expectClose(p.torsionConstant, (Math.PI * r ** 4) / 2, 1e-14);
    expectClose(p.polarMoment, (Math.PI * r ** 4) / 2, 1e-14);
    expectClose(p.torsionalModulus, (Math.PI * r ** 3) / 2, 1e-14);
  });
});

describe('rectangular tube (Bredt–Batho on the centre line)', () => {
  it('80 × 60 mm, wall 4 mm: J = 4A_m²t/s, τ = T/(2A_m t), exact hollow-rectangle Ip', () => {
    const w = 0.08;
    const h = 0.06;
    const t = 0.004;
    const p = sectionProperties({ shape: 'rectangularTube', width: w, height: h, wall: t });
    const bm = w - t;
    const hm = h - t;
    // Appendix II, thin-walled rectangular tube: It = 2 b² h² / (b/t1 + h/t2) on the centre line,
    // Wt = 2 b h t_min (Bredt–Batho; also Gere & Goodno, thin-walled tubes, from memory)
    expectClose(p.torsionConstant, (2 * bm * bm * hm * hm) / (bm / t + hm / t), 1e-14);
    expectClose(p.torsionalModulus, 2 * bm * hm * t, 1e-14);
    // closed form: Ip = (w h (w² + h²) − wi hi (wi² + hi²))/12, wi = w − 2t, hi = h − 2t
    const wi = w - 2 * t;
    const hi = h - 2 * t;
    expectClose(p.polarMoment, (w * h * (w * w + h * h) - wi * hi * (wi * wi + hi * hi)) / 12, 1e-13);
    // contract (Overload): closed thin wall T_p = 2 A_m t τ_y
    expectClose(p.plasticModulus, 2 * bm * hm * t, 1e-14);
    expect(p.warnings).toEqual([]);
  });
});

describe('thin open section', () => {
  it('channel 80 × 5 web and two 40 × 4 flanges: J = Σ b t³/3, τmax = T t_max/J (Appendix II open-section row)', () => {
    const walls = [
      { length: 0.08, thickness: 0.005 },
      { length: 0.04, thickness: 0.004 },
      { length: 0.04, thickness: 0.004 },
    ];
    const p = sectionProperties({ shape: 'thinOpen', walls, polarMoment: 3.1e-7 });
    // Appendix II: It = (1/3) Σ h_i t_i³, τmax where t is largest
    const J = (0.08 * 0.005 ** 3 + 2 * 0.04 * 0.004 ** 3) / 3;
    expectClose(p.torsionConstant, J, 1e-14);
    expectClose(p.torsionalModulus, J / 0.005, 1e-14);
    // contract (Overload): open section T_p = Σ τ_y b t²/2
    expectClose(p.plasticModulus, (0.08 * 0.005 ** 2 + 2 * 0.04 * 0.004 ** 2) / 2, 1e-14);
    expect(p.polarMoment).toBe(3.1e-7);
    expect(p.warnings.map((w) => w.kind)).toEqual(['openSectionWarping']);
  });
});

describe('rectangle plastic modulus', () => {
  it('T_p = τ_y b²(3h − b)/6 (contract, Overload; Nadai sand-heap result, from memory)', () => {
    const p = sectionProperties({ shape: 'rectangle', width: 0.02, height: 0.06 });
    expectClose(p.plasticModulus, (0.02 ** 2 * (3 * 0.06 - 0.02)) / 6, 1e-14);
    // a tall bar: the long side is vertical, the peak is at the middle of it
    expect(p.peakAt).toEqual({ x: 0.01, y: 0 });
  });
});
