/**
 * The dynamics input refused field by field: each test breaks one thing in the dynamics demo
 * (server/demos/geared-drive-vibration.json) and asserts the error code and the JSON pointer; then
 * the warnings where inertia is left out, and an excitation's point as a station.
 */
import { describe, expect, it } from 'vitest';
import type { ErrorCode } from '../../shared-types/errors.js';
import { solveModel, solveModelJson } from '../../server/engine/index.js';
import { demoEditor, expectIssue, refusal, type Json } from './refusals.js';

const demo = demoEditor('geared-drive-vibration.json');

describe('dynamics input', () => {
  it('the demo solves with its modes and crossings', () => {
    const sol = solveModel(demo());
    expect(sol.modes).toHaveLength(6);
    expect((sol.crossings ?? []).length).toBe(6 * 3);
    expect(sol.warnings).toEqual([]);
  });

  const cases: Array<[string, (m: Json) => void, ErrorCode, string]> = [
    ['an unknown reference shaft', (m) => (m.dynamics.speed.shaft = 'nope'), 'SN_UNRESOLVED', '/dynamics/speed/shaft'],
    ['a running range whose max is below its min', (m) => (m.dynamics.speed.max = '600 rpm'), 'SN_RANGE_ORDER', '/dynamics/speed/max'],
    ['a speed in a length unit', (m) => (m.dynamics.speed.min = '3 mm'), 'SN_UNIT_KIND', '/dynamics/speed/min'],
    ['a zero speed', (m) => (m.dynamics.speed.min = 0), 'SN_NOT_POSITIVE', '/dynamics/speed/min'],
    ['negative damping', (m) => (m.dynamics.damping = -0.01), 'SN_OUT_OF_RANGE', '/dynamics/damping'],
    ['a margin of 150 %', (m) => (m.dynamics.margin = 1.5), 'SN_OUT_OF_RANGE', '/dynamics/margin'],
    ['an order of zero', (m) => (m.dynamics.orders = [1, 0]), 'SN_NOT_POSITIVE', '/dynamics/orders/1'],
    ['modes not a whole number', (m) => (m.dynamics.modes = 2.5), 'SN_OUT_OF_RANGE', '/dynamics/modes'],
    ['modes of zero', (m) => (m.dynamics.modes = 0), 'SN_OUT_OF_RANGE', '/dynamics/modes'],
    ['a negative maxFrequency', (m) => (m.dynamics.maxFrequency = '-5 Hz'), 'SN_NOT_POSITIVE', '/dynamics/maxFrequency'],
    ['an excitation off its shaft', (m) => (m.dynamics.excitations[0].at = '2 m'), 'SN_OFF_SHAFT', '/dynamics/excitations/0/at'],
    ['an excitation on an unknown shaft', (m) => (m.dynamics.excitations[0].shaft = 'nope'), 'SN_UNRESOLVED', '/dynamics/excitations/0/shaft'],
    ['an excitation of negative order', (m) => (m.dynamics.excitations[0].order = -2), 'SN_NOT_POSITIVE', '/dynamics/excitations/0/order'],
    ['an excitation amplitude in a stress unit', (m) => (m.dynamics.excitations[0].amplitude = '3 MPa'), 'SN_UNIT_KIND', '/dynamics/excitations/0/amplitude'],
    ['two excitations with one id', (m) => m.dynamics.excitations.push({ ...m.dynamics.excitations[0] }), 'SN_DUPLICATE_ID', '/dynamics/excitations/1/id'],
    ['orders without a speed', (m) => delete m.dynamics.speed && delete m.dynamics.excitations, 'SN_SCHEMA', '/dynamics/speed'],
    ['a field the dynamics do not have', (m) => (m.dynamics.rpm = 3), 'SN_SCHEMA', '/dynamics/rpm'],
    [
      'no inertia at all',
      (m) => {
        delete m.materials[0].density;
        m.discs = [];
      },
      'SN_DYN_NO_INERTIA',
      '/dynamics',
    ],
  ];
  it.each(cases)('%s', (_what, change, code, pointer) => {
    expectIssue(demo(change), code, pointer);
  });

  it('frequencies in Hz, kHz, rpm and rad/s are one kind', () => {
    const hz = solveModel(demo((m) => (m.dynamics = { maxFrequency: '0.3 kHz' })));
    const rads = solveModel(demo((m) => (m.dynamics = { maxFrequency: 300 * 2 * Math.PI })));
    const rpm = solveModel(demo((m) => (m.dynamics = { maxFrequency: '18000 rpm' })));
    expect(hz.modes).toHaveLength(3);
    // The same three modes; each frequency is bracketed to 1e-10 relative, wherever the bisection started.
    for (const other of [rads, rpm]) {
      expect(other.modes).toHaveLength(3);
      other.modes?.forEach((x, k) => expect(Math.abs(x.frequency - (hz.modes?.[k].frequency ?? 0))).toBeLessThanOrEqual(2e-10 * x.frequency));
    }
  });

  it('a group free to spin without inertia is refused, naming its shafts', () => {
    const e = refusal(
      demo((m) => {
        m.supports = [];
        delete m.materials[0].density;
        m.discs = [{ id: 'rotor', shaft: 'input', at: 0, inertia: 0.35 }];
        m.couplings = [];
      }),
    );
    expect(e.issues.map((i) => [i.code, i.shafts])).toEqual([['SN_DYN_NO_INERTIA', ['fan']]]);
  });

  it('a material without density: a warning that the shafts’ own inertia is left out', () => {
    const sol = solveModel(demo((m) => delete m.materials[0].density));
    // Four discs on massless shafts: four frequencies only, and a warning says so.
    expect(sol.warnings.map((w) => w.code)).toEqual(['SN_DYN_NO_DENSITY', 'SN_DYN_FEWER_MODES']);
    expect(sol.modes).toHaveLength(4);
  });

  it('an excitation’s point is a station', () => {
    const sol = solveModel(demo((m) => (m.dynamics.excitations[0] = { id: 'E1', shaft: 'fan', at: '123 mm', amplitude: '5 N*m', order: 1 })));
    expect(sol.shafts[2].stations.map((s) => s.z)).toContain(0.123);
    expect(sol.modes?.[0].shafts[2].z).toContain(0.123);
  });

  it('speed without orders: a warning, no crossings', () => {
    const sol = solveModel(demo((m) => delete m.dynamics.orders));
    expect(sol.crossings).toEqual([]);
    expect(sol.warnings.map((w) => w.code)).toEqual(['SN_DYN_NO_ORDERS']);
  });

  it('both writers agree byte for byte: with the statics omitted, and with load cases', () => {
    const text = (model: unknown) => {
      let out = '';
      solveModelJson(model, (t) => (out += t));
      return out;
    };
    const free = demo((m) => {
      m.supports = [];
      m.torques = [];
    });
    const omitted = solveModel(free);
    expect(omitted.warnings.map((w) => w.code)).toEqual(['SN_STATICS_OMITTED']);
    expect(omitted.modes?.[0].rigidBody).toBe(true);
    expect(text(free)).toBe(JSON.stringify(omitted));
    const cases = demo((m) => {
      m.loadCases = [{ id: 'run' }];
      for (const t of m.torques) t.case = 'run';
    });
    const withCases = solveModel(cases);
    expect(withCases.modes).toEqual(solveModel(demo()).modes);
    expect(withCases.checks.filter((c) => c.kind === 'crossing')).toHaveLength(1);
    expect(text(cases)).toBe(JSON.stringify(withCases));
  });
});
