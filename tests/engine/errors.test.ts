/**
 * Every way the engine refuses a model: each test breaks one thing in the demo
 * (server/demos/mixer-drive.json) and asserts the error code and the exact JSON
 * pointer of the field (and, for mechanisms and rigid loops, the shafts or the
 * connections named). Then the warnings path (a rigid loop that jams) and many
 * errors at once.
 */
import { describe, expect, it } from 'vitest';
import { ERROR_CODES, ModelError, type ErrorCode, type ModelIssue } from '../../shared-types/errors.js';
import type { Solution } from '../../shared-types/solution.js';
import { solveModel } from '../../server/engine/index.js';
import { demoEditor, refusal, type Json } from './refusals.js';

const demo = demoEditor('mixer-drive.json');

/** Asserts that the model is refused with exactly these (code, pointer) issues, first one first. */
function expectIssues(model: unknown, expected: Array<[ErrorCode, string]>): ModelError {
  const e = refusal(model);
  const seen = new Set<string>();
  const got: Array<[ErrorCode, string]> = [];
  for (const i of e.issues) {
    const key = `${i.code} ${i.pointer}`;
    if (!seen.has(key)) got.push([i.code, i.pointer]);
    seen.add(key);
    expect(i.message.length, `message of ${key}`).toBeGreaterThan(0);
  }
  expect(got.sort()).toEqual([...expected].sort());
  expect(e.code).toBe(e.issues[0].code);
  expect(e.status).toBe(ERROR_CODES[e.code].status);
  return e;
}

const expectIssue = (model: unknown, code: ErrorCode, pointer: string) => expectIssues(model, [[code, pointer]]);

const sorted = (xs: readonly string[] | undefined) => [...(xs ?? [])].sort();

describe('the demo itself', () => {
  it('solves', () => {
    expect(() => solveModel(demo())).not.toThrow();
  });
});

describe('shape errors (SN_SCHEMA, SN_FORMAT)', () => {
  it.each<[string, (m: Json) => void, ErrorCode, string]>([
    ['a missing field', (m) => delete m.shafts[0].segments[1].length, 'SN_SCHEMA', '/shafts/0/segments/1/length'],
    ['an unknown field', (m) => (m.materials[0].foo = 1), 'SN_SCHEMA', '/materials/0/foo'],
    ['a misspelt list', (m) => ((m.torque = m.torques), delete m.torques), 'SN_SCHEMA', '/torque'],
    ['an enum value not allowed', (m) => (m.gearMeshes[0].sense = 'sideways'), 'SN_SCHEMA', '/gearMeshes/0/sense'],
    ['a support kind not allowed', (m) => (m.supports[0].kind = 'pinned'), 'SN_SCHEMA', '/supports/0/kind'],
    ['a shaft without segments', (m) => (m.shafts[2].segments = []), 'SN_SCHEMA', '/shafts/2/segments'],
    ['a quantity of the wrong JSON type', (m) => (m.torques[0].torque = true), 'SN_SCHEMA', '/torques/0/torque'],
    ['teeth that are not a whole number', (m) => ((m.gearMeshes[0].a.teeth = 16.5), delete m.gearMeshes[0].a.radius, (m.gearMeshes[0].module = '5 mm')), 'SN_SCHEMA', '/gearMeshes/0/a/teeth'],
    ['a spring support without stiffness', (m) => delete m.supports[2].stiffness, 'SN_SCHEMA', '/supports/2/stiffness'],
    ['a hollow section without a bore', (m) => delete m.sections[1].di, 'SN_SCHEMA', '/sections/1/di'],
    ['another format version', (m) => (m.format = 'shaftnet/2'), 'SN_FORMAT', '/format'],
  ])('%s', (_what, change, code, pointer) => {
    expectIssue(demo(change), code, pointer);
  });

  it('a model that is not an object is refused at the root', () => {
    expectIssue([], 'SN_SCHEMA', '');
    expectIssue(null, 'SN_SCHEMA', '');
  });
});

describe('quantity errors', () => {
  it.each<[string, (m: Json) => void, ErrorCode, string]>([
    ['a number without a unit', (m) => (m.sections[0].d = '40'), 'SN_UNIT_MISSING', '/sections/0/d'],
    ['an unknown unit', (m) => (m.sections[0].d = '40 furlongs'), 'SN_UNIT_UNKNOWN', '/sections/0/d'],
    ['a stress where a length belongs', (m) => (m.sections[0].d = '40 GPa'), 'SN_UNIT_KIND', '/sections/0/d'],
    ['a length where a modulus belongs', (m) => (m.materials[0].G = '79.3 mm'), 'SN_UNIT_KIND', '/materials/0/G'],
    ['a torque where an angle belongs', (m) => (m.couplings[0].misfit = '0.5 N*m'), 'SN_UNIT_KIND', '/couplings/0/misfit'],
    ['a rotational stiffness where a linear one belongs', (m) => (m.gearMeshes[0].stiffness = '400 N*m/rad'), 'SN_UNIT_KIND', '/gearMeshes/0/stiffness'],
    ['a unit of speed, not in the catalogue', (m) => (m.torques[1].speed = '24 rps'), 'SN_UNIT_UNKNOWN', '/torques/1/speed'],
    ['words instead of a number', (m) => (m.sections[0].d = 'forty mm'), 'SN_QUANTITY_SYNTAX', '/sections/0/d'],
    ['"NaN mm" (NaN cannot be a JSON number, but can be typed)', (m) => (m.torques[0].at = 'NaN mm'), 'SN_NOT_FINITE', '/torques/0/at'],
    ['"Infinity N*m"', (m) => (m.torques[0].torque = 'Infinity N*m'), 'SN_NOT_FINITE', '/torques/0/torque'],
    ['a magnitude beyond double range', (m) => (m.torques[0].torque = '1e400 N*m'), 'SN_NOT_FINITE', '/torques/0/torque'],
    // 1e300 × 6.894757e9 Pa/Msi overflows a double (largest ≈ 1.8e308).
    ['a value that overflows in SI', (m) => (m.materials[0].G = '1e300 Msi'), 'SN_NOT_FINITE', '/materials/0/G'],
  ])('%s', (_what, change, code, pointer) => {
    expectIssue(demo(change), code, pointer);
  });

  it('Infinity from JSON text (1e999 parses to Infinity) is not finite', () => {
    const text = JSON.stringify(demo((m) => (m.gearMeshes[0].stiffness = '@@INF@@'))).replace('"@@INF@@"', '1e999');
    const model = JSON.parse(text) as Json;
    expect(model.gearMeshes[0].stiffness).toBe(Infinity);
    expectIssue(model, 'SN_NOT_FINITE', '/gearMeshes/0/stiffness');
  });

  it('-1e999 in a torque field is not finite either', () => {
    const text = JSON.stringify(demo((m) => (m.torques[0].torque = '@@INF@@'))).replace('"@@INF@@"', '-1e999');
    expectIssue(JSON.parse(text), 'SN_NOT_FINITE', '/torques/0/torque');
  });
});

describe('sizes that must be positive (SN_NOT_POSITIVE)', () => {
  it.each<[string, (m: Json) => void, string]>([
    ['a zero segment length', (m) => m.shafts[2].segments.push({ length: '0 mm', section: 'd40', material: 'steel' }), '/shafts/2/segments/1/length'],
    // 210 mm then −10 mm keeps the tail 200 mm long, so its support stays on the shaft.
    ['a negative segment length', (m) => (m.shafts[2].segments = [{ length: '210 mm', section: 'd40', material: 'steel' }, { length: -0.01, section: 'd40', material: 'steel' }]), '/shafts/2/segments/1/length'],
    ['a negative diameter', (m) => (m.sections[0].d = '-40 mm'), '/sections/0/d'],
    ['a zero shear modulus', (m) => (m.materials[0].G = 0), '/materials/0/G'],
    ['a negative Young modulus', (m) => (m.materials[1].E = '-110 GPa'), '/materials/1/E'],
    ['a zero gear radius', (m) => (m.gearMeshes[0].a.radius = '0 mm'), '/gearMeshes/0/a/radius'],
    ['a zero module', (m) => ((m.gearMeshes[0].module = '0 mm'), delete m.gearMeshes[0].a.radius, (m.gearMeshes[0].a.teeth = 16)), '/gearMeshes/0/module'],
    ['a negative spring stiffness', (m) => (m.supports[2].stiffness = '-12 kN*m/rad'), '/supports/2/stiffness'],
    ['a zero mesh stiffness', (m) => (m.gearMeshes[0].stiffness = 0), '/gearMeshes/0/stiffness'],
    ['a zero coupling stiffness', (m) => (m.couplings[0].stiffness = '0 kN*m/rad'), '/couplings/0/stiffness'],
    ['a zero speed', (m) => (m.torques[1].speed = '0 rpm'), '/torques/1/speed'],
    // The error registry: "a length, diameter, modulus, radius, stiffness or speed is zero or negative".
    ['a negative speed', (m) => (m.torques[1].speed = '-1450 rpm'), '/torques/1/speed'],
  ])('%s', (_what, change, pointer) => {
    expectIssue(demo(change), 'SN_NOT_POSITIVE', pointer);
  });

  it("Poisson's ratio of 0.5 or more is out of range", () => {
    // Isotropic elasticity needs −1 < nu < 0.5 for a positive-definite strain energy.
    expectIssue(demo((m) => (m.materials[1].nu = 0.5)), 'SN_OUT_OF_RANGE', '/materials/1/nu');
  });
});

describe('values outside the physical range of their kind (SN_OUT_OF_RANGE; ranges in README, common practice, no source)', () => {
  it.each<[string, (m: Json) => void, string]>([
    ['a diameter of 1e-300 m', (m) => (m.sections[0].d = 1e-300), '/sections/0/d'],
    ['a bore of 50 nm (below 1e-7 m)', (m) => (m.sections[1].di = '5e-5 mm'), '/sections/1/di'],
    ['a layer of 200 km', (m) => (m.sections[2].layers[1].d = 2e5), '/sections/2/layers/1/d'],
    ['a point at 1e-300 m', (m) => (m.torques[0].at = 1e-300), '/torques/0/at'],
    ['a shear modulus of 500 Pa', (m) => (m.materials[0].G = '0.5 kPa'), '/materials/0/G'],
    ['an allowable stress of 1e14 Pa', (m) => (m.materials[0].allowableShear = '1e5 GPa'), '/materials/0/allowableShear'],
    ['a density of 1e6 kg/m3', (m) => (m.materials[0].density = 1e6), '/materials/0/density'],
    ['a torque of 1e13 N·m', (m) => (m.torques[0].torque = '1e10 kN*m'), '/torques/0/torque'],
    ['a power of 1e11 W', (m) => (m.torques[1].power = '-1e8 kW'), '/torques/1/power'],
    ['a speed of 1e7 rad/s', (m) => (m.torques[1].speed = 1e7), '/torques/1/speed'],
    ['a distributed torque of 1e-13 N·m/m', (m) => (m.distributedTorques[0].start = 1e-13), '/distributedTorques/0/start'],
    ['a spring stiffness of 1e16 N·m/rad', (m) => (m.supports[2].stiffness = '1e13 kN*m/rad'), '/supports/2/stiffness'],
    ['a mesh stiffness of 1e-7 N/m', (m) => (m.gearMeshes[0].stiffness = 1e-7), '/gearMeshes/0/stiffness'],
    ['a mesh offset of 1e6 m', (m) => (m.gearMeshes[0].offset = 1e6), '/gearMeshes/0/offset'],
    ['a coupling misfit of 1e5 rad', (m) => (m.couplings[0].misfit = 1e5), '/couplings/0/misfit'],
    ['a support rotation of 1e-13 rad', (m) => (m.supports[1].rotation = 1e-13), '/supports/1/rotation'],
    ['a twist-rate limit of 1e7 rad/m', (m) => (m.limits = { twistRate: 1e7 }), '/limits/twistRate'],
    ['a disc inertia of 1e11 kg·m²', (m) => (m.discs[0].inertia = 1e11), '/discs/0/inertia'],
  ])('%s', (_what, change, pointer) => {
    const e = expectIssue(demo(change), 'SN_OUT_OF_RANGE', pointer);
    expect(e.status).toBe(400);
    expect(e.issues[0].message).toMatch(/is outside the physical range for .+: its size must lie from \S+ to \S+ \S+$/);
  });

  it('a segment shorter than 2e-12 of its shaft (stations closer than 1e-12 of the length merge) is refused at its length', () => {
    // 1e-7 m beside 1e5 m: 1e-7 ≤ 2e-12 × (1e5 + 1e-7) ≈ 2e-7, each length inside its own range.
    const e = expectIssue(
      demo((m) => (m.shafts[2].segments = [{ length: 1e-7, section: 'd40', material: 'steel' }, { length: 1e5, section: 'd40', material: 'steel' }])),
      'SN_OUT_OF_RANGE',
      '/shafts/2/segments/0/length',
    );
    expect(e.issues[0].message).toMatch(/its ends cannot be told apart/);
    // 1 µm beside 1 m is far above the limit (1e-6 > 2e-12): it solves.
    expect(() => solveModel(demo((m) => (m.shafts[2].segments = [{ length: 1e-6, section: 'd40', material: 'steel' }, { length: 1, section: 'd40', material: 'steel' }])))).not.toThrow();
  });

  it('zero is in range for a signed quantity (a torque, a misfit, a rotation, an offset)', () => {
    expect(() =>
      solveModel(
        demo((m) => {
          m.torques[0].torque = 0;
          m.couplings[0].misfit = 0;
          m.supports[1].rotation = '0 deg';
          m.gearMeshes[0].offset = 0;
        }),
      ),
    ).not.toThrow();
  });
});

describe('ids and references', () => {
  it('a duplicate shaft id is named at the second one', () => {
    expectIssue(demo((m) => m.shafts.splice(1, 0, { ...m.shafts[0] })), 'SN_DUPLICATE_ID', '/shafts/1/id');
  });

  it('a duplicate support id', () => {
    expectIssue(demo((m) => (m.supports[3].id = 'A')), 'SN_DUPLICATE_ID', '/supports/3/id');
  });

  it.each<[string, (m: Json) => void, string]>([
    ['a gear on a shaft that does not exist', (m) => (m.gearMeshes[0].b.shaft = 'outptu'), '/gearMeshes/0/b/shaft'],
    ['a coupling end on a shaft that does not exist', (m) => (m.couplings[0].b.shaft = 'tale'), '/couplings/0/b/shaft'],
    ['a support on a shaft that does not exist', (m) => (m.supports[3].shaft = 'tale'), '/supports/3/shaft'],
    ['a segment with an unknown section', (m) => (m.shafts[1].segments[0].section = 't51'), '/shafts/1/segments/0/section'],
    ['a segment with an unknown material', (m) => (m.shafts[1].segments[0].material = 'iron'), '/shafts/1/segments/0/material'],
    ['a layer with an unknown material', (m) => (m.sections[2].layers[1].material = 'brass'), '/sections/2/layers/1/material'],
  ])('%s', (_what, change, pointer) => {
    expectIssue(demo(change), 'SN_UNRESOLVED', pointer);
  });
});

describe('points off their shaft (SN_OFF_SHAFT)', () => {
  it.each<[string, (m: Json) => void, string]>([
    ['a torque beyond the end', (m) => (m.torques[0].at = '700 mm'), '/torques/0/at'],
    ['a torque before the start', (m) => (m.torques[0].at = '-1 mm'), '/torques/0/at'],
    ['a distributed torque running past the end', (m) => (m.distributedTorques[0].to = '651 mm'), '/distributedTorques/0/to'],
    ['a gear beyond the end', (m) => (m.gearMeshes[0].a.at = '0.66 m'), '/gearMeshes/0/a/at'],
    ['a coupling end beyond the end', (m) => (m.couplings[0].a.at = '301 mm'), '/couplings/0/a/at'],
    // 12 in = 304.8 mm, past the 300 mm output shaft.
    ['a disc beyond the end, in inches', (m) => (m.discs[0].at = '12 in'), '/discs/0/at'],
  ])('%s', (_what, change, pointer) => {
    expectIssue(demo(change), 'SN_OFF_SHAFT', pointer);
  });

  it('a point at the very end typed in another unit is on the shaft (round-off is not "off")', () => {
    // 200 mm / 25.4 mm per in, written out; read back it differs from 0.2 m by round-off only.
    const sol = solveModel(demo((m) => (m.supports[3].at = `${0.2 / 0.0254} in`)));
    expect(sol.reactions.find((r) => r.support === 'T')).toBeDefined();
  });
});

describe('sections, materials, gears, torques, ranges', () => {
  it.each<[string, (m: Json) => void, ErrorCode, string]>([
    ['a bore equal to the outer diameter', (m) => (m.sections[1].di = '50 mm'), 'SN_SECTION_GEOMETRY', '/sections/1/di'],
    ['a bore larger than the outer diameter', (m) => (m.sections[1].di = '2.5 in'), 'SN_SECTION_GEOMETRY', '/sections/1/di'],
    ['layers that do not grow outwards', (m) => (m.sections[2].layers[1].d = '30 mm'), 'SN_SECTION_GEOMETRY', '/sections/2/layers/1/d'],
    ['a layered bore as large as the first layer', (m) => (m.sections[2].di = '30 mm'), 'SN_SECTION_GEOMETRY', '/sections/2/layers/0/d'],
    ['a material with neither G nor E and nu', (m) => delete m.materials[0].G, 'SN_MATERIAL', '/materials/0/E'],
    ['a material with G and E and nu', (m) => Object.assign(m.materials[0], { E: '200 GPa', nu: 0.3 }), 'SN_MATERIAL', '/materials/0'],
    ['a material with E but no nu', (m) => delete m.materials[1].nu, 'SN_MATERIAL', '/materials/1/nu'],
    ['a solid segment without its material', (m) => delete m.shafts[2].segments[0].material, 'SN_MATERIAL', '/shafts/2/segments/0/material'],
    ['a layered segment that also names a material', (m) => (m.shafts[0].segments[1].material = 'steel'), 'SN_MATERIAL', '/shafts/0/segments/1/material'],
    ['a gear with neither radius nor teeth', (m) => delete m.gearMeshes[0].a.radius, 'SN_GEAR_SIZE', '/gearMeshes/0/a'],
    ['a gear with both radius and teeth', (m) => ((m.gearMeshes[0].b.teeth = 48), (m.gearMeshes[0].module = '5 mm')), 'SN_GEAR_SIZE', '/gearMeshes/0/b'],
    ['teeth without the mesh module', (m) => (delete m.gearMeshes[0].a.radius, (m.gearMeshes[0].a.teeth = 16)), 'SN_GEAR_SIZE', '/gearMeshes/0/module'],
    ['a point torque with neither torque nor power', (m) => delete m.torques[0].torque, 'SN_TORQUE_FORM', '/torques/0'],
    ['a point torque with both torque and power', (m) => Object.assign(m.torques[0], { power: '1 kW', speed: '100 rpm' }), 'SN_TORQUE_FORM', '/torques/0'],
    ['power without speed', (m) => delete m.torques[1].speed, 'SN_TORQUE_FORM', '/torques/1/speed'],
    ['a distributed torque that ends before it starts', (m) => Object.assign(m.distributedTorques[0], { from: '500 mm', to: '250 mm' }), 'SN_RANGE_ORDER', '/distributedTorques/0/to'],
  ])('%s', (_what, change, code, pointer) => {
    expectIssue(demo(change), code, pointer);
  });

  it('teeth with a module give the same answer as the pitch radii (r = m z / 2)', () => {
    // 16 teeth × 5 mm / 2 = 40 mm and 48 × 5 / 2 = 120 mm: the demo's radii.
    const byTeeth = solveModel(
      demo((m) => {
        m.gearMeshes[0].module = '5 mm';
        m.gearMeshes[0].a = { shaft: 'input', at: '600 mm', teeth: 16 };
        m.gearMeshes[0].b = { shaft: 'output', at: '50 mm', teeth: 48 };
      }),
    );
    const byRadius = solveModel(demo());
    expect(Math.abs(byTeeth.gearMeshes[0].force - byRadius.gearMeshes[0].force)).toBeLessThanOrEqual(1e-12 * Math.abs(byRadius.gearMeshes[0].force));
  });
});

describe('mechanisms (SN_MECHANISM, 422)', () => {
  const mechanism = (e: ModelError): ModelIssue[] => e.issues.filter((i) => i.code === 'SN_MECHANISM');

  it('two shafts joined by a mesh with no support: both named', () => {
    const e = refusal(
      demo((m) => {
        m.supports = m.supports.filter((s: Json) => s.shaft !== 'input');
        m.couplings = [];
      }),
    );
    expect(e.code).toBe('SN_MECHANISM');
    expect(e.status).toBe(422);
    const issues = mechanism(e);
    expect(issues).toHaveLength(1);
    expect(sorted(issues[0].shafts)).toEqual(['input', 'output']);
    // The contract names no pointer for a mechanism; the engine points at the supports list (where the fix goes).
    expect(issues[0].pointer).toBe('/supports');
    expect(e.issues).toHaveLength(1);
  });

  it('one free shaft in a model whose other shafts are held: only it is named', () => {
    const e = refusal(
      demo((m) => {
        m.supports = m.supports.filter((s: Json) => s.shaft !== 'tail');
        m.couplings = [];
      }),
    );
    expect(e.code).toBe('SN_MECHANISM');
    const issues = mechanism(e);
    expect(issues.flatMap((i) => sorted(i.shafts))).toEqual(['tail']);
  });

  it('two separate free groups: every free shaft is named, no held one', () => {
    const e = refusal(
      demo((m) => {
        m.supports = [];
        m.couplings = [];
      }),
    );
    expect(e.code).toBe('SN_MECHANISM');
    const named = mechanism(e).flatMap((i) => [...(i.shafts ?? [])]);
    expect(named.sort()).toEqual(['input', 'output', 'tail']);
    // The groups are not mixed up: input and output spin together, tail apart.
    for (const i of mechanism(e)) {
      const s = sorted(i.shafts);
      expect([['input', 'output'], ['tail'], ['input', 'output', 'tail']]).toContainEqual(s);
    }
  });

  it('a free shaft tied by a rigid coupling to a held one is not a mechanism', () => {
    const sol = solveModel(
      demo((m) => {
        m.supports = m.supports.filter((s: Json) => s.shaft !== 'tail');
        delete m.couplings[0].stiffness;
      }),
    );
    expect(sol.couplings[0].twist).toBeCloseTo(0, 12);
  });

  /** No supports; the demo's compliant G1 and C1 plus a compliant G2 from tail back to input: an elastic loop. */
  const elasticLoop = (g2RadiusA: string): Json =>
    demo((m) => {
      m.supports = [];
      const g1 = m.gearMeshes[0];
      m.gearMeshes.push({ id: 'G2', a: { shaft: 'tail', at: 0, radius: g2RadiusA }, b: { shaft: 'input', at: '600 mm', radius: '40 mm' }, sense: 'opposite', stiffness: g1.stiffness });
    });

  it('an elastic loop whose ratios multiply to one turns freely as a whole: a mechanism of all three shafts', () => {
    // G1: φ_out = −(40/120)·φ_in; C1: φ_tail = φ_out; G2 (120 mm on tail, 40 mm on input): φ_tail = −(40/120)·φ_in. They agree.
    const e = refusal(elasticLoop('120 mm'));
    expect(e.code).toBe('SN_MECHANISM');
    expect(mechanism(e).map((i) => sorted(i.shafts))).toEqual([['input', 'output', 'tail']]);
  });

  it('an elastic loop whose ratios disagree cannot turn without strain: solved, in equilibrium, not a mechanism', () => {
    const sol = solveModel(elasticLoop('100 mm'));
    expect(sol.reactions).toHaveLength(0);
    const scale = sol.shafts.reduce((m, sh) => sh.segments.reduce((mm, sg) => Math.max(mm, sg.maxAbsTorque), m), 0);
    // Round-off allowance relative to the largest torque: common practice, no source.
    expect(sol.equilibrium.maxResidual).toBeLessThan(1e-9 * scale);
  });
});

/** The demo with a rigid loop input@600 —G1— output@50 —C1— tail@0 —G2— input@600. */
function rigidTriangle(g2RadiusA: string, offsets: { g1?: string; c1?: string; g2?: string }): Json {
  return demo((m) => {
    const g1 = m.gearMeshes[0];
    delete g1.stiffness;
    delete g1.offset;
    if (offsets.g1) g1.offset = offsets.g1;
    const c1 = m.couplings[0];
    delete c1.stiffness;
    delete c1.misfit;
    if (offsets.c1) c1.misfit = offsets.c1;
    c1.a.at = '50 mm';
    // G1 gives φ_out = −(40/120) φ_in; C1 gives φ_tail = φ_out; G2 with r_a = 120 mm, r_b = 40 mm gives φ_tail = −(40/120) φ_in too.
    const g2: Json = { id: 'G2', a: { shaft: 'tail', at: 0, radius: g2RadiusA }, b: { shaft: 'input', at: '600 mm', radius: '40 mm' }, sense: 'opposite' };
    if (offsets.g2) g2.offset = offsets.g2;
    m.gearMeshes.push(g2);
  });
}

describe('rigid loops', () => {
  it('two rigid couplings tying the same stations with different misfits: SN_LOOP_MISMATCH naming both', () => {
    const e = refusal(
      demo((m) => {
        delete m.couplings[0].stiffness;
        m.couplings.push({ id: 'C2', a: { shaft: 'output', at: '300 mm' }, b: { shaft: 'tail', at: 0 } });
      }),
    );
    expect(e.code).toBe('SN_LOOP_MISMATCH');
    expect(e.status).toBe(422);
    expect(e.issues).toHaveLength(1);
    expect(sorted(e.issues[0].connections)).toEqual(['C1', 'C2']);
  });

  it('a rigid three-connection loop with ratio one whose offsets do not add up: SN_LOOP_MISMATCH naming its connections', () => {
    // Closing needs misfit = offset / 120 mm = 4.17e-4 rad; 0.5 deg = 8.7e-3 rad is not that.
    const e = refusal(rigidTriangle('120 mm', { g1: '0.05 mm', c1: '0.5 deg' }));
    expect(e.code).toBe('SN_LOOP_MISMATCH');
    expect(e.issues).toHaveLength(1);
    expect(sorted(e.issues[0].connections)).toEqual(['C1', 'G1', 'G2']);
  });

  it('the same loop with offsets that add up solves, and keeps every rigid relation', () => {
    // 0.04 φ_in + 0.12 φ_out = 5e-5 m and φ_out − φ_tail = misfit close the loop when misfit = 5e-5 / 0.12 rad.
    const misfit = 5e-5 / 0.12; // rad
    const sol = solveModel(rigidTriangle('120 mm', { g1: '0.05 mm', c1: `${misfit} rad` }));
    const phi = (sol: Solution, shaft: string, z: number) =>
      (sol.shafts.find((s) => s.id === shaft)?.stations.find((st) => Math.abs(st.z - z) < 1e-9) ?? { rotation: NaN }).rotation;
    const pin = phi(sol, 'input', 0.6);
    const pout = phi(sol, 'output', 0.05);
    const ptail = phi(sol, 'tail', 0);
    // Scale: r φ of the loop's stations, m; 1e-12 relative is round-off.
    const scale = Math.max(0.04 * Math.abs(pin), 0.12 * Math.abs(pout), 5e-5);
    expect(Math.abs(0.04 * pin + 0.12 * pout - 5e-5)).toBeLessThanOrEqual(1e-12 * scale);
    expect(Math.abs(pout - ptail - misfit)).toBeLessThanOrEqual((1e-12 * scale) / 0.12);
    expect(Math.abs(0.12 * ptail + 0.04 * pin)).toBeLessThanOrEqual(1e-12 * scale);
    expect(sol.warnings.filter((w) => w.code === 'SN_LOCKED_LOOP')).toEqual([]);
  });

  it('a rigid loop whose ratios multiply to other than one is solved with SN_LOCKED_LOOP, and its stations cannot turn', () => {
    // G2 with r_a = 100 mm: G1 and C1 give φ_tail = −φ_in/3, G2 gives φ_tail = −0.4 φ_in; the loop ratio is (1/3)/0.4 = 5/6 ≠ 1.
    const sol = solveModel(rigidTriangle('100 mm', {}));
    const locked = sol.warnings.filter((w) => w.code === 'SN_LOCKED_LOOP');
    expect(locked).toHaveLength(1);
    expect(sorted(locked[0].connections)).toEqual(['C1', 'G1', 'G2']);
    const phi = (shaft: string, z: number) => sol.shafts.find((s) => s.id === shaft)?.stations.find((st) => Math.abs(st.z - z) < 1e-9)?.rotation;
    // Scale: the largest rotation in the solution; the jammed stations are zero to round-off.
    const scale = Math.max(...sol.shafts.flatMap((s) => s.stations.map((st) => Math.abs(st.rotation))));
    expect(scale).toBeGreaterThan(0);
    for (const [shaft, z] of [['input', 0.6], ['output', 0.05], ['tail', 0]] as const) {
      const p = phi(shaft, z);
      expect(p, `${shaft}@${z}`).toBeDefined();
      expect(Math.abs(p as number), `${shaft}@${z}`).toBeLessThanOrEqual(1e-12 * scale);
    }
    // 1e-9 of the motor torque (350 N·m): round-off allowance, as in the property tests.
    expect(sol.equilibrium.maxResidual).toBeLessThanOrEqual(1e-9 * 350);
  });
});

describe('many errors at once', () => {
  it('reports every issue, not just the first', () => {
    const n = 300;
    const model = demo((m) => {
      for (let i = 0; i < n; i++) m.torques.push({ id: `off${i}`, shaft: 'input', at: `${700 + i} mm`, torque: '1 N*m' });
      for (let i = 0; i < 50; i++) m.distributedTorques.push({ id: `back${i}`, shaft: 'input', from: '400 mm', to: '300 mm', start: 1, end: 1 });
      for (let i = 0; i < 40; i++) m.supports.push({ id: `ghost${i}`, shaft: `nowhere${i}`, at: 0, kind: 'fixed' });
      m.materials[0].G = '79.3 furlongs';
      m.sections[0].d = '40 GPa';
      m.torques[0].torque = 'NaN N*m';
    });
    const e = refusal(model);
    const want = new Set<string>([
      ...Array.from({ length: n }, (_, i) => `SN_OFF_SHAFT /torques/${i + 2}/at`),
      ...Array.from({ length: 50 }, (_, i) => `SN_RANGE_ORDER /distributedTorques/${i + 1}/to`),
      ...Array.from({ length: 40 }, (_, i) => `SN_UNRESOLVED /supports/${i + 4}/shaft`),
      'SN_UNIT_UNKNOWN /materials/0/G',
      'SN_UNIT_KIND /sections/0/d',
      'SN_NOT_FINITE /torques/0/torque',
    ]);
    const got = new Set(e.issues.map((i) => `${i.code} ${i.pointer}`));
    expect([...got].sort()).toEqual([...want].sort());
  });

  it('reports every shape error, not just the first', () => {
    const model = demo((m) => {
      m.shafts[0].segments = Array.from({ length: 120 }, () => ({ section: 'd40', material: 'steel' }));
    });
    const e = refusal(model);
    expect(e.issues.map((i) => `${i.code} ${i.pointer}`).sort()).toEqual(
      Array.from({ length: 120 }, (_, i) => `SN_SCHEMA /shafts/0/segments/${i}/length`).sort(),
    );
  });
});
