/**
 * The client's units (client/src/units.ts, with the display units it re-exports
 * from shared-types/present.ts). Expected values follow from
 * the unit definitions: 1 in = 25.4 mm exactly, 1 lbf = 0.45359237 kg × 9.80665 m/s²
 * exactly (so 1 lbf·in = 0.112984829027617 N·m), 1 psi = 1 lbf/in² = 6894.757293 Pa,
 * 1 deg = π/180 rad, 1 rpm = 2π/60 rad/s.
 */
import { describe, expect, it } from 'vitest';
import { UNITS } from '../../shared-types/quantity.js';
import {
  DISPLAY_UNITS,
  type FieldKind,
  displayUnit,
  formatNumber,
  formatQuantity,
  fromDisplay,
  inputText,
  parseInput,
  parsePlainNumber,
  prettyUnit,
  storedToSI,
  toDisplay,
} from '../../client/src/units.js';

const LBF_IN = 0.45359237 * 9.80665 * 0.0254; // N·m, from the exact definitions above
const RESULT_KINDS: readonly FieldKind[] = ['force', 'torsionConstant', 'torsionalRigidity', 'torsionalStiffness'];

describe('display unit systems', () => {
  it('name a catalogue unit of the right kind for every field kind', () => {
    for (const system of ['si', 'us'] as const) {
      for (const [kind, symbol] of Object.entries(DISPLAY_UNITS[system]) as Array<[FieldKind, string]>) {
        if (RESULT_KINDS.includes(kind)) continue; // results only, not in the format's catalogue (see tests/shared-types/present.test.ts)
        const def = UNITS.get(symbol);
        expect(def, `${system} ${kind} → ${symbol}`).toBeDefined();
        expect(def?.kind).toBe(kind === 'modulus' ? 'stress' : kind);
      }
    }
  });

  it('use mm, N·m, MPa, GPa in SI and in, lbf·in, ksi, Msi in US', () => {
    expect(['length', 'torque', 'stress', 'modulus'].map((k) => displayUnit(k as FieldKind, 'si'))).toEqual(['mm', 'N*m', 'MPa', 'GPa']);
    expect(['length', 'torque', 'stress', 'modulus'].map((k) => displayUnit(k as FieldKind, 'us'))).toEqual(['in', 'lbf*in', 'ksi', 'Msi']);
  });

  it('convert every kind there and back', () => {
    for (const system of ['si', 'us'] as const) {
      for (const kind of Object.keys(DISPLAY_UNITS[system]) as FieldKind[]) {
        const si = 123.456;
        expect(fromDisplay(toDisplay(si, kind, system), kind, system)).toBeCloseTo(si, 9);
      }
    }
  });

  it('convert by the exact definitions', () => {
    expect(toDisplay(0.0508, 'length', 'us')).toBeCloseTo(2, 12); // 2 in = 50.8 mm
    expect(toDisplay(0.04, 'length', 'si')).toBeCloseTo(40, 12);
    expect(toDisplay(LBF_IN * 1000, 'torque', 'us')).toBeCloseTo(1000, 9);
    expect(toDisplay(6894.757293168361e3, 'stress', 'us')).toBeCloseTo(1, 9); // 1 ksi
    expect(toDisplay(79.3e9, 'modulus', 'si')).toBeCloseTo(79.3, 9);
    expect(toDisplay(Math.PI / 180, 'angle', 'si')).toBeCloseTo(1, 12);
    expect(toDisplay(0.45359237 * 9.80665, 'force', 'us')).toBeCloseTo(1, 12);
    expect(toDisplay((1450 * 2 * Math.PI) / 60, 'angularSpeed', 'si')).toBeCloseTo(1450, 9);
  });

  it('pretty-print symbols', () => {
    expect(prettyUnit('N*m')).toBe('N·m');
    expect(prettyUnit('kg/m3')).toBe('kg/m³');
    expect(prettyUnit('lb*in2')).toBe('lb·in²');
  });
});

describe('reading what a user typed', () => {
  it('reads a plain number in the display unit of the chosen system', () => {
    expect(parseInput('41', 'length', 'si')).toEqual({ value: '41 mm' });
    expect(parseInput('2', 'length', 'us')).toEqual({ value: '2 in' });
    expect(parseInput(' -350 ', 'torque', 'si')).toEqual({ value: '-350 N*m' });
    expect(parseInput('79.3', 'modulus', 'si')).toEqual({ value: '79.3 GPa' });
    expect(parseInput('11.5', 'modulus', 'us')).toEqual({ value: '11.5 Msi' });
  });

  it('keeps a value typed with its own unit, whatever the system', () => {
    expect(parseInput('2 in', 'length', 'si')).toEqual({ value: '2 in' });
    expect(parseInput('1.2 kN·m', 'torque', 'us')).toEqual({ value: '1.2 kN·m' });
    expect(storedToSI(parseInput('2 in', 'length', 'si').value, 'length')).toBeCloseTo(0.0508, 12);
  });

  it('flags a unit of the wrong kind or unknown, and keeps the text for the server to name', () => {
    const wrong = parseInput('2 N*m', 'length', 'si');
    expect(wrong.value).toBe('2 N*m');
    expect(wrong.problem).toMatch(/torque/);
    expect(parseInput('2 furlong', 'length', 'si').problem).toMatch(/unknown unit/);
  });

  it('treats empty text as removing an optional field', () => {
    expect(parseInput('   ', 'angle', 'si')).toEqual({ value: undefined });
  });

  it('reads plain numbers (ν, teeth) as numbers', () => {
    expect(parsePlainNumber('0.3', false)).toEqual({ value: 0.3 });
    expect(parsePlainNumber('24', true)).toEqual({ value: 24 });
    expect(parsePlainNumber('24.5', true).problem).toMatch(/whole/);
  });
});

describe('showing stored values', () => {
  it('shows a stored quantity in the display unit', () => {
    expect(inputText('40 mm', 'length', 'si')).toBe('40');
    expect(inputText('50.8 mm', 'length', 'us')).toBe('2');
    expect(inputText(0.04, 'length', 'si')).toBe('40'); // a plain number is SI (m)
    expect(inputText('350 N*m', 'torque', 'us')).toBe(String(Number((350 / LBF_IN).toPrecision(6))));
  });

  it('shows text it cannot read as typed, and nothing for an absent field', () => {
    expect(inputText('2 furlong', 'length', 'si')).toBe('2 furlong');
    expect(inputText(undefined, 'length', 'si')).toBe('');
  });

  it('formats numbers for reading', () => {
    expect(formatNumber(140.2345)).toBe('140.23');
    expect(formatNumber(-0.000012345)).toBe('-1.2345e-5');
    expect(formatNumber(0)).toBe('0');
    expect(formatNumber(2.5e8)).toBe('2.5e8');
    expect(formatQuantity(-140.2, 'torque', 'si')).toBe('-140.2 N·m');
    expect(formatQuantity(null, 'torque', 'si')).toBe('—');
  });
});
