/**
 * The editor's data flow without a DOM (client/src/model-edits.ts, client/src/export.ts,
 * client/src/issue-text.ts, client/src/diagram-readout.ts):
 * edits by JSON pointer never mutate the model, coupled fields stay coherent,
 * rows come and go, undo/redo walks the snapshots, API issues land on the
 * pointers the inputs carry. The demo model is the project's own invented one.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import {
  History,
  applyEdit,
  describePointer,
  getAt,
  insertRow,
  issuesByPointer,
  newRow,
  nextId,
  parsePointer,
  removeRow,
  rowFor,
  sameJson,
  setIn,
  toPointer,
  newSupportPlace,
  shaftLength,
  sizingNote,
  blankModel,
  modelFromFile,
} from '../../client/src/model-edits.js';
import { bannerReason, issueLine, issueMarks, mechanismText } from '../../client/src/issue-text.js';
import { stepCursor, valueAt } from '../../client/src/diagram-readout.js';
import { fileName } from '../../client/src/export.js';
import { parseInput } from '../../client/src/units.js';

const demo = JSON.parse(readFileSync(new URL('../../server/demos/mixer-drive.json', import.meta.url), 'utf8')) as Model;

function frozen<T>(x: T): T {
  if (x && typeof x === 'object') {
    Object.freeze(x);
    for (const v of Object.values(x)) frozen(v);
  }
  return x;
}

describe('JSON pointers', () => {
  it('split and join, with escapes (RFC 6901)', () => {
    expect(parsePointer('/shafts/0/segments/1/length')).toEqual(['shafts', 0, 'segments', 1, 'length']);
    expect(parsePointer('/a~1b/c~0d')).toEqual(['a/b', 'c~d']);
    expect(toPointer(['a/b', 'c~d', 3])).toBe('/a~1b/c~0d/3');
    expect(parsePointer('')).toEqual([]);
  });

  it('read values', () => {
    expect(getAt(demo, '/shafts/0/segments/1/section')).toBe('clad');
    expect(getAt(demo, '/gearMeshes/0/b/radius')).toBe('120 mm');
    expect(getAt(demo, '/nothing/here')).toBeUndefined();
  });

  it('name places for people', () => {
    expect(describePointer(demo, '/shafts/0/segments/1/length')).toBe('shaft "input", segment 2, length');
    expect(describePointer(demo, '/gearMeshes/0/b/shaft')).toBe('gear mesh "G1", gear b, shaft');
  });
});

describe('edits', () => {
  const model = frozen(structuredClone(demo));

  it('replace only the path they touch and never mutate', () => {
    const next = applyEdit(model, '/sections/0/d', '45 mm');
    expect(next.sections[0].d).toBe('45 mm');
    expect(model.sections[0].d).toBe('40 mm');
    expect(next.shafts).toBe(model.shafts); // untouched branches are shared
    expect(next.sections[1]).toBe(model.sections[1]);
  });

  it('remove an optional field with undefined', () => {
    const next = applyEdit(model, '/gearMeshes/0/stiffness', undefined);
    expect('stiffness' in next.gearMeshes![0]).toBe(false);
  });

  it('store what a user typed through the unit reader', () => {
    const next = applyEdit(model, '/shafts/2/segments/0/length', parseInput('8', 'length', 'us').value);
    expect(next.shafts[2].segments[0].length).toBe('8 in');
  });

  it('rename references with a shaft, section or material id', () => {
    const s = applyEdit(model, '/shafts/0/id', 'drive');
    expect(s.supports!.filter((x) => x.shaft === 'drive').map((x) => x.id)).toEqual(['A', 'B', 'K']);
    expect(s.gearMeshes![0].a.shaft).toBe('drive');
    expect(s.torques!.every((t) => t.shaft === 'drive')).toBe(true);
    const m = applyEdit(model, '/materials/1/id', 'cuSn');
    expect(m.sections[2].layers![1].material).toBe('cuSn');
    const c = applyEdit(model, '/sections/0/id', 'd42');
    expect(c.shafts[0].segments[0].section).toBe('d42');
    expect(c.shafts[2].segments[0].section).toBe('d42');
  });

  it('switch the alternative forms of the contract', () => {
    const p = applyEdit(model, '/torques/0/@form', 'power');
    expect(p.torques![0]).toEqual({ id: 'motor', shaft: 'input', at: '100 mm', power: '1 kW', speed: '1000 rpm' });
    const t = applyEdit(model, '/torques/1/@form', 'torque');
    expect(Object.keys(t.torques![1]).sort()).toEqual(['at', 'id', 'shaft', 'torque']);
    const e = applyEdit(model, '/materials/0/@elastic', 'E');
    expect(e.materials[0].G).toBeUndefined();
    expect(e.materials[0].nu).toBe(0.3);
    const g = applyEdit(model, '/gearMeshes/0/@sizing', 'teeth');
    expect(g.gearMeshes![0].a).toEqual({ shaft: 'input', at: '600 mm', teeth: 20 });
    expect(g.gearMeshes![0].module).toBe('2 mm');
    const back = applyEdit(g, '/gearMeshes/0/@sizing', 'radius');
    expect(back.gearMeshes![0].module).toBeUndefined();
    expect(back.gearMeshes![0].b.radius).toBe('80 mm');
  });

  it('keep a section and a support coherent with their kind', () => {
    const solid = applyEdit(model, '/sections/1/shape', 'solid');
    expect(solid.sections[1]).toEqual({ id: 't50', shape: 'solid', d: '50 mm' });
    const layered = applyEdit(model, '/sections/0/shape', 'layered');
    expect(layered.sections[0].layers).toEqual([{ d: '40 mm', material: 'steel' }]);
    expect(layered.sections[0].d).toBeUndefined();
    const spring = applyEdit(model, '/supports/0/kind', 'spring');
    expect(spring.supports![0].stiffness).toBe('10 kN*m/rad');
    const fixed = applyEdit(model, '/supports/2/kind', 'fixed');
    expect(fixed.supports![2].stiffness).toBeUndefined();
  });

  it('drop limits once both are cleared', () => {
    const a = applyEdit(model, '/limits/twistRate', undefined);
    expect(a.limits).toEqual({ totalTwist: '1 deg' });
    expect(applyEdit(a, '/limits/totalTwist', undefined).limits).toBeUndefined();
  });
});

describe('rows', () => {
  const model = frozen(structuredClone(demo));

  it('get fresh ids and existing references', () => {
    expect(nextId('S', ['S1', 'S3'])).toBe('S2');
    const s = newRow(model, 'supports');
    // The demo's input shaft is held at both ends (A at 0, B at 650 mm); output is held nowhere.
    expect(s).toEqual({ id: 'S1', shaft: 'output', at: 0, kind: 'fixed' });
    expect((newRow(model, 'gearMeshes').b as { shaft: string }).shaft).toBe('output');
  });

  it('insert and remove at an index, including nested lists', () => {
    const a = insertRow(model, '/supports', { id: 'S1', shaft: 'input', at: 0, kind: 'fixed' }, 1);
    expect(a.supports!.map((s) => s.id)).toEqual(['A', 'S1', 'B', 'K', 'T']);
    const b = removeRow(a, '/supports', 0);
    expect(b.supports!.map((s) => s.id)).toEqual(['S1', 'B', 'K', 'T']);
    const seg = insertRow(model, '/shafts/1/segments', rowFor(model, '/shafts/1/segments'));
    expect(seg.shafts[1].segments).toHaveLength(2);
    expect(seg.shafts[1].segments[1]).toEqual({ length: '100 mm', section: 'd40', material: 'steel' });
    const lay = insertRow(model, '/sections/2/layers', rowFor(model, '/sections/2/layers'));
    expect(lay.sections[2].layers![2]).toEqual({ d: '50 mm', material: 'steel' });
  });

  it('create a list the model did not have', () => {
    const bare = { ...model, discs: undefined };
    const next = insertRow(bare as Model, '/discs', rowFor(bare as Model, '/discs'));
    expect(next.discs).toHaveLength(1);
  });
});

describe('a new support', () => {
  const one = (supports: Model['supports']): Model => ({
    format: 'shaftnet/1',
    name: 'one shaft (invented)',
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
    shafts: [{ id: 's', segments: [{ length: '250 mm', section: 'd40', material: 'steel' }, { length: '0.25 m', section: 'd40', material: 'steel' }] }],
    supports,
  });

  it('goes to the free end when z = 0 is held, and to z = 0 when nothing is', () => {
    // 250 mm + 0.25 m = 500 mm (sum of the segments).
    expect(shaftLength(one([]), 0)).toBeCloseTo(0.5, 12);
    expect(newSupportPlace(one([{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }]))).toEqual({ shaft: 's', at: '500 mm' });
    expect(newSupportPlace(one([]))).toEqual({ shaft: 's', at: 0 });
    expect(newSupportPlace(one([{ id: 'A', shaft: 's', at: '0 mm', kind: 'fixed' }, { id: 'B', shaft: 's', at: '0.5 m', kind: 'fixed' }]))).toEqual({ shaft: 's', at: '250 mm' });
  });
});

describe('files and new models', () => {
  it('read a model, or the model inside a library export, and refuse what is neither', () => {
    expect(modelFromFile(JSON.stringify(demo)).name).toBe(demo.name);
    expect(modelFromFile(JSON.stringify({ id: 'x', revision: 3, model: demo })).shafts).toHaveLength(3);
    expect(() => modelFromFile('{"name":"no shafts"}')).toThrow(/no "shafts"/);
    expect(() => modelFromFile('not json')).toThrow();
  });

  it('start a new model with one shaft held at z = 0', () => {
    const m = blankModel();
    expect(m.shafts).toHaveLength(1);
    expect(m.supports).toEqual([{ id: 'A', shaft: 'shaft1', at: 0, kind: 'fixed' }]);
    expect(blankModel()).not.toBe(m); // a fresh object each time
  });
});

describe('undo and redo', () => {
  it('walk back and forth over committed snapshots', () => {
    const h = new History<Model>(demo);
    const a = h.commit(applyEdit(demo, '/sections/0/d', '45 mm'));
    const b = h.commit(applyEdit(a, '/sections/0/d', '50 mm'));
    expect(h.undo()).toBe(a);
    expect(h.undo()).toBe(demo);
    expect(h.canUndo).toBe(false);
    expect(h.undo()).toBe(demo);
    expect(h.redo()).toBe(a);
    expect(h.redo()).toBe(b);
    expect(h.canRedo).toBe(false);
  });

  it('forget the redo list on a new edit, and cap the past', () => {
    const h = new History<number>(0, 3);
    [1, 2, 3, 4, 5].forEach((n) => h.commit(n));
    h.undo();
    h.commit(9);
    expect(h.canRedo).toBe(false);
    expect([h.undo(), h.undo(), h.undo(), h.undo()]).toEqual([4, 3, 2, 2]);
  });

  it('ignores a commit of the present and starts over on reset', () => {
    const h = new History<Model>(demo);
    h.commit(demo);
    expect(h.canUndo).toBe(false);
    h.commit(applyEdit(demo, '/name', 'x'));
    h.reset(demo);
    expect(h.canUndo).toBe(false);
  });
});

describe('issues from the API', () => {
  it('land on the pointers the inputs carry, several per field joined', () => {
    const map = issuesByPointer([
      { pointer: '/shafts/0/segments/1/length', message: 'must be positive' },
      { pointer: '/gearMeshes/0/b/shaft', message: 'no shaft "x"' },
      { pointer: '/shafts/0/segments/1/length', message: 'second' },
    ]);
    expect(map['/shafts/0/segments/1/length']).toBe('must be positive; second');
    expect(map['/gearMeshes/0/b/shaft']).toBe('no shaft "x"');
  });

  it('structural equality skips edits that change nothing', () => {
    expect(sameJson({ a: [1, { b: 2 }] }, { a: [1, { b: 2 }] })).toBe(true);
    expect(sameJson({ a: 1 }, { a: 1, b: undefined })).toBe(false);
    expect(sameJson(setIn(demo, ['name'], demo.name), demo)).toBe(true);
  });
});

describe('what the screen says about problems', () => {
  it('names fields by readable paths and says a mechanism once', () => {
    const issues = [
      { code: 'SN_NOT_POSITIVE' as const, pointer: '/shafts/0/segments/1/length', message: 'must be positive' },
      { code: 'SN_UNRESOLVED' as const, pointer: '/gearMeshes/0/b/shaft', message: 'no shaft "x"' },
    ];
    expect(issueLine(demo, issues[0])).toBe('shaft "input", segment 2, length: must be positive');
    expect(bannerReason(demo, issues, 'raw')).toBe('shaft "input", segment 2, length: must be positive (and 1 more, listed above)');
    expect(bannerReason(demo, [], '/x: raw')).toBe('/x: raw');
    const mech = { code: 'SN_MECHANISM' as const, pointer: '/supports', message: 'shaft "tail" can spin freely', shafts: ['tail'] };
    expect(bannerReason(demo, [mech], '')).toBe('shaft tail is free to spin (see above)');
    expect(issueLine(demo, mech)).toBe('Shaft tail is free to spin: add a fixed or spring support on it, or connect it to a supported shaft.');
    expect(mechanismText(['a', 'b'])).toMatch(/^Shafts a, b are free to spin: add a fixed or spring support on them/);
  });

  it('mark the fields, the rows of shafts free to spin and the connections of a loop', () => {
    const marks = issueMarks(demo, [
      { code: 'SN_MECHANISM', pointer: '/supports', message: 'free', shafts: ['tail'] },
      { code: 'SN_LOOP_MISMATCH', pointer: '', message: 'the loop does not close', connections: ['G1', 'C1'] },
      { code: 'SN_NOT_POSITIVE', pointer: '/sections/0/d', message: 'must be positive' },
    ]);
    expect(marks.shafts).toEqual(['tail']);
    expect(marks.rows).toEqual(['/shafts/2']);
    expect(marks.messages['/shafts/2']).toMatch(/^Free to spin/);
    expect(marks.messages['/gearMeshes/0']).toBe('the loop does not close');
    expect(marks.messages['/couplings/0']).toBe('the loop does not close');
    expect(marks.messages['/sections/0/d']).toBe('must be positive');
    expect(marks.messages['/supports']).toBeUndefined(); // the mechanism is said once, on the shaft's row
  });

  it('says what a gear mesh sized by teeth does to its radii', () => {
    const model = frozen(structuredClone(demo));
    const next = applyEdit(model, '/gearMeshes/0/@sizing', 'teeth');
    // Pitch radius = teeth × module / 2: 20 × 2 mm / 2 = 20 mm, 40 × 2 mm / 2 = 40 mm; the demo's radii are 40 and 120 mm.
    expect(sizingNote(model, next, 0)).toMatch(/^G1 is now sized by teeth .*: radii 20 mm and 40 mm, were 40 mm and 120 mm\. The mesh force/);
  });
});

describe('reading a diagram at any z', () => {
  // A diagram with a jump at z = 1 (two points) and a straight run after it (invented values).
  const z = [0, 1, 1, 3];
  const v = [10, 20, -5, 15];

  it('reads on the line between the points around z, the value before a jump at the jump', () => {
    expect(valueAt(z, v, 0.5)).toBeCloseTo(15, 12); // halfway from 10 to 20
    expect(valueAt(z, v, 1)).toBe(20); // T(z−) at the jump
    expect(valueAt(z, v, 2)).toBeCloseTo(5, 12); // halfway from -5 to 15
    expect(valueAt(z, v, 3)).toBe(15);
    expect(valueAt(z, v, 3.1)).toBeNull();
    expect(valueAt([], [], 0)).toBeNull();
  });

  it('moves the cursor by keys within the shaft', () => {
    expect(stepCursor('ArrowRight', false, null, 0, 2)).toBeCloseTo(0.02, 12); // a hundredth of 2
    expect(stepCursor('ArrowRight', true, 1, 0, 2)).toBeCloseTo(1.2, 12); // a tenth
    expect(stepCursor('ArrowLeft', false, 0, 0, 2)).toBe(0);
    expect(stepCursor('End', false, 0.3, 0, 2)).toBe(2);
    expect(stepCursor('a', false, 0.3, 0, 2)).toBeNull();
  });
});

describe('file names', () => {
  it('derive a file name from the model name', () => {
    expect(fileName('Demo (invented): mixer drive', 'json')).toBe('demo-invented-mixer-drive.json');
    expect(fileName('***', 'csv')).toBe('model.csv');
  });
});
