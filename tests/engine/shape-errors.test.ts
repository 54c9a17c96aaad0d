/**
 * Refusals of the new section shapes, tapered segments and stress raisers: each test breaks one
 * thing in a small valid model and asserts the code and the exact JSON pointer of the field.
 * Then the warnings a valid model with a stretched thin wall or an open section carries.
 */
import { describe, expect, it } from 'vitest';
import type { ErrorCode } from '../../shared-types/errors.js';
import { modelSize, solveModel } from '../../server/engine/index.js';
import { expectIssue as expectOne, refusal, type Json } from './refusals.js';

/** One issue, `code` at `ptr`: every shape error here is a 400. */
function expectIssue(model: unknown, code: ErrorCode, ptr: string): void {
  expect(expectOne(model, code, ptr).status).toBe(400);
}


/** A valid model: a taper, a rectangle and two round steps, fixed at both ends, with a shoulder. */
function base(change: (m: Json) => void = () => {}): Json {
  const m: Json = {
    format: 'shaftnet/1',
    name: 'phase 2 errors',
    materials: [{ id: 'steel', G: '80 GPa', allowableShear: '120 MPa' }],
    sections: [
      { id: 'd60', shape: 'solid', d: '60 mm' },
      { id: 'd40', shape: 'solid', d: '40 mm' },
      { id: 'h60', shape: 'hollow', d: '60 mm', di: '30 mm' },
      { id: 'h40', shape: 'hollow', d: '40 mm', di: '20 mm' },
      { id: 'bar', shape: 'rectangle', width: '60 mm', height: '20 mm' },
      { id: 'box', shape: 'rectangularTube', width: '80 mm', height: '60 mm', wall: '3 mm' },
    ],
    shafts: [
      {
        id: 's',
        segments: [
          { length: '300 mm', section: 'd60', sectionEnd: 'd40', material: 'steel' },
          { length: '200 mm', section: 'd60', material: 'steel' },
          { length: '200 mm', section: 'd40', material: 'steel' },
          { length: '200 mm', section: 'bar', material: 'steel' },
          { length: '200 mm', section: 'box', material: 'steel' },
        ],
      },
    ],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: '1100 mm', kind: 'fixed' },
    ],
    torques: [{ id: 'T', shaft: 's', at: '100 mm', torque: '800 N*m' }],
    stressRaisers: [{ id: 'F1', shaft: 's', at: '500 mm', kind: 'shoulder', fillet: '4 mm' }],
  };
  change(m);
  return m;
}

describe('the base model', () => {
  it('solves, with no warnings beyond none for its thin tube (3 mm wall on a 57 mm centre line)', () => {
    const sol = solveModel(base());
    expect(sol.warnings).toEqual([]);
    expect(sol.stressRaisers?.map((r) => r.id)).toEqual(['F1']);
  });
  it('the size bound before solving counts a raiser\'s station', () => {
    // One segment, a support and a torque at its ends (no station of their own), three raisers inside:
    // five stations, more than the bound would be without the raisers (1 shaft + 1 segment + 1 + 1 = 4).
    const m = {
      format: 'shaftnet/1',
      name: 'size bound',
      materials: [{ id: 'steel', G: 80e9 }],
      sections: [{ id: 'd', shape: 'solid', d: 0.04 }],
      shafts: [{ id: 's', segments: [{ length: 1, section: 'd', material: 'steel' }] }],
      supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 's', at: 1, torque: 10 }],
      stressRaisers: [0.2, 0.5, 0.7].map((at, i) => ({ id: `K${i}`, shaft: 's', at, kind: 'factor', factor: 2 })),
    };
    expect(solveModel(m).stats.stations).toBe(5);
    expect(modelSize(m).stations).toBeGreaterThanOrEqual(5);
  });
});

describe('tapered segments', () => {
  it('a sectionEnd of another shape pair is refused at the segment\'s sectionEnd', () => {
    expectIssue(base((m) => (m.shafts[0].segments[0].sectionEnd = 'h40')), 'SN_SECTION_GEOMETRY', '/shafts/0/segments/0/sectionEnd');
    expectIssue(base((m) => (m.shafts[0].segments[0].sectionEnd = 'bar')), 'SN_SECTION_GEOMETRY', '/shafts/0/segments/0/sectionEnd');
  });
  it('a sectionEnd that names no section is unresolved', () => {
    expectIssue(base((m) => (m.shafts[0].segments[0].sectionEnd = 'nope')), 'SN_UNRESOLVED', '/shafts/0/segments/0/sectionEnd');
  });
  it('a bore at the small end larger than the small end\'s outer diameter is refused where it is typed', () => {
    expectIssue(
      base((m) => {
        m.shafts[0].segments[0] = { length: '300 mm', section: 'h60', sectionEnd: 'h40', material: 'steel' };
        m.sections[3].di = '45 mm';
      }),
      'SN_SECTION_GEOMETRY',
      '/sections/3/di',
    );
  });
  it('a taper needs the segment\'s material', () => {
    expectIssue(base((m) => delete m.shafts[0].segments[0].material), 'SN_MATERIAL', '/shafts/0/segments/0/material');
  });
});

describe('new shapes', () => {
  it('a tube wall thicker than half the width is refused at the wall', () => {
    expectIssue(base((m) => (m.sections[5].wall = '31 mm')), 'SN_SECTION_GEOMETRY', '/sections/5/wall');
  });
  it('a missing size, a wrong unit kind and a field of another shape name their field', () => {
    expectIssue(base((m) => delete m.sections[4].height), 'SN_SCHEMA', '/sections/4/height');
    expectIssue(base((m) => (m.sections[4].width = '60 kg*m2')), 'SN_UNIT_KIND', '/sections/4/width');
    expectIssue(base((m) => (m.sections[4].d = '60 mm')), 'SN_SCHEMA', '/sections/4/d');
    expectIssue(base((m) => (m.sections[0].width = '60 mm')), 'SN_SCHEMA', '/sections/0/width');
  });
  it('a custom section reads m4 and m3 and refuses mass inertia for its torsion constant', () => {
    const custom = (J: string) =>
      base((m) => {
        m.sections.push({ id: 'cat', shape: 'custom', torsionConstant: J, torsionalModulus: '1.1e4 mm3' });
        m.shafts[0].segments[3].section = 'cat';
      });
    expect(() => solveModel(custom('2.1e5 mm4'))).not.toThrow();
    expectIssue(custom('2.1 kg*m2'), 'SN_UNIT_KIND', '/sections/6/torsionConstant');
  });
  it('a new shape needs the segment\'s material', () => {
    expectIssue(base((m) => delete m.shafts[0].segments[3].material), 'SN_MATERIAL', '/shafts/0/segments/3/material');
  });
  it('a thin open wall of zero thickness is not positive', () => {
    expectIssue(
      base((m) => {
        m.sections.push({ id: 'chan', shape: 'thinOpen', walls: [{ length: '80 mm', thickness: '0 mm' }] });
        m.shafts[0].segments[3].section = 'chan';
      }),
      'SN_NOT_POSITIVE',
      '/sections/6/walls/0/thickness',
    );
  });
});

describe('stress raisers', () => {
  it('a shoulder at a boundary with no diameter step is refused (SN_RAISER_PLACE at its "at")', () => {
    // 500 mm joins d60 to d40; with d40 on both sides there is no step.
    expectIssue(base((m) => (m.shafts[0].segments[1].section = 'd40')), 'SN_RAISER_PLACE', '/stressRaisers/0/at');
  });
  it('a shoulder away from a segment boundary is refused', () => {
    expectIssue(base((m) => (m.stressRaisers[0].at = '450 mm')), 'SN_RAISER_PLACE', '/stressRaisers/0/at');
  });
  it('a shoulder between a round and a rectangular section is refused', () => {
    expectIssue(base((m) => (m.stressRaisers[0].at = '700 mm')), 'SN_RAISER_PLACE', '/stressRaisers/0/at');
  });
  it('a fillet outside the fit\'s range (h/r outside 0.25 … 4) names the fillet', () => {
    // h = (60 − 40)/2 = 10 mm: r = 2 mm gives h/r = 5, r = 50 mm gives 0.2.
    expectIssue(base((m) => (m.stressRaisers[0].fillet = '2 mm')), 'SN_OUT_OF_RANGE', '/stressRaisers/0/fillet');
    expectIssue(base((m) => (m.stressRaisers[0].fillet = '50 mm')), 'SN_OUT_OF_RANGE', '/stressRaisers/0/fillet');
  });
  it('a shoulder without a fillet, or with a factor, and a factor below 1, name their field', () => {
    expectIssue(base((m) => delete m.stressRaisers[0].fillet), 'SN_SCHEMA', '/stressRaisers/0/fillet');
    expectIssue(base((m) => (m.stressRaisers[0].factor = 2)), 'SN_SCHEMA', '/stressRaisers/0/factor');
    expectIssue(base((m) => m.stressRaisers.push({ id: 'K', shaft: 's', at: '100 mm', kind: 'factor', factor: 0.9 })), 'SN_OUT_OF_RANGE', '/stressRaisers/1/factor');
  });
  it('an unknown shaft, a point off the shaft and a duplicate id are refused as for every point item', () => {
    expectIssue(base((m) => (m.stressRaisers[0].shaft = 'x')), 'SN_UNRESOLVED', '/stressRaisers/0/shaft');
    expectIssue(base((m) => (m.stressRaisers[0].at = '2 m')), 'SN_OFF_SHAFT', '/stressRaisers/0/at');
    expectIssue(base((m) => m.stressRaisers.push({ id: 'F1', shaft: 's', at: '100 mm', kind: 'factor', factor: 2 })), 'SN_DUPLICATE_ID', '/stressRaisers/1/id');
  });
});

describe('warnings', () => {
  it('a tube wall over a tenth of the smaller centre-line dimension warns SN_THIN_WALL naming the section', () => {
    const sol = solveModel(base((m) => (m.sections[5].wall = '8 mm')));
    expect(sol.warnings.map((w) => w.code)).toEqual(['SN_THIN_WALL']);
    expect(sol.warnings[0].message).toContain('"box"');
  });
  it('an open section warns SN_OPEN_SECTION, and a short wall SN_THIN_WALL', () => {
    const sol = solveModel(
      base((m) => {
        m.sections.push({ id: 'chan', shape: 'thinOpen', walls: [{ length: '80 mm', thickness: '5 mm' }, { length: '30 mm', thickness: '4 mm' }] });
        m.shafts[0].segments[3].section = 'chan';
      }),
    );
    expect(sol.warnings.map((w) => w.code).sort()).toEqual(['SN_OPEN_SECTION', 'SN_THIN_WALL']);
    for (const w of sol.warnings) expect(w.message).toContain('"chan"');
  });
});
