/**
 * The client's handling of issue 10 without a DOM: section outlines to scale
 * and their side views (client/src/section-geometry.ts), section-property
 * inputs in m⁴ and m³, the properties read from a solution's segments, edits
 * of the new shapes, tapers and stress raisers (client/src/model-edits.ts), and
 * what the results say about raisers (client/src/raiser-results.ts).
 *
 * Expected numbers are geometry computed in the test from the inputs (sums of
 * lengths, a bounding box), exact unit factors (1 in = 0.0254 m), or the
 * round-bar closed forms J = π d⁴ / 32 and Wt = J / (d/2) = π d³ / 16
 * (any strength-of-materials text, e.g. Gere & Goodno, Mechanics of Materials,
 * torsion of circular bars).
 */
import { describe, expect, it } from 'vitest';
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import {
  outerAt,
  outlineBox,
  parseSectionInput,
  readSectionQuantity,
  sectionInputText,
  sectionOutline,
  sectionProperties,
  segmentProperties,
  shaftProfile,
  sideView,
  type SegmentWithShape,
} from '../../client/src/section-geometry.js';
import { applyEdit, blankModel, newRow, rowFor, stressRaisersOf } from '../../client/src/model-edits.js';
import { checkLabel, raisersOf, shaftPeaks } from '../../client/src/raiser-results.js';

const MM = 1e-3;
const close = (a: number, b: number, rel = 1e-12) => expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.max(Math.abs(a), Math.abs(b)));

describe('section-property quantities (m⁴, m³)', () => {
  it('reads every unit of the two kinds by its exact factor, and refuses a mass inertia', () => {
    close(readSectionQuantity('2.1e5 mm4', 'areaMoment') as number, 2.1e5 * 1e-12);
    close(readSectionQuantity('3 cm4', 'areaMoment') as number, 3e-8);
    close(readSectionQuantity('1 in4', 'areaMoment') as number, 0.0254 ** 4);
    close(readSectionQuantity('1.1e4 mm3', 'sectionModulus') as number, 1.1e-5);
    close(readSectionQuantity('2 in3', 'sectionModulus') as number, 2 * 0.0254 ** 3);
    expect(readSectionQuantity(4e-7, 'areaMoment')).toBe(4e-7);
    expect(readSectionQuantity('1 kg*m2', 'areaMoment')).toBeNull();
    expect(readSectionQuantity('1 mm3', 'areaMoment')).toBeNull();
    expect(readSectionQuantity('1 mm4', 'sectionModulus')).toBeNull();
    expect(readSectionQuantity('12', 'areaMoment')).toBeNull();
  });

  it('takes a plain number in the display unit of the system and keeps a typed unit', () => {
    expect(parseSectionInput('2.1e5', 'areaMoment', 'si').value).toBe('2.1e5 mm4');
    expect(parseSectionInput('0.5', 'areaMoment', 'us').value).toBe('0.5 in4');
    expect(parseSectionInput('11000', 'sectionModulus', 'si').value).toBe('11000 mm3');
    expect(parseSectionInput('3 cm4', 'areaMoment', 'si')).toEqual({ value: '3 cm4' });
    expect(parseSectionInput('', 'areaMoment', 'si').value).toBeUndefined();
    expect(parseSectionInput('3 kg*m2', 'areaMoment', 'si').problem).toMatch(/unknown unit/);
    expect(parseSectionInput('lots', 'areaMoment', 'si').problem).toBeDefined();
    // Shown in the display unit: 1 in⁴ = 25.4⁴ mm⁴ = 416231.4256 mm⁴.
    expect(sectionInputText('1 in4', 'areaMoment', 'si')).toBe('416231');
    expect(sectionInputText('1 kg', 'areaMoment', 'si')).toBe('1 kg');
  });
});

describe('outlines to scale', () => {
  it('gives each shape its bounding box from its own sizes', () => {
    expect(outlineBox(sectionOutline({ shape: 'solid', d: '40 mm' }))).toEqual({ width: 40 * MM, height: 40 * MM });
    expect(outlineBox(sectionOutline({ shape: 'rectangle', width: '60 mm', height: '20 mm' }))).toEqual({ width: 60 * MM, height: 20 * MM });
    expect(outlineBox(sectionOutline({ shape: 'ellipse', width: '60 mm', height: '40 mm' }))).toEqual({ width: 60 * MM, height: 40 * MM });
    const layered = sectionOutline({ shape: 'layered', layers: [{ d: '30 mm', material: 'a' }, { d: '50 mm', material: 'b' }] });
    expect(outlineBox(layered).height).toBeCloseTo(50 * MM, 15);
  });

  it('lays open walls end to end at right angles: a channel of 40 × 4, 80 × 5, 40 × 4 mm', () => {
    const o = sectionOutline({ shape: 'thinOpen', walls: [{ length: '40 mm', thickness: '4 mm' }, { length: '80 mm', thickness: '5 mm' }, { length: '40 mm', thickness: '4 mm' }] });
    if (o.kind !== 'open') throw new Error(o.kind);
    // Centre lines: flange along x, web down, flange back: each wall as long as given.
    o.walls.forEach((w, i) => close(Math.hypot(w.x1 - w.x0, w.y1 - w.y0), [40, 80, 40][i] * MM));
    // Box: flange length + half the web's thickness across; web length + half of each flange's thickness down.
    const box = outlineBox(o);
    close(box.width, (40 + 5 / 2) * MM);
    close(box.height, (80 + 4 / 2 + 4 / 2) * MM);
  });

  it('draws a custom section as the round of its effective radius J / Wt', () => {
    const o = sectionOutline({ shape: 'custom', torsionConstant: '2.1e5 mm4', torsionalModulus: '1.1e4 mm3' });
    if (o.kind !== 'custom') throw new Error(o.kind);
    close(o.radius as number, (2.1e5 * 1e-12) / (1.1e4 * 1e-9));
    expect((sectionOutline({ shape: 'custom', torsionConstant: '2.1e5 mm4' }) as { radius: number | null }).radius).toBeNull();
  });

  it('shows a tube’s inside and a bore in the side view, and never a negative size', () => {
    const tube = sideView({ shape: 'rectangularTube', width: '80 mm', height: '60 mm', wall: '4 mm' });
    close(tube.outer, 60 * MM);
    // Inside height: 60 − 2 × 4 mm.
    close(tube.inner, 52 * MM);
    expect(sideView({ shape: 'hollow', d: '50 mm', di: '30 mm' })).toMatchObject({ outer: 50 * MM, inner: 30 * MM });
    expect(sideView({ shape: 'solid', d: '-40 mm' }).outer).toBe(0);
    expect(sideView(undefined).outer).toBe(0);
  });
});

describe('side view of a shaft with a taper', () => {
  const sections = [
    { id: 'd60', shape: 'solid', d: '60 mm' },
    { id: 'd40', shape: 'solid', d: '40 mm' },
    { id: 'h', shape: 'hollow', d: '60 mm', di: '30 mm' },
    { id: 'h2', shape: 'hollow', d: '40 mm', di: '20 mm' },
  ];
  const profile = shaftProfile(
    [
      { length: '200 mm', section: 'd60' },
      { length: '300 mm', section: 'd60', sectionEnd: 'd40' },
      { length: '100 mm', section: 'h', sectionEnd: 'h2' },
    ],
    sections,
  );

  it('places the segments end to end and gives a taper both end heights', () => {
    // Ends: 200, 200 + 300 and 500 + 100 mm.
    [[0, 0.2], [0.2, 0.5], [0.5, 0.6]].forEach(([a, b], i) => {
      close(profile[i].z0 + 1, a + 1);
      close(profile[i].z1, b);
    });
    expect(profile.map((p) => p.tapered)).toEqual([false, true, true]);
    expect([profile[1].outer0, profile[1].outer1]).toEqual([60 * MM, 40 * MM]);
    expect([profile[2].inner0, profile[2].inner1]).toEqual([30 * MM, 20 * MM]);
  });

  it('reads the height linearly inside a taper (the model format: the section varies linearly)', () => {
    close(outerAt(profile, 0.1), 60 * MM);
    // Middle of the taper: (60 + 40) / 2 mm.
    close(outerAt(profile, 0.35), 50 * MM);
    // A fifth of the way: 60 + (40 − 60) / 5 mm.
    close(outerAt(profile, 0.26), 56 * MM);
  });
});

describe('section properties from the solution', () => {
  const d = 40 * MM;
  const J = (Math.PI * d ** 4) / 32; // round bar, closed form
  const seg = (over: Partial<SegmentWithShape>): SegmentWithShape => ({
    index: 0, section: 'd40', from: 0, to: 0.5, torsionConstant: J, torsionalRigidity: 79.3e9 * J, stiffness: (79.3e9 * J) / 0.5,
    maxAbsTorque: 100, governingZ: 0, maxTwistRate: 0, twist: 0,
    layers: [{ material: 'steel', outerRadius: d / 2, maxShear: 0, allowableShear: null, utilisation: null, shearYield: null }],
    ...over,
  });

  it('gives a round bar of one material Ip = J and Wt = J / r = π d³ / 16', () => {
    const p = segmentProperties(seg({}), false);
    expect(p.Ip).toBe(J);
    close(p.Wt as number, (Math.PI * d ** 3) / 16);
  });

  it('takes Ip and Wt of a new shape from the segment, and has no single Wt for layers', () => {
    expect(segmentProperties(seg({ polarMoment: 3e-7, torsionalModulus: 1.1e-5 }), false)).toEqual({ J, Ip: 3e-7, Wt: 1.1e-5 });
    const two = seg({ layers: [...seg({}).layers, { ...seg({}).layers[0], outerRadius: 0.03 }] });
    expect(segmentProperties(two, false).Wt).toBeNull();
  });

  it('reads a taper’s end from the End fields and the end section’s radius', () => {
    const dEnd = 30 * MM;
    const Jend = (Math.PI * dEnd ** 4) / 32;
    const s = seg({ sectionEnd: 'd30', torsionConstantEnd: Jend, torsionalRigidityEnd: 79.3e9 * Jend });
    const p = segmentProperties(s, true, { id: 'd30', shape: 'solid', d: '30 mm' });
    expect(p.J).toBe(Jend);
    close(p.Wt as number, (Math.PI * dEnd ** 3) / 16);
    const solution = { shafts: [{ id: 'input', segments: [s] }] } as unknown as Solution;
    const sections = [{ id: 'd40', shape: 'solid', d: '40 mm' }, { id: 'd30', shape: 'solid', d: '30 mm' }, { id: 'spare', shape: 'solid', d: '10 mm' }];
    expect(sectionProperties(solution, 'd30', sections)).toMatchObject({ J: Jend, from: 'input, segment 1 (its end)' });
    expect(sectionProperties(solution, 'd40', sections)).toMatchObject({ J, from: 'input, segment 1' });
    expect(sectionProperties(solution, 'spare', sections)).toBeNull();
    expect(sectionProperties(null, 'd40', sections)).toBeNull();
  });
});

describe('editing the new shapes, tapers and stress raisers', () => {
  const base = (): Model => ({
    ...blankModel(),
    sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }, { id: 'd30', shape: 'solid', d: '30 mm' }],
    shafts: [{ id: 'shaft1', segments: [{ length: '250 mm', section: 'd40', material: 'steel' }, { length: '250 mm', section: 'd40', material: 'steel' }] }],
  });

  it('brings the fields of a new shape and drops those of the old one', () => {
    const m0 = base();
    const rect = applyEdit(m0, '/sections/0/shape', 'rectangle');
    expect(rect.sections[0]).toEqual({ id: 'd40', shape: 'rectangle', width: '60 mm', height: '20 mm' });
    expect(m0.sections[0]).toEqual({ id: 'd40', shape: 'solid', d: '40 mm' }); // untouched
    const open = applyEdit(rect, '/sections/0/shape', 'thinOpen');
    expect(Object.keys(open.sections[0]).sort()).toEqual(['id', 'shape', 'walls']);
    const tube = applyEdit(open, '/sections/0/shape', 'rectangularTube');
    expect(tube.sections[0]).toEqual({ id: 'd40', shape: 'rectangularTube', width: '80 mm', height: '60 mm', wall: '4 mm' });
    const custom = applyEdit(tube, '/sections/0/shape', 'custom');
    expect(custom.sections[0]).toEqual({ id: 'd40', shape: 'custom', torsionConstant: '2.1e5 mm4', torsionalModulus: '1.1e4 mm3' });
    // Back to a round shape: its own default, not a size of the custom section.
    expect(applyEdit(custom, '/sections/0/shape', 'solid').sections[0]).toEqual({ id: 'd40', shape: 'solid', d: '40 mm' });
    // Between round shapes the diameter stays, as before.
    const h = applyEdit(applyEdit(m0, '/sections/0/d', '44 mm'), '/sections/0/shape', 'hollow');
    expect(h.sections[0]).toEqual({ id: 'd40', shape: 'hollow', d: '44 mm', di: '30 mm' });
  });

  it('adds walls to an open section', () => {
    const m = applyEdit(base(), '/sections/0/shape', 'thinOpen');
    expect(rowFor(m, '/sections/0/walls')).toEqual({ length: '40 mm', thickness: '4 mm' });
  });

  it('renames a taper’s end section with the section, and a raiser’s shaft with the shaft', () => {
    let m = applyEdit(base(), '/shafts/0/segments/1/sectionEnd', 'd30');
    m = applyEdit(m, '/sections/1/id', 'small');
    expect((m.shafts[0].segments[1] as { sectionEnd?: string }).sectionEnd).toBe('small');
    expect(m.shafts[0].segments[0]).not.toHaveProperty('sectionEnd');
    m = applyEdit(m, '/shafts/0/segments/1/sectionEnd', undefined);
    expect(m.shafts[0].segments[1]).not.toHaveProperty('sectionEnd');
    const withRaiser = { ...m, stressRaisers: [newRow(m, 'stressRaisers')] } as Model;
    const renamed = applyEdit(withRaiser, '/shafts/0/id', 'input');
    expect(stressRaisersOf(renamed)[0].shaft).toBe('input');
  });

  it('puts a new stress raiser at the first segment boundary, and switches its kind', () => {
    const m = base();
    const row = newRow(m, 'stressRaisers');
    // The first segment is 250 mm long.
    expect(row).toEqual({ id: 'K1', shaft: 'shaft1', at: '250 mm', kind: 'factor', factor: 2 });
    const withRow = { ...m, stressRaisers: [row] } as Model;
    const shoulder = applyEdit(withRow, '/stressRaisers/0/kind', 'shoulder');
    expect(stressRaisersOf(shoulder)[0]).toEqual({ id: 'K1', shaft: 'shaft1', at: '250 mm', kind: 'shoulder', fillet: '1 mm' });
    const back = applyEdit(applyEdit(shoulder, '/stressRaisers/0/fillet', '2 mm'), '/stressRaisers/0/kind', 'factor');
    expect(stressRaisersOf(back)[0]).toEqual({ id: 'K1', shaft: 'shaft1', at: '250 mm', kind: 'factor', factor: 2 });
    expect(newRow({ ...m, stressRaisers: [row] } as Model, 'stressRaisers').id).toBe('K2');
  });
});

describe('stress raisers in the results', () => {
  const solution = {
    shafts: [{ id: 'input', diagram: { z: [0, 0.25, 0.25, 0.5], torque: [], rotation: [], shear: [-20e6, -20e6, -45e6, -45e6] } }],
    stressRaisers: [{ id: 'F1', shaft: 'input', z: 0.25, kind: 'shoulder', factor: 1.8, nominalShear: 45e6, localPeak: 81e6, material: 'steel', allowableShear: 55e6, utilisation: 81 / 55 }],
  } as unknown as Solution;

  it('names a local-peak check by its raiser and the others as before', () => {
    expect(checkLabel({ kind: 'localPeak', raiser: 'F1' }, 'Local peak')).toBe('Local peak at F1');
    expect(checkLabel({ kind: 'shear' }, 'Shear stress')).toBe('Shear stress');
    expect(checkLabel({ kind: 'localPeak' }, 'Local peak')).toBe('Local peak');
  });

  it('marks the local peak on the side of the signed nominal curve, with its magnitude', () => {
    expect(raisersOf(solution)).toHaveLength(1);
    expect(shaftPeaks(solution, 'input')).toEqual([{ z: 0.25, value: -81e6, label: 'local peak F1' }]);
    expect(shaftPeaks(solution, 'other')).toEqual([]);
    expect(raisersOf({ shafts: [] } as unknown as Solution)).toEqual([]);
  });
});
