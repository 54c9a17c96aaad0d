/**
 * Sweeps over the whole unit catalogue (shared-types/quantity.ts) and the
 * reading of quantity strings that the engine relies on.
 *
 * Conversion factors are checked against their definitions:
 * - 1 in = 0.0254 m and 1 lb = 0.45359237 kg exactly (international yard and
 *   pound agreement, 1959; NIST SP 811, 2008, Appendix B);
 * - standard gravity g_n = 9.80665 m/s² exactly (3rd CGPM, 1901), so
 *   1 lbf = 0.45359237 kg × 9.80665 m/s² = 4.4482216152605 N exactly
 *   (NIST SP 811 Appendix B.8 lists 4.448 222 E+00);
 * - 1 psi = 6.894 757 E+03 Pa and 1 hp (550 ft·lbf/s) = 7.456 999 E+02 W
 *   (NIST SP 811 Appendix B.8, rounded to 7 figures there);
 * - 1 rpm = 2π rad / 60 s (definition of a revolution and a minute).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  canonicalUnit,
  fromSI,
  isProblem,
  QUANTITY_RANGE,
  rangeProblem,
  readQuantity,
  SI_UNIT,
  toSI,
  UNIT_SPELLINGS,
  UNITS,
  unitsOfKind,
  type QuantityKind,
} from '../../shared-types/quantity.js';

const KINDS = Object.keys(SI_UNIT) as QuantityKind[];
/** Relative round-off of one or two double operations: a few ulps (eps = 2^-52 ≈ 2.2e-16). */
const ULPS = 4 * Number.EPSILON;

const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b));

/**
 * A power of ten that puts a value of this unit in the middle of its kind's physical range
 * (1 Pa, say, is below any modulus or allowable stress, so "1 Pa" is refused as out of range).
 */
function midScale(symbol: string): number {
  const u = UNITS.get(symbol)!;
  const { min, max } = QUANTITY_RANGE[u.kind];
  return 10 ** Math.round(Math.log10(Math.sqrt(min * max) / u.toSI));
}

function factor(symbol: string): number {
  const u = UNITS.get(symbol);
  if (!u) throw new Error(`no unit ${symbol} in the catalogue`);
  return u.toSI;
}

describe('the unit catalogue', () => {
  it('every unit converts back: fromSI(toSI(x)) = x to a few ulps, for many magnitudes and signs', () => {
    const samples = [1, -1, 0.1, 3.7, -42.5, 1e-9, 12345.678, 6.02e23];
    for (const [symbol] of UNITS) {
      for (const x of samples) {
        const back = fromSI(toSI(x, symbol), symbol);
        expect(rel(back, x), `${symbol}: ${x} → ${back}`).toBeLessThanOrEqual(ULPS);
      }
      expect(toSI(0, symbol)).toBe(0);
    }
  });

  it('no two rows of the catalogue share a symbol (read from the source table, since the Map would hide a duplicate)', () => {
    const source = readFileSync(new URL('../../shared-types/quantity.ts', import.meta.url), 'utf8');
    const rows = [...source.matchAll(/^\s*\['(\w+)',\s*'([^']+)',/gm)].map((m) => m[2]);
    expect(rows.length).toBeGreaterThan(40);
    expect(new Set(rows).size).toBe(rows.length);
    expect(rows.length).toBe(UNITS.size);
  });

  it('every symbol is in canonical spelling (so it can be found) and is keyed by itself', () => {
    for (const [key, unit] of UNITS) {
      expect(unit.symbol).toBe(key);
      expect(canonicalUnit(key), key).toBe(key);
      expect(Number.isFinite(unit.toSI) && unit.toSI > 0, key).toBe(true);
    }
  });

  it('every kind has its SI unit with factor exactly 1, and no other unit of the kind has factor 1 under another name except exact aliases', () => {
    for (const kind of KINDS) {
      const u = UNITS.get(SI_UNIT[kind]);
      expect(u, kind).toBeDefined();
      expect(u?.kind).toBe(kind);
      expect(u?.toSI).toBe(1);
      expect(unitsOfKind(kind)).toContain(SI_UNIT[kind]);
    }
    // N·mm/mm is N·m/m (an exact alias); nothing else of factor 1 but the SI unit.
    const ones = [...UNITS.values()].filter((u) => u.toSI === 1 && u.symbol !== SI_UNIT[u.kind]).map((u) => u.symbol);
    expect(ones).toEqual(['N*mm/mm']);
  });

  it('holds at least every unit the model format lists, each of the right kind', () => {
    // The contract's "Quantities and units" list.
    const required: Array<[string, QuantityKind]> = [
      ['m', 'length'], ['mm', 'length'], ['cm', 'length'], ['in', 'length'], ['ft', 'length'],
      ['N*m', 'torque'], ['N*mm', 'torque'], ['kN*m', 'torque'], ['lbf*in', 'torque'], ['lbf*ft', 'torque'], ['kip*in', 'torque'],
      ['Pa', 'stress'], ['kPa', 'stress'], ['MPa', 'stress'], ['GPa', 'stress'], ['psi', 'stress'], ['ksi', 'stress'], ['Msi', 'stress'],
      ['rad', 'angle'], ['deg', 'angle'],
      ['N*m/rad', 'rotationalStiffness'], ['lbf*in/rad', 'rotationalStiffness'],
      ['N/m', 'linearStiffness'], ['N/mm', 'linearStiffness'], ['lbf/in', 'linearStiffness'],
      ['N*m/m', 'torquePerLength'], ['lbf*in/in', 'torquePerLength'],
      ['rad/m', 'twistRate'], ['deg/m', 'twistRate'], ['deg/ft', 'twistRate'],
      ['kg/m3', 'density'], ['lb/in3', 'density'],
      ['kg*m2', 'massInertia'], ['lb*in2', 'massInertia'],
      ['W', 'power'], ['kW', 'power'], ['hp', 'power'],
      ['rpm', 'angularSpeed'], ['rad/s', 'angularSpeed'],
    ];
    for (const [symbol, kind] of required) expect(UNITS.get(symbol)?.kind, symbol).toBe(kind);
  });

  it('reads "1eN <unit>" (mid-range) as 1eN × the unit factor for its own kind, and refuses it for every other kind with SN_UNIT_KIND', () => {
    for (const [symbol, unit] of UNITS) {
      const scale = midScale(symbol);
      for (const kind of KINDS) {
        const r = readQuantity(`${scale} ${symbol}`, kind);
        if (kind === unit.kind) expect(r, symbol).toBe(scale * unit.toSI);
        else expect(isProblem(r) && r.code, `${symbol} as ${kind}`).toBe('SN_UNIT_KIND');
      }
    }
  });
});

describe('known factors', () => {
  it('inch and foot are exact', () => {
    // 1 in = 0.0254 m, 1 ft = 12 in = 0.3048 m (international yard, 1959).
    expect(factor('in')).toBe(0.0254);
    expect(factor('ft')).toBe(0.3048);
    expect(factor('mm')).toBe(1e-3);
  });

  it('pound-force is 0.45359237 kg × 9.80665 m/s² = 4.4482216152605 N', () => {
    // lbf*in/in and lbf*ft/ft are lbf per unit length ⇒ exactly the lbf in N·m/m.
    expect(rel(factor('lbf*in/in'), 4.4482216152605)).toBeLessThanOrEqual(ULPS);
    expect(rel(factor('lbf*in'), 4.4482216152605 * 0.0254)).toBeLessThanOrEqual(ULPS);
    expect(rel(factor('lbf*ft'), 4.4482216152605 * 0.3048)).toBeLessThanOrEqual(ULPS);
    expect(rel(factor('lbf/in'), 4.4482216152605 / 0.0254)).toBeLessThanOrEqual(ULPS);
    // 1 kip = 1000 lbf (NIST SP 811 Appendix B.8: kip = 4.448 222 E+03 N).
    expect(rel(factor('kip*in'), 1000 * factor('lbf*in'))).toBeLessThanOrEqual(ULPS);
  });

  it('psi, ksi and Msi', () => {
    // 1 psi = 1 lbf/in² = 4.4482216152605 / 0.0254² Pa = 6894.757293168361 Pa; NIST SP 811 gives 6.894 757 E+03.
    expect(Math.abs(factor('psi') - 6894.757)).toBeLessThanOrEqual(0.0005);
    expect(rel(factor('psi'), 4.4482216152605 / (0.0254 * 0.0254))).toBeLessThanOrEqual(ULPS);
    expect(rel(factor('ksi'), 1e3 * factor('psi'))).toBeLessThanOrEqual(ULPS);
    expect(rel(factor('Msi'), 1e6 * factor('psi'))).toBeLessThanOrEqual(ULPS);
    // 30 Msi, a textbook modulus of steel, is about 206.8 GPa.
    expect(Math.abs((readQuantity('30 Msi', 'stress') as number) - 206.8427e9)).toBeLessThanOrEqual(0.0001e9);
  });

  it('horsepower is 550 ft·lbf/s = 745.69987 W', () => {
    // 550 × 0.3048 × 4.4482216152605 = 745.69987158227022 W; NIST SP 811: 7.456 999 E+02.
    expect(Math.abs(factor('hp') - 745.69987)).toBeLessThanOrEqual(0.000005);
    expect(rel(factor('hp'), 550 * 0.3048 * 4.4482216152605)).toBeLessThanOrEqual(ULPS);
  });

  it('rpm is 2π/60 rad/s, deg is π/180 rad', () => {
    expect(rel(factor('rpm'), (2 * Math.PI) / 60)).toBeLessThanOrEqual(ULPS);
    expect(rel(factor('deg'), Math.PI / 180)).toBeLessThanOrEqual(ULPS);
    // 1450 rpm = 151.84364492350667 rad/s (1450 × 2π / 60).
    expect(rel(readQuantity('1450 rpm', 'angularSpeed') as number, (1450 * 2 * Math.PI) / 60)).toBeLessThanOrEqual(ULPS);
  });

  it('metric prefixes are powers of ten', () => {
    expect(factor('kN*m')).toBe(1e3);
    expect(factor('N*mm')).toBe(1e-3);
    expect(factor('GPa')).toBe(1e9);
    expect(factor('MPa')).toBe(1e6);
    expect(factor('kW')).toBe(1e3);
    expect(factor('N/mm')).toBe(1e3);
  });

  it('lb/in3 and lb*in2 follow from the exact pound and inch', () => {
    expect(rel(factor('lb/in3'), 0.45359237 / 0.0254 ** 3)).toBeLessThanOrEqual(ULPS);
    expect(rel(factor('lb*in2'), 0.45359237 * 0.0254 ** 2)).toBeLessThanOrEqual(ULPS);
  });
});

describe('readQuantity', () => {
  it.each<[string, unknown, QuantityKind, string]>([
    ['NaN as a number', Number.NaN, 'length', 'SN_NOT_FINITE'],
    ['Infinity as a number', Number.POSITIVE_INFINITY, 'torque', 'SN_NOT_FINITE'],
    ['"Infinity"', 'Infinity', 'length', 'SN_NOT_FINITE'],
    ['"-inf mm"', '-inf mm', 'length', 'SN_NOT_FINITE'],
    ['"NaN mm"', 'NaN mm', 'length', 'SN_NOT_FINITE'],
    ['"1e999 mm" (overflows while reading)', '1e999 mm', 'length', 'SN_NOT_FINITE'],
    ['"1e300 GPa" (overflows in SI)', '1e300 GPa', 'stress', 'SN_NOT_FINITE'],
    ['"40" (no unit)', '40', 'length', 'SN_UNIT_MISSING'],
    ['"40 furlongs"', '40 furlongs', 'length', 'SN_UNIT_UNKNOWN'],
    ['"40 GPa" in a length field', '40 GPa', 'length', 'SN_UNIT_KIND'],
    ['"40 mm" in a stress field', '40 mm', 'stress', 'SN_UNIT_KIND'],
    ['"1 N*m" in an energy-looking torque-per-length field', '1 N*m', 'torquePerLength', 'SN_UNIT_KIND'],
    ['"forty mm"', 'forty mm', 'length', 'SN_QUANTITY_SYNTAX'],
    ['an empty string', '', 'length', 'SN_QUANTITY_SYNTAX'],
    ['a boolean', true, 'length', 'SN_QUANTITY_SYNTAX'],
    ['null', null, 'length', 'SN_QUANTITY_SYNTAX'],
  ])('refuses %s', (_what, value, kind, code) => {
    const r = readQuantity(value, kind);
    expect(isProblem(r)).toBe(true);
    if (isProblem(r)) {
      expect(r.code).toBe(code);
      expect(r.message.length).toBeGreaterThan(0);
    }
  });

  it('takes plain numbers as SI', () => {
    expect(readQuantity(0.04, 'length')).toBe(0.04);
    expect(readQuantity(-350, 'torque')).toBe(-350);
    expect(readQuantity(0, 'angle')).toBe(0);
  });

  it.each<[string, string, QuantityKind]>([
    ['1.2 kN·m', '1.2 kN*m', 'torque'],
    ['1.2 kN m', '1.2 kN*m', 'torque'],
    ['1.2 kN * m', '1.2 kN*m', 'torque'],
    ['1.2kN*m', '1.2 kN*m', 'torque'],
    ['  1.2   kN*m  ', '1.2 kN*m', 'torque'],
    ['7850 kg/m³', '7850 kg/m3', 'density'],
    ['7850 kg/m^3', '7850 kg/m3', 'density'],
    ['7850 kg / m3', '7850 kg/m3', 'density'],
    ['0.8 kg·m²', '0.8 kg*m2', 'massInertia'],
    ['0.8 kg*m^2', '0.8 kg*m2', 'massInertia'],
    ['5 N/µm', '5 N/um', 'linearStiffness'],
    ['5 N/μm', '5 N/um', 'linearStiffness'],
    ['12 kN·m/rad', '12 kN*m/rad', 'rotationalStiffness'],
    ['+40 mm', '40 mm', 'length'],
    ['4e1 mm', '40 mm', 'length'],
    ['.5 deg', '0.5 deg', 'angle'],
  ])('spells "%s" like "%s"', (a, b, kind) => {
    const x = readQuantity(a, kind);
    const y = readQuantity(b, kind);
    expect(isProblem(x)).toBe(false);
    expect(x).toBe(y);
  });

  it('reads a value in each unit as value × factor', () => {
    // 40 mm = 0.04 m; 79.3 GPa = 7.93e10 Pa; -15 kW = -15000 W.
    expect(readQuantity('40 mm', 'length')).toBe(40 * 1e-3);
    expect(readQuantity('79.3 GPa', 'stress')).toBe(79.3 * 1e9);
    expect(readQuantity('-15 kW', 'power')).toBe(-15 * 1e3);
    for (const [symbol, unit] of UNITS) {
      const value = -2.5 * midScale(symbol);
      expect(readQuantity(`${value} ${symbol}`, unit.kind), symbol).toBe(value * unit.toSI);
    }
  });
});

describe('physical ranges (QUANTITY_RANGE: common practice, no source; see README)', () => {
  it('every kind has a range with 0 < min < max, frozen', () => {
    expect(Object.keys(QUANTITY_RANGE).sort()).toEqual([...KINDS].sort());
    expect(Object.isFrozen(QUANTITY_RANGE)).toBe(true);
    for (const kind of KINDS) {
      const { min, max } = QUANTITY_RANGE[kind];
      expect(min > 0 && min < max && Number.isFinite(max), kind).toBe(true);
      expect(Object.isFrozen(QUANTITY_RANGE[kind])).toBe(true);
    }
  });

  it('the bounds themselves, as plain SI numbers and with the SI unit, are accepted; so is 0', () => {
    for (const kind of KINDS) {
      const { min, max } = QUANTITY_RANGE[kind];
      for (const v of [min, max, -min, -max, 0]) {
        expect(readQuantity(v, kind), `${kind} ${v}`).toBe(v);
        expect(readQuantity(`${v} ${SI_UNIT[kind]}`, kind), `${kind} "${v}"`).toBe(v);
      }
    }
  });

  it('a bound typed in another unit is accepted although conversion may land an ulp outside it', () => {
    // 1e-4 mm × 1e-3 m/mm = 1.0000000000000001e-7 m in doubles, one ulp above the bound 1e-7 m: inside anyway.
    expect(isProblem(readQuantity('1e-4 mm', 'length'))).toBe(false);
    // 1e8 mm = 1e5 m, the upper bound.
    expect(readQuantity('1e8 mm', 'length')).toBe(1e5);
    // 1e-3 N*mm/rad = 1e-6 N·m/rad, well inside; 1e-6 N*mm/rad = 1e-9 N·m/rad, the lower bound.
    expect(isProblem(readQuantity('1e-6 N*mm/rad', 'rotationalStiffness'))).toBe(false);
  });

  it('one part in a thousand beyond either bound is refused with SN_OUT_OF_RANGE, naming the range in SI units', () => {
    for (const kind of KINDS) {
      const { min, max } = QUANTITY_RANGE[kind];
      for (const v of [min * 0.999, max * 1.001, -min * 0.999, -max * 1.001]) {
        for (const typed of [v, `${v} ${SI_UNIT[kind]}`]) {
          const r = readQuantity(typed, kind);
          expect(isProblem(r) && r.code, `${kind} ${JSON.stringify(typed)}`).toBe('SN_OUT_OF_RANGE');
          if (isProblem(r)) {
            expect(r.message).toContain(`${SI_UNIT[kind]}`);
            expect(r.message).toMatch(/must lie from \S+ to \S+ /);
          }
        }
      }
    }
  });

  it('the values of the issue that came back as null are refused by range, with the range in the message', () => {
    const cases: Array<[unknown, QuantityKind, string]> = [
      [-1.7976931348623157e308, 'torquePerLength', 'from 1e-12 to 1e12 N*m/m'],
      ['1e-300 Pa', 'stress', 'from 1e3 to 1e13 Pa'],
      [1e308, 'stress', 'from 1e3 to 1e13 Pa'],
      [1e12, 'length', 'from 1e-7 to 1e5 m'],
      [5e-324, 'length', 'from 1e-7 to 1e5 m'],
      ['1e15 mm', 'length', '"1e15 mm" (1e12 m)'],
    ];
    for (const [typed, kind, text] of cases) {
      const r = readQuantity(typed, kind);
      expect(isProblem(r) && r.code, String(typed)).toBe('SN_OUT_OF_RANGE');
      if (isProblem(r)) expect(r.message).toContain(text);
    }
  });

  it('a value that overflows in conversion stays SN_NOT_FINITE (checked before the range)', () => {
    const r = readQuantity('1e300 Msi', 'stress');
    expect(isProblem(r) && r.code).toBe('SN_NOT_FINITE');
  });

  it('rangeProblem holds derived numbers to the same ranges, saying what they are', () => {
    expect(rangeProblem(5e9, 'length', undefined, 'the pitch radius =')?.message).toMatch(/^the pitch radius = 5e9 m is outside/);
    expect(rangeProblem(0.02, 'length')).toBeNull();
    expect(rangeProblem(0, 'torque')).toBeNull();
  });
});

describe('spelling without module state', () => {
  it('every entry of the frozen spelling catalogue reads as the rule spells it (the rule is reached with spaces around)', () => {
    expect(Object.isFrozen(UNIT_SPELLINGS)).toBe(true);
    const keys = Object.keys(UNIT_SPELLINGS);
    expect(keys.length).toBeGreaterThan(UNITS.size);
    for (const k of keys) {
      expect(UNITS.has(UNIT_SPELLINGS[k]!), k).toBe(true);
      expect(canonicalUnit(` ${k} `), JSON.stringify(k)).toBe(UNIT_SPELLINGS[k]);
      expect(canonicalUnit(k)).toBe(UNIT_SPELLINGS[k]);
    }
    // Every catalogue symbol is its own spelling.
    for (const symbol of UNITS.keys()) expect(UNIT_SPELLINGS[symbol]).toBe(symbol);
  });

  it('names that are properties of plain objects are not units', () => {
    for (const name of ['__proto__', 'constructor', 'toString', 'hasOwnProperty']) {
      expect(UNITS.get(canonicalUnit(name)), name).toBeUndefined();
      const r = readQuantity(`1 ${name}`, 'length');
      expect(isProblem(r) && r.code, name).toBe('SN_UNIT_UNKNOWN');
    }
  });

  it('quantity.ts keeps no mutable module state: no top-level let or var, no map or set written after load', () => {
    const source = readFileSync(new URL('../../shared-types/quantity.ts', import.meta.url), 'utf8');
    expect(source).not.toMatch(/^(let|var) /m);
    expect(source).not.toMatch(/^export (let|var) /m);
    expect(source).not.toMatch(/\.(set|clear|delete)\(/);
  });
});
