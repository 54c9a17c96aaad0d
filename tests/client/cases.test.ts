/**
 * Load cases and combinations in the client, without a browser: the edits that
 * keep a model with cases coherent (client/src/model-edits.ts) and the readings
 * the results panel draws from the solution (client/src/cases-results.ts).
 * Every solution here is invented to exercise the readings, never a solver's
 * answer; the numbers are chosen so each expected value can be read off by eye.
 */
import { describe, expect, it } from 'vitest';
import type { Model } from '../../shared-types/model.js';
import { applyEdit, insertRow, removeRow, rowFor } from '../../client/src/model-edits.js';
import {
  type CasesSolution,
  type EnvelopeStations,
  governingOf,
  modelCombinations,
  overloadSentence,
  rotationBand,
  torqueBand,
} from '../../client/src/cases-results.js';
import type { AnyCheck } from '../../client/src/raiser-results.js';

const base = (): Model =>
  ({
    format: 'shaftnet/1',
    name: 'cases (invented)',
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [{ id: 'd50', shape: 'solid', d: '50 mm' }],
    shafts: [{ id: 'line', segments: [{ length: '1 m', section: 'd50', material: 'steel' }] }],
    supports: [{ id: 'A', shaft: 'line', at: 0, kind: 'fixed' }],
    torques: [
      { id: 'T1', shaft: 'line', at: '300 mm', torque: '360 N*m' },
      { id: 'T2', shaft: 'line', at: '700 mm', torque: '-600 N*m' },
    ],
    distributedTorques: [{ id: 'q1', shaft: 'line', from: 0, to: '1 m', start: '10 N*m/m', end: '10 N*m/m' }],
  }) as unknown as Model;

type Loose = Record<string, unknown> & { torques: Array<Record<string, unknown>>; distributedTorques: Array<Record<string, unknown>> };
const loose = (m: Model) => m as unknown as Loose;

function addRow(m: Model, pointer: string): Model {
  return insertRow(m, pointer, rowFor(m, pointer));
}

describe('editing load cases and combinations', () => {
  it('the first case takes every point and distributed torque; a later case takes none', () => {
    let m = addRow(base(), '/loadCases');
    expect(loose(m).loadCases).toEqual([{ id: 'case1' }]);
    expect(loose(m).torques.map((t) => t.case)).toEqual(['case1', 'case1']);
    expect(loose(m).distributedTorques[0].case).toBe('case1');
    m = addRow(m, '/loadCases');
    expect(loose(m).loadCases).toEqual([{ id: 'case1' }, { id: 'case2' }]);
    expect(loose(m).torques.map((t) => t.case)).toEqual(['case1', 'case1']);
  });

  it('a new torque belongs to the first case when there are cases, and to none without', () => {
    expect(loose(addRow(base(), '/torques')).torques[2].case).toBeUndefined();
    const m = addRow(addRow(base(), '/loadCases'), '/torques');
    expect(loose(m).torques[2].case).toBe('case1');
  });

  it('a new combination has factor 1 on every case; a blank factor is removed (it counts 0)', () => {
    let m = addRow(addRow(base(), '/loadCases'), '/loadCases');
    m = addRow(m, '/combinations');
    expect(loose(m).combinations).toEqual([{ id: 'combo1', factors: { case1: 1, case2: 1 } }]);
    m = applyEdit(m, '/combinations/0/factors/case2', undefined);
    m = applyEdit(m, '/combinations/0/factors/case1', 1.35);
    expect(loose(m).combinations).toEqual([{ id: 'combo1', factors: { case1: 1.35 } }]);
  });

  it('renaming a case renames it on the loads and in the factors', () => {
    let m = addRow(addRow(base(), '/loadCases'), '/loadCases');
    m = applyEdit(m, '/torques/1/case', 'case2');
    m = addRow(m, '/combinations');
    m = applyEdit(m, '/loadCases/1/id', 'jam');
    expect(loose(m).loadCases).toEqual([{ id: 'case1' }, { id: 'jam' }]);
    expect(loose(m).torques.map((t) => t.case)).toEqual(['case1', 'jam']);
    expect(loose(m).combinations).toEqual([{ id: 'combo1', factors: { case1: 1, jam: 1 } }]);
  });

  it('removing a case drops its factors; removing the last case makes the model one load state again', () => {
    let m = addRow(addRow(base(), '/loadCases'), '/loadCases');
    m = addRow(m, '/combinations');
    m = removeRow(m, '/loadCases', 1);
    expect(loose(m).combinations).toEqual([{ id: 'combo1', factors: { case1: 1 } }]);
    m = removeRow(m, '/loadCases', 0);
    expect(loose(m).loadCases).toBeUndefined();
    expect(loose(m).combinations).toBeUndefined();
    expect(loose(m).torques.every((t) => !('case' in t))).toBe(true);
    expect('case' in loose(m).distributedTorques[0]).toBe(false);
  });

  it('removing the last combination drops the list (each case is then its own combination)', () => {
    let m = addRow(addRow(base(), '/loadCases'), '/combinations');
    m = removeRow(m, '/combinations', 0);
    expect('combinations' in loose(m)).toBe(false);
    expect(modelCombinations(m)).toEqual([{ id: 'case1', name: undefined }]);
  });

  it('the combinations offered: the model’s own, else its cases, else none', () => {
    expect(modelCombinations(base())).toEqual([]);
    let m = applyEdit(addRow(base(), '/loadCases'), '/loadCases/0/name', 'Rated running');
    expect(modelCombinations(m)).toEqual([{ id: 'case1', name: 'Rated running' }]);
    m = addRow(m, '/combinations');
    expect(modelCombinations(m).map((c) => c.id)).toEqual(['combo1']);
  });
});

/** Three stations: the left end (no T(z−)), an applied torque (a jump), the right end (no T(z+)). */
const STATIONS: EnvelopeStations = {
  z: [0, 0.3, 1],
  torqueLeftMin: [null, -10, -40],
  torqueLeftMax: [null, 20, 50],
  torqueRightMin: [-10, -40, null],
  torqueRightMax: [20, 50, null],
  rotationMin: [0, -0.001, 0],
  rotationMax: [0, 0.002, 0],
};

describe('the envelope band', () => {
  it('T: each existing side of each station in order, so a jump at a station stays a jump', () => {
    expect(torqueBand(STATIONS)).toEqual({ z: [0, 0.3, 0.3, 1], lo: [-10, -10, -40, -40], hi: [20, 20, 50, 50] });
  });

  it('rotation: one point per station', () => {
    expect(rotationBand(STATIONS)).toEqual({ z: [0, 0.3, 1], lo: [0, -0.001, 0], hi: [0, 0.002, 0] });
  });
});

const check = (kind: AnyCheck['kind'], segment: number | undefined, layer: number | undefined, utilisation: number, material?: string): AnyCheck =>
  ({ kind, shaft: 'line', segment, layer, material, value: utilisation, limit: 1, utilisation, pass: utilisation <= 1 }) as unknown as AnyCheck;

const SOLVED = {
  combination: 'service',
  combinations: [
    { id: 'service', name: 'Service', reactions: [], equilibrium: { maxResidual: 0 }, checks: [check('twistRate', 0, undefined, 0.4), check('shear', 0, 0, 0.5, 'steel')] },
    { id: 'stop', name: 'Emergency stop', reactions: [], equilibrium: { maxResidual: 0 }, checks: [check('twistRate', 0, undefined, 0.7), check('shear', 0, 0, 0.3, 'steel')] },
  ],
  envelope: {
    reactions: [],
    shafts: [
      {
        id: 'line',
        stations: STATIONS,
        segments: [
          { index: 0, maxAbsTorque: 50, combination: 'stop', layers: [{ material: 'steel', maxShear: 1e7, utilisation: 0.9, combination: 'stop' }] },
          { index: 1, maxAbsTorque: 40, combination: 'service', layers: [{ material: 'bronze', maxShear: 1e7, utilisation: 0.2, combination: 'service' }, { material: 'steel', maxShear: 2e7, utilisation: 0.6, combination: 'stop' }] },
        ],
      },
    ],
  },
} as unknown as CasesSolution;

describe('the governing combination of a check', () => {
  it('a shear check reads the envelope layer (not the per-combination checks)', () => {
    // The per-combination checks above would say "service" (0.5 > 0.3): the envelope, which the contract makes binding, says "stop".
    expect(governingOf(SOLVED, check('shear', 0, 0, 0.5, 'steel'))).toEqual({ combination: 'stop', utilisation: 0.9 });
    expect(governingOf(SOLVED, check('shear', 1, 1, 0.5, 'steel'))).toEqual({ combination: 'stop', utilisation: 0.6 });
    expect(governingOf(SOLVED, check('shear', 1, undefined, 0.5, 'bronze'))).toEqual({ combination: 'service', utilisation: 0.2 });
    // Neither layer index nor material: the segment's worst layer.
    expect(governingOf(SOLVED, check('shear', 1, undefined, 0.5))).toEqual({ combination: 'stop', utilisation: 0.6 });
  });

  it('another check: the same check of largest utilisation over the combinations', () => {
    expect(governingOf(SOLVED, check('twistRate', 0, undefined, 0.4))).toEqual({ combination: 'stop', utilisation: 0.7 });
    expect(governingOf(SOLVED, check('totalTwist', undefined, undefined, 0.4))).toBeNull();
  });

  it('a solution without combinations names none', () => {
    expect(governingOf({} as CasesSolution, check('shear', 0, 0, 0.5))).toBeNull();
  });
});

describe('the overload sentence', () => {
  const o = { firstYieldFactor: 1.84, firstYield: { shaft: 'line', z: 0.3, layer: 'steel' }, collapseFactor: 2.61, plasticAt: [{ shaft: 'line', z: 0 }, { shaft: 'line', z: 0.3 }], collapse: 'mechanism' as const };

  it('says how far the loads can grow before first yield and before collapse, and where', () => {
    const s = overloadSentence(o, 'Peak', 'si');
    expect(s.line).toBe('The loads of Peak can grow 1.84× before the first fibre yields, 2.61× before the shafts collapse.');
    expect(s.where).toBe('First yield: shaft line at z = 300 mm, layer steel. Fully plastic at collapse: shaft line at z = 0 mm; shaft line at z = 300 mm.');
  });

  it('says so when no collapse mechanism exists, and where a whole segment yields at once', () => {
    const s = overloadSentence({ ...o, firstYield: { shaft: 'line', z: null, layer: 'steel' }, collapseFactor: null, plasticAt: [], collapse: 'none' }, null, 'si');
    expect(s.line).toBe('The loads can grow 1.84× before the first fibre yields, and no collapse mechanism exists.');
    expect(s.where).toBe('First yield: all along shaft line, layer steel.');
  });

  it('points to the warning when a material has no yield stress', () => {
    const s = overloadSentence({ firstYieldFactor: null, firstYield: null, collapseFactor: null, plasticAt: [], collapse: 'mechanism' }, 'Peak', 'si');
    expect(s.line).toBe('The loads of Peak have no overload factors: a material on a loaded path has no shear yield stress (see the warning).');
    expect(s.where).toBe('');
  });
});
