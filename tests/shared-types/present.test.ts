/**
 * The presentation module (shared-types/present.ts): unit systems, result-only
 * units, number formatting, cautions, slugs, readable pointers and the station CSV.
 *
 * Sources of the expected numbers:
 * - 1 in = 0.0254 m and 1 lbf = 0.45359237 kg × 9.80665 m/s² exactly (NIST SP 811,
 *   definitions of the inch, the pound and standard gravity).
 * - Shear stress in a solid circular shaft: τ = T r / J = 16 T / (π d³), J = π d⁴ / 32;
 *   in bonded concentric layers τ_k = G_k r T / Σ G_j J_j (Saint-Venant torsion; any
 *   strength-of-materials text, e.g. Timoshenko & Gere, Mechanics of Materials, ch. 3).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  CAUTIONS,
  CSV_DIGITS,
  csvNumber,
  DISPLAY_UNITS,
  type FieldKind,
  LBF,
  STATION_CSV_HEADER,
  UNIT_SYSTEMS,
  fileName,
  formatNumber,
  formatQuantity,
  formatValue,
  fromDisplay,
  isUnitSystem,
  prettyUnit,
  readablePointer,
  slug,
  stationColumns,
  stationCsv,
  stationCsvHeader,
  toDisplay,
  unitFactor,
  writeStationCsv,
} from '../../shared-types/present.js';
import { UNITS } from '../../shared-types/quantity.js';
import { solveModel } from '../../server/engine/index.js';

const IN = 0.0254; // m, exact
const RESULT_KINDS: readonly FieldKind[] = ['force', 'torsionConstant', 'torsionalRigidity', 'torsionalStiffness'];
const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);

describe('unit systems', () => {
  it('are spelt si and us, and nothing else', () => {
    expect(UNIT_SYSTEMS).toEqual(['si', 'us']);
    expect(isUnitSystem('si')).toBe(true);
    expect(isUnitSystem('us')).toBe(true);
    for (const other of ['SI', 'US', 'metric', '', undefined, null, 1]) expect(isUnitSystem(other)).toBe(false);
  });

  it('show every kind in a unit it can convert, catalogue units of the right kind', () => {
    for (const system of UNIT_SYSTEMS) {
      for (const [kind, symbol] of Object.entries(DISPLAY_UNITS[system]) as Array<[FieldKind, string]>) {
        expect(unitFactor(symbol), `${system} ${kind}`).toBeGreaterThan(0);
        if (RESULT_KINDS.includes(kind)) continue;
        expect(UNITS.get(symbol)?.kind, `${system} ${kind} → ${symbol}`).toBe(kind === 'modulus' ? 'stress' : kind);
      }
    }
  });

  it('one pound-force: 0.45359237 kg × 9.80665 m/s² = 4.4482216152605 N', () => {
    expect(LBF).toBe(0.45359237 * 9.80665);
    expect(rel(LBF, 4.4482216152605)).toBeLessThan(1e-14);
    expect(toDisplay(LBF, 'force', 'us')).toBe(1);
  });

  it('result-only kinds convert by the exact definitions', () => {
    // J of a solid 40 mm shaft: π d⁴ / 32 (closed form), in mm⁴ and in⁴.
    const J = (Math.PI * 0.04 ** 4) / 32;
    expect(rel(toDisplay(J, 'torsionConstant', 'si'), (Math.PI * 40 ** 4) / 32)).toBeLessThan(1e-14);
    expect(rel(toDisplay(J, 'torsionConstant', 'us'), (Math.PI * (0.04 / IN) ** 4) / 32)).toBeLessThan(1e-14);
    expect(displayOf('torsionConstant')).toEqual(['mm4', 'in4']);
    // G·J: 1 lbf·in² = LBF × IN² N·m².
    expect(rel(toDisplay(LBF * IN * IN * 3, 'torsionalRigidity', 'us'), 3)).toBeLessThan(1e-15);
    expect(toDisplay(123.5, 'torsionalRigidity', 'si')).toBe(123.5);
    expect(displayOf('torsionalRigidity')).toEqual(['N*m2', 'lbf*in2']);
    // G·J/L: 1 lbf·in/rad = LBF × IN N·m/rad.
    expect(rel(toDisplay(LBF * IN * 7, 'torsionalStiffness', 'us'), 7)).toBeLessThan(1e-15);
    expect(displayOf('torsionalStiffness')).toEqual(['N*m/rad', 'lbf*in/rad']);
  });

  it('every kind goes there and back', () => {
    for (const system of UNIT_SYSTEMS) {
      for (const kind of Object.keys(DISPLAY_UNITS[system]) as FieldKind[]) {
        expect(rel(fromDisplay(toDisplay(123.456, kind, system), kind, system), 123.456), `${system} ${kind}`).toBeLessThan(1e-14);
      }
    }
  });

  it('an unknown unit is an error, not a silent 1', () => {
    expect(() => unitFactor('furlong')).toThrow(/unknown unit/);
  });

  it('symbols print with a middle dot and superscripts', () => {
    expect(prettyUnit('N*m')).toBe('N·m');
    expect(prettyUnit('kg/m3')).toBe('kg/m³');
    expect(prettyUnit('mm4')).toBe('mm⁴');
    expect(prettyUnit('lbf*in2')).toBe('lbf·in²');
  });
});

function displayOf(kind: FieldKind): string[] {
  return UNIT_SYSTEMS.map((s) => DISPLAY_UNITS[s][kind]);
}

describe('numbers', () => {
  // Common practice, no source: significant figures, no trailing zeros, exponent outside 1e-4 … 1e7.
  it('are written with significant figures, no trailing zeros', () => {
    expect(formatNumber(140.2345)).toBe('140.23');
    expect(formatNumber(140.2345, 4)).toBe('140.2');
    expect(formatNumber(-0.000012345)).toBe('-1.2345e-5');
    expect(formatNumber(2.5e8)).toBe('2.5e8');
    expect(formatNumber(0)).toBe('0');
    expect(formatNumber(-0)).toBe('0');
    expect(formatNumber(Number.NaN)).toBe('NaN');
    expect(formatValue(null, 'torque', 'si')).toBe('—');
    expect(formatQuantity(-140.2, 'torque', 'si')).toBe('-140.2 N·m');
    expect(formatQuantity(0.0508, 'length', 'us')).toBe('2 in');
  });
});

describe('words', () => {
  it('the cautions say what the model is not, and who must check it', () => {
    const text = CAUTIONS.join(' ');
    expect(text).toMatch(/linear-elastic/i);
    expect(text).toMatch(/stress concentration/i);
    expect(text).toMatch(/fatigue/i);
    expect(text).toMatch(/qualified engineer/);
    expect(text).toMatch(/codes and standards/);
  });

  it('the client and the command line show that one text (no copy of their own)', () => {
    const element = readFileSync(new URL('../../client/src/sn-cautions.ts', import.meta.url), 'utf8');
    const report = readFileSync(new URL('../../server/report.ts', import.meta.url), 'utf8');
    for (const source of [element, report]) {
      expect(source).toMatch(/CAUTIONS/);
      expect(source).not.toMatch(/qualified engineer/);
    }
  });

  it('slugs keep ASCII letters and digits, one dash between runs', () => {
    expect(slug('Mixer drive (rev. B)')).toBe('mixer-drive-rev-b');
    expect(slug('Démo: Übersetzung — 2')).toBe('demo-ubersetzung-2');
    expect(slug('***')).toBe('model');
    expect(slug('a'.repeat(70) + ' b')).toBe('a'.repeat(60));
    expect(slug('abc def', 4)).toBe('abc');
    expect(fileName('Demo (invented): mixer drive', 'json')).toBe('demo-invented-mixer-drive.json');
  });
});

describe('readable pointers', () => {
  const model = {
    shafts: [{ id: 'input', segments: [{}, {}, { length: 1 }] }],
    sections: [{ id: 'clad', layers: [{}, {}] }],
    gearMeshes: [{ id: 'G1', a: { shaft: 'input' }, b: { shaft: 'output' } }],
    couplings: [{ id: 'C/1', a: {}, b: {} }],
    materials: [{ id: '' }],
  };

  it('name items by id, and number unnamed ones from 1', () => {
    expect(readablePointer(model, '/shafts/0/segments/2/length')).toBe('shaft "input", segment 3, length');
    expect(readablePointer(model, '/sections/0/layers/1/d')).toBe('section "clad", layer 2, d');
    expect(readablePointer(model, '/materials/0/G')).toBe('material 1, G');
  });

  it('say which end of a connection', () => {
    expect(readablePointer(model, '/gearMeshes/0/b/shaft')).toBe('gear mesh "G1", gear b, shaft');
    expect(readablePointer(model, '/couplings/0/a/at')).toBe('coupling "C/1", end a, at');
  });

  it('work without the model, on escaped keys, and never throw', () => {
    expect(readablePointer(null, '/shafts/0/segments/2/length')).toBe('shaft 1, segment 3, length');
    expect(readablePointer(model, '/shafts/7/id')).toBe('shaft 8, id');
    expect(readablePointer(model, '')).toBe('the model');
    expect(readablePointer(model, '/a~1b/c~0d')).toBe('a/b, c~d');
    expect(readablePointer(model, 'not a pointer')).toBe('not a pointer');
    expect(readablePointer('text', '/shafts/0')).toBe('shaft 1');
  });
});

/** A shaft fixed at z = 0, stepped from d1 to d2 at z = a, twisted by T at its free end z = L. */
function steppedCantilever(d1: number, d2: number, a: number, L: number, T: number) {
  return {
    format: 'shaftnet/1',
    name: 'Stepped cantilever (invented)',
    materials: [{ id: 'steel', G: 79.3e9 }],
    sections: [
      { id: 's1', shape: 'solid', d: d1 },
      { id: 's2', shape: 'solid', d: d2 },
    ],
    shafts: [
      {
        id: 'bar',
        segments: [
          { length: a, section: 's1', material: 'steel' },
          { length: L - a, section: 's2', material: 'steel' },
        ],
      },
    ],
    supports: [{ id: 'A', shaft: 'bar', at: 0, kind: 'fixed' }],
    torques: [{ id: 'T', shaft: 'bar', at: L, torque: T }],
  };
}

describe('the station CSV', () => {
  it('has one header in each system, units named', () => {
    expect(STATION_CSV_HEADER).toBe('shaft,z [mm],rotation [deg],torque left [N*m],torque right [N*m],peak shear all layers [MPa]');
    expect(stationCsvHeader('us')).toBe('shaft,z [in],rotation [deg],torque left [lbf*in],torque right [lbf*in],peak shear all layers [ksi]');
  });

  it('writes every station in display units, empty where a side has no torque', () => {
    const model = steppedCantilever(0.04, 0.03, 0.2, 0.5, 300);
    const sol = solveModel(model);
    const rows = stationCsv(sol, 'si').trimEnd().split('\n');
    const stations = sol.shafts[0].stations;
    expect(rows).toHaveLength(1 + stations.length);
    stations.forEach((st, i) => {
      const cells = rows[i + 1].split(',');
      expect(cells[0]).toBe('bar');
      expect(rel(Number(cells[1]), st.z * 1000) <= 10 ** (1 - CSV_DIGITS) || st.z === 0).toBe(true);
      expect(Number(cells[2])).toBeCloseTo((st.rotation * 180) / Math.PI, 9);
      expect(cells[3]).toBe(st.torqueLeft === null ? '' : String(Number(st.torqueLeft.toPrecision(CSV_DIGITS))));
      expect(cells[4]).toBe(st.torqueRight === null ? '' : String(Number(st.torqueRight.toPrecision(CSV_DIGITS))));
    });
    const us = stationCsv(sol, 'us').trimEnd().split('\n');
    expect(us[us.length - 1].split(',')[1]).toBe(String(Number((0.5 / IN).toPrecision(CSV_DIGITS)))); // 0.5 m in inches
  });

  it('the shear column is 16|T|/(πd³) of the thinner side at a step, of its own side elsewhere', () => {
    const [d1, d2, T] = [0.04, 0.03, 300];
    const sol = solveModel(steppedCantilever(d1, d2, 0.2, 0.5, T));
    const cols = stationColumns(sol);
    const tau = (d: number) => (16 * T) / (Math.PI * d ** 3);
    const z = Array.from(cols.z);
    expect(z).toEqual([0, 0.2, 0.5]);
    expect(rel(cols.shear[0], tau(d1))).toBeLessThan(1e-12);
    expect(rel(cols.shear[1], tau(d2))).toBeLessThan(1e-12); // both sides meet here: the 30 mm side governs
    expect(rel(cols.shear[2], tau(d2))).toBeLessThan(1e-12);
    const rows = stationCsv(sol, 'si').trimEnd().split('\n');
    expect(rel(Number(rows[1].split(',')[5]), tau(d1) / 1e6)).toBeLessThan(10 ** (1 - CSV_DIGITS));
  });

  it('the shear column of a layered section is the largest G r T / ΣGJ over its layers', () => {
    // Steel core 30 mm inside a bronze sleeve 45 mm, fixed at z = 0, torque T at z = L.
    const [G1, G2, r1, r2, T] = [79.3e9, 41e9, 0.015, 0.0225, 500];
    const model = {
      format: 'shaftnet/1',
      name: 'Clad bar (invented)',
      materials: [
        { id: 'steel', G: G1 },
        { id: 'bronze', G: G2 },
      ],
      sections: [{ id: 'clad', shape: 'layered', layers: [{ d: 2 * r1, material: 'steel' }, { d: 2 * r2, material: 'bronze' }] }],
      shafts: [{ id: 'bar', segments: [{ length: 0.4, section: 'clad' }] }],
      supports: [{ id: 'A', shaft: 'bar', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 'bar', at: 0.4, torque: T }],
    };
    const J1 = (Math.PI * r1 ** 4) / 2;
    const J2 = (Math.PI * (r2 ** 4 - r1 ** 4)) / 2;
    const GJ = G1 * J1 + G2 * J2;
    const expected = Math.max((G1 * r1 * T) / GJ, (G2 * r2 * T) / GJ);
    const cols = stationColumns(solveModel(model));
    expect(rel(cols.shear[0], expected)).toBeLessThan(1e-12);
  });

  it('writes each number as String(Number(x.toPrecision(CSV_DIGITS))) would, on seeded values of every size', () => {
    let seed = 12345;
    const next = () => ((seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 2 ** 32);
    for (let i = 0; i < 20000; i++) {
      const x = (next() - 0.5) * 10 ** Math.floor(next() * 40 - 20);
      expect(csvNumber(x), String(x)).toBe(String(Number(x.toPrecision(CSV_DIGITS))));
    }
    for (const x of [1, -1, 100, 1234567890, 12345678901, 1e-6, 1.5e-7, 0.1 + 0.2, -0.000001, 1e21, 9999999999.5]) {
      expect(csvNumber(x), String(x)).toBe(String(Number(x.toPrecision(CSV_DIGITS))));
    }
    expect(csvNumber(0)).toBe('0');
    expect(csvNumber(-0)).toBe('0');
    expect(csvNumber(Number.NaN)).toBe('');
  });

  it('comes out the same in one piece or in many', () => {
    const sol = solveModel(steppedCantilever(0.04, 0.03, 0.2, 0.5, 300));
    const pieces: string[] = [];
    writeStationCsv(stationColumns(sol), 'us', (p) => pieces.push(p), 40);
    expect(pieces.length).toBeGreaterThan(2);
    expect(pieces.join('')).toBe(stationCsv(sol, 'us'));
    expect(stationCsv(sol, 'us').endsWith('\n')).toBe(true);
  });

  it('quotes a shaft id that holds a comma or a quote', () => {
    const model = steppedCantilever(0.04, 0.03, 0.2, 0.5, 300);
    const named = JSON.parse(JSON.stringify(model).replace(/"bar"/g, JSON.stringify('in, "A"')));
    const row = stationCsv(solveModel(named), 'si').split('\n')[1];
    expect(row.startsWith('"in, ""A""",0,')).toBe(true);
  });
});
