/**
 * The solution is written by one walk over the engine's columns
 * (server/engine/output.ts) into two writers: objects, and JSON text. The
 * text must be, byte for byte, what JSON.stringify gives for the object:
 * JSON.stringify (ECMA-262 §25.5.2) is the reference here, and the object
 * form is checked by every other engine test. Both hold the fields of the
 * schema in shared-types/solution.ts, no more, no fewer.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { solveModel, solveModelJson } from '../../server/engine/index.js';
import { MAX_LISTED_CHECKS } from '../../server/engine/recover.js';
import { Solution } from '../../shared-types/solution.js';
import { randomModel } from './random-models.js';

/** JSON-schema nodes as TypeBox makes them (the parts read here). */
interface SchemaNode {
  type?: string;
  properties?: Record<string, SchemaNode>;
  required?: string[];
  items?: SchemaNode;
}

/** Every object of `value` against the schema: no field the schema lacks, none it requires missing. */
function fieldProblems(value: unknown, schema: SchemaNode, path: string, out: string[]): void {
  if (schema.type === 'object' && schema.properties && value !== null && typeof value === 'object') {
    const props = schema.properties;
    for (const key of Object.keys(value)) if (!(key in props)) out.push(`${path}/${key}: not in the schema`);
    for (const key of schema.required ?? []) if (!(key in value)) out.push(`${path}/${key}: missing`);
    for (const [key, sub] of Object.entries(props)) {
      if (key in value) fieldProblems((value as Record<string, unknown>)[key], sub, `${path}/${key}`, out);
    }
  } else if (schema.type === 'array' && schema.items && Array.isArray(value)) {
    value.slice(0, 50).forEach((item, k) => fieldProblems(item, schema.items as SchemaNode, `${path}/${k}`, out));
  }
}

const demoDir = new URL('../../server/demos/', import.meta.url);
const demos = readdirSync(demoDir)
  .filter((f) => f.endsWith('.json'))
  .map((f) => [f, JSON.parse(readFileSync(new URL(f, demoDir), 'utf8'))] as const);

/** The JSON text in pieces of at most about `piece` characters, and the pieces. */
function written(model: unknown, piece?: number, options = {}): { text: string; pieces: string[] } {
  const pieces: string[] = [];
  solveModelJson(model, (t) => pieces.push(t), options, piece);
  return { text: pieces.join(''), pieces };
}

describe('solution JSON written from columns', () => {
  it.each(demos)('demo %s: the same bytes as JSON.stringify of the solution object', (_name, model) => {
    const text = written(model).text;
    expect(text).toBe(JSON.stringify(solveModel(model)));
    expect(JSON.parse(text).format).toBe('shaftnet-solution/1');
  });

  it('300 seeded random systems (loops, layers, imposed rotations, loads): the same bytes', () => {
    let differing = 0;
    let loads = 0;
    for (let seed = 1; seed <= 300; seed++) {
      const model = randomModel(seed, { loops: 'sometimes' });
      if ((model.distributedTorques ?? []).length > 0) loads++;
      const object = JSON.stringify(solveModel(model));
      if (written(model).text !== object) differing++;
    }
    expect(differing).toBe(0);
    expect(loads).toBeGreaterThan(50); // the generator did exercise curved diagrams
  });

  it('every object has exactly the fields of the solution schema (demos and 100 random systems)', () => {
    const problems: string[] = [];
    let withName = 0;
    let layerChecks = 0;
    const models: unknown[] = [...demos.map(([, m]) => m), ...Array.from({ length: 100 }, (_, k) => randomModel(400 + k, { loops: 'sometimes' }))];
    for (const model of models) {
      const object = solveModel(model);
      fieldProblems(object, Solution as SchemaNode, '', problems);
      withName += object.shafts.filter((s) => s.name !== undefined).length;
      layerChecks += object.checks.filter((c) => c.kind === 'shear').length;
    }
    expect(problems.slice(0, 10)).toEqual([]);
    // Optional fields were met both ways.
    expect(withName).toBeGreaterThan(0);
    expect(layerChecks).toBeGreaterThan(0);
  });

  it('in small pieces, the pieces join to the same text', () => {
    const model = randomModel(7, { shafts: [3, 5], maxSegments: 4 });
    const whole = JSON.stringify(solveModel(model));
    const { text, pieces } = written(model, 64);
    expect(text).toBe(whole);
    expect(pieces.length).toBeGreaterThan(1);
  });

  it('names, escapes, missing allowables and no limits are written as the object has them', () => {
    const model = {
      format: 'shaftnet/1',
      name: 'Quote " and \\ and ünïcode (invented)',
      materials: [
        { id: 'steel "A"', G: '79.3 GPa' },
        { id: 'bronze', G: '41 GPa', allowableShear: '30 MPa', shearYield: '120 MPa' },
      ],
      sections: [{ id: 'core\tsleeve', shape: 'layered', layers: [{ material: 'steel "A"', d: 0.03 }, { material: 'bronze', d: 0.05 }] }],
      shafts: [{ id: 'one', name: 'Shaft ✓', segments: [{ length: 0.5, section: 'core\tsleeve' }] }],
      supports: [{ id: 'A', shaft: 'one', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 'one', at: 0.5, torque: 100 }],
    };
    const text = written(model).text;
    expect(text).toBe(JSON.stringify(solveModel(model)));
    const parsed = JSON.parse(text);
    expect(parsed.shafts[0].name).toBe('Shaft ✓');
    expect(parsed.shafts[0].segments[0].layers[0].utilisation).toBeNull();
  });

  it('over the listed-check cap, the worst checks are written in the same order', () => {
    const n = MAX_LISTED_CHECKS + 500;
    const model = {
      format: 'shaftnet/1',
      name: 'Many checks (invented)',
      materials: [{ id: 's', G: 79.3e9, allowableShear: 40e6 }],
      sections: [{ id: 'd', shape: 'solid', d: 0.03 }],
      shafts: [{ id: 'long', segments: Array.from({ length: n }, () => ({ length: 2 ** -10, section: 'd', material: 's' })) }],
      supports: [
        { id: 'A', shaft: 'long', at: 0, kind: 'fixed' },
        { id: 'B', shaft: 'long', at: n * 2 ** -10, kind: 'fixed' },
      ],
      distributedTorques: [{ id: 'q', shaft: 'long', from: 0, to: n * 2 ** -10, start: 0, end: 50 }],
      limits: { twistRate: '0.5 deg/m', totalTwist: '1 deg' },
    };
    const object = solveModel(model);
    expect(object.checks.length).toBe(MAX_LISTED_CHECKS);
    expect(object.stats.checksEvaluated).toBe(2 * n + 1);
    expect(written(model, 1 << 16).text).toBe(JSON.stringify(object));
  });
});

describe('selection of the check threshold', () => {
  it('kthSmallest agrees with a full sort (TypedArray.prototype.sort) on random arrays with ties', async () => {
    const { kthSmallest } = await import('../../server/engine/recover.js');
    let seed = 99;
    const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 4294967296);
    let wrong = 0;
    for (let trial = 0; trial < 400; trial++) {
      const n = 1 + Math.floor(rand() * 300);
      const levels = 1 + Math.floor(rand() * 40); // few levels: many ties
      const a = Float64Array.from({ length: n }, () => Math.floor(rand() * levels) / 7);
      const sorted = a.slice().sort();
      const k = Math.floor(rand() * n);
      if (kthSmallest(a.slice(), k) !== sorted[k]) wrong++;
    }
    expect(wrong).toBe(0);
  });
});
