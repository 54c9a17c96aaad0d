/**
 * Properties of the pure section, taper and stress-raiser modules: input problems with their
 * fields, warnings, invariances and identities that must hold for any input. Seeded inputs;
 * tolerances are round-off allowances (double precision), common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { rectangleCoefficients, sectionProperties, shapeProblems, type ShapeInput } from '../../server/engine/shapes.js';
import {
  consistentLoads,
  integrate,
  shapeFunction,
  taperFlexibility,
  taperProblems,
  taperState,
  type TaperInput,
} from '../../server/engine/taper.js';

/** Park–Miller minimal standard generator: a fixed sequence per seed. */
function rng(seed: number): () => number {
  let s = seed % 2147483647 || 1;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b), 1e-300);

describe('shape problems name their field', () => {
  it('one problem per bad field, none for good input', () => {
    expect(shapeProblems({ shape: 'rectangle', width: 0.02, height: 0.01 })).toEqual([]);
    expect(shapeProblems({ shape: 'rectangle', width: 0, height: -1 }).map((p) => p.field)).toEqual(['width', 'height']);
    expect(shapeProblems({ shape: 'ellipse', width: Number.NaN, height: 0.01 }).map((p) => p.field)).toEqual(['width']);
    expect(shapeProblems({ shape: 'rectangularTube', width: 0.08, height: 0.06, wall: 0.03 }).map((p) => p.field)).toEqual(['wall']);
    expect(shapeProblems({ shape: 'rectangularTube', width: 0.08, height: 0.06, wall: 0.0299 })).toEqual([]);
    expect(
      shapeProblems({ shape: 'thinOpen', walls: [{ length: 0.05, thickness: 0.004 }, { length: 0.05, thickness: 0 }] }).map((p) => p.field),
    ).toEqual(['walls/1/thickness']);
    expect(shapeProblems({ shape: 'thinOpen', walls: [] }).map((p) => p.field)).toEqual(['walls']);
    expect(
      shapeProblems({ shape: 'custom', torsionConstant: 1e-7, torsionalModulus: -1, plasticTorqueModulus: 0 }).map((p) => p.field),
    ).toEqual(['torsionalModulus', 'plasticTorqueModulus']);
    expect(() => sectionProperties({ shape: 'rectangle', width: 0, height: 1 })).toThrow(RangeError);
  });
});

describe('warnings', () => {
  it('a tube wall over a tenth of the smaller centre-line dimension stretches thin-wall theory', () => {
    // centre line 76 × 56 mm at t = 4 mm: limit 5.6 mm; at t = 6 mm the centre line is 74 × 54, limit 5.4
    expect(sectionProperties({ shape: 'rectangularTube', width: 0.08, height: 0.06, wall: 0.004 }).warnings).toEqual([]);
    const w = sectionProperties({ shape: 'rectangularTube', width: 0.08, height: 0.06, wall: 0.006 }).warnings;
    expect(w.map((x) => [x.kind, x.field])).toEqual([['thinWallStretched', 'wall']]);
  });
  it('an open wall under ten thicknesses is named, and the warping caution is always there', () => {
    const w = sectionProperties({
      shape: 'thinOpen',
      walls: [{ length: 0.05, thickness: 0.004 }, { length: 0.03, thickness: 0.004 }],
    }).warnings;
    expect(w.map((x) => [x.kind, x.field])).toEqual([
      ['thinWallStretched', 'walls/1'],
      ['openSectionWarping', null],
    ]);
  });
});

describe('rectangle series', () => {
  it('β, α rise with the aspect towards 1/3; 0 < k ≤ 1; α ≥ β', () => {
    let prev = rectangleCoefficients(1);
    for (let hb = 1.05; hb < 200; hb *= 1.05) {
      const c = rectangleCoefficients(hb);
      expect(c.beta).toBeGreaterThan(prev.beta);
      expect(c.alpha).toBeGreaterThanOrEqual(prev.alpha);
      expect(c.beta).toBeLessThan(1 / 3);
      expect(c.k).toBeGreaterThan(0);
      expect(c.k).toBeLessThanOrEqual(1);
      expect(c.alpha).toBeGreaterThanOrEqual(c.beta);
      prev = c;
    }
  });
  it('slender bars do not overflow: finite up to 1e308 and 1/3 at Infinity', () => {
    for (const hb of [1e3, 1e10, 1e100, 1e300, 1.7e308]) {
      const c = rectangleCoefficients(hb);
      expect(Number.isFinite(c.beta) && Number.isFinite(c.alpha) && Number.isFinite(c.k)).toBe(true);
      expect(Math.abs(c.beta - 1 / 3)).toBeLessThanOrEqual(1 / hb);
    }
    expect(rectangleCoefficients(Infinity).beta).toBe(1 / 3);
    expect(() => rectangleCoefficients(0.5)).toThrow(RangeError);
    expect(() => rectangleCoefficients(Number.NaN)).toThrow(RangeError);
  });
  it('the series stops within a few dozen terms', () => {
    expect(rectangleCoefficients(1).terms).toBeLessThanOrEqual(30);
  });
});

describe('section invariances (seeded)', () => {
  it('swapping width and height, and scaling by λ (J ∝ λ⁴, Wt ∝ λ³, Ip ∝ λ⁴)', () => {
    const r = rng(7);
    for (let i = 0; i < 200; i++) {
      const w = 0.005 + 0.1 * r();
      const h = 0.005 + 0.1 * r();
      const lam = 0.2 + 5 * r();
      for (const shape of ['rectangle', 'ellipse'] as const) {
        const a = sectionProperties({ shape, width: w, height: h });
        const b = sectionProperties({ shape, width: h, height: w });
        const c = sectionProperties({ shape, width: lam * w, height: lam * h });
        expect(rel(a.torsionConstant, b.torsionConstant)).toBeLessThanOrEqual(1e-15);
        expect(rel(a.torsionalModulus, b.torsionalModulus)).toBeLessThanOrEqual(1e-15);
        expect(rel(c.torsionConstant, lam ** 4 * a.torsionConstant)).toBeLessThanOrEqual(1e-14);
        expect(rel(c.torsionalModulus, lam ** 3 * a.torsionalModulus)).toBeLessThanOrEqual(1e-14);
        expect(rel(c.polarMoment!, lam ** 4 * a.polarMoment!)).toBeLessThanOrEqual(1e-14);
        // J = Ip − ∫|∇ω|² dA ≤ Ip for a solid section (warping energy is not negative)
        expect(a.torsionConstant).toBeLessThanOrEqual(a.polarMoment!);
      }
    }
  });
  it('a thin square tube: J = a³t and Wt = 2a²t on the centre line a (closed form, Bredt–Batho)', () => {
    const s: ShapeInput = { shape: 'rectangularTube', width: 0.1001, height: 0.1001, wall: 0.0001 };
    const p = sectionProperties(s);
    // closed form: A_m = 0.1², J = A_m² t·4/(4·0.1) = 0.1³ t
    expect(rel(p.torsionConstant, 0.1 ** 3 * 0.0001)).toBeLessThanOrEqual(1e-12);
    expect(rel(p.torsionalModulus, 2 * 0.01 * 0.0001)).toBeLessThanOrEqual(1e-12);
  });
});

describe('taper problems name their field', () => {
  it('bores, mixed ends, sizes', () => {
    expect(taperProblems({ length: 0.3, dA: 0.06, dB: 0.04 })).toEqual([]);
    expect(taperProblems({ length: 0.3, dA: 0.06, dB: 0.04, diA: 0.03, diB: 0.02 })).toEqual([]);
    expect(taperProblems({ length: 0.3, dA: 0.06, dB: 0.04, diA: 0.03, diB: 0.04 }).map((p) => p.field)).toEqual(['diB']);
    expect(taperProblems({ length: 0.3, dA: 0.06, dB: 0.04, diA: 0.03 }).map((p) => p.field)).toEqual(['diB']);
    expect(taperProblems({ length: 0, dA: -1, dB: 0.04 }).map((p) => p.field)).toEqual(['length', 'dA']);
    expect(() => taperFlexibility({ length: 0.3, dA: 0.06, dB: 0.04, diA: 0.07, diB: 0.01 }, 8e10)).toThrow(RangeError);
  });
});

describe('taper identities (seeded)', () => {
  const G = 8e10;
  function randomTaper(r: () => number): TaperInput {
    const L = 0.05 + r();
    const dA = 0.01 + 0.1 * r();
    const dB = 0.01 + 0.1 * r();
    if (r() < 0.5) return { length: L, dA, dB };
    return { length: L, dA, dB, diA: dA * (0.1 + 0.8 * r()), diB: dB * (0.1 + 0.8 * r()) };
  }
  const flip = (t: TaperInput): TaperInput => ({ length: t.length, dA: t.dB, dB: t.dA, ...(t.diA ? { diA: t.diB, diB: t.diA } : {}) });

  it('reversing a taper keeps its flexibility and swaps its consistent loads', () => {
    const r = rng(11);
    for (let i = 0; i < 100; i++) {
      const t = randomTaper(r);
      const ta = 2000 * (r() - 0.5);
      const tb = 2000 * (r() - 0.5);
      expect(rel(taperFlexibility(flip(t), G), taperFlexibility(t, G))).toBeLessThanOrEqual(1e-13);
      const l = consistentLoads(t, ta, tb);
      const m = consistentLoads(flip(t), tb, ta);
      const scale = (Math.abs(ta) + Math.abs(tb)) * t.length;
      expect(Math.abs(m.fa - l.fb)).toBeLessThanOrEqual(1e-13 * scale);
      expect(Math.abs(m.fb - l.fa)).toBeLessThanOrEqual(1e-13 * scale);
    }
  });

  it('N rises from 0 to 1; equilibrium T(0+) − T(L−) = ∫ t; the peak |τ| bounds dense samples', () => {
    const r = rng(23);
    for (let i = 0; i < 50; i++) {
      const t = randomTaper(r);
      expect(shapeFunction(t, 0)).toBe(0);
      expect(shapeFunction(t, t.length)).toBe(1);
      let prev = 0;
      for (let j = 1; j <= 20; j++) {
        const n = shapeFunction(t, (t.length * j) / 20);
        expect(n).toBeGreaterThan(prev);
        prev = n;
      }
      const ta = 1000 * (r() - 0.5);
      const tb = 1000 * (r() - 0.5);
      const st = taperState(t, G, 0, 1e-3 * (r() - 0.5), ta, tb);
      const scale = Math.abs(st.torqueStart) + (Math.abs(ta) + Math.abs(tb)) * t.length;
      expect(Math.abs(st.torqueStart - st.torqueEnd - (t.length * (ta + tb)) / 2)).toBeLessThanOrEqual(1e-13 * scale);
      // the peak bounds every one of 2001 samples and is attained where it says
      let best = 0;
      for (let j = 0; j <= 2000; j++) best = Math.max(best, Math.abs(st.shearAt((t.length * j) / 2000)));
      expect(st.peak.shear).toBeGreaterThanOrEqual(best * (1 - 1e-14));
      expect(st.peak.shear).toBeLessThanOrEqual(best * (1 + 1e-3));
      expect(rel(Math.abs(st.shearAt(st.peak.z)), st.peak.shear)).toBeLessThanOrEqual(1e-15);
    }
  });

  it('the quadrature is exact for polynomials of degree 39 (20-point Gauss–Legendre)', () => {
    const r = rng(5);
    const c = Array.from({ length: 40 }, () => r() - 0.5);
    const f = (x: number) => c.reduce((s, ci, i) => s + ci * x ** i, 0);
    const exact = c.reduce((s, ci, i) => s + (ci * (1.3 ** (i + 1) - 0.2 ** (i + 1))) / (i + 1), 0);
    expect(Math.abs(integrate(f, 0.2, 1.3) - exact)).toBeLessThanOrEqual(1e-14 * c.reduce((s, ci) => s + Math.abs(ci), 0) * 1.3 ** 40);
  });
});
