import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { jsonToBytes } from '../../server/http/json-bytes.js';

describe('jsonToBytes', () => {
  it('gives exactly what JSON.stringify gives (seeded random JSON)', () => {
    fc.assert(
      fc.property(fc.jsonValue({ maxDepth: 6 }), (v) => {
        expect(jsonToBytes(v).toString('utf8')).toBe(JSON.stringify(v));
      }),
      { seed: 99, numRuns: 500 },
    );
  });

  it('handles large arrays, undefined members and non-ASCII text across chunk borders', () => {
    const v = {
      a: Array.from({ length: 300_000 }, (_, i) => ({ z: i / 7, name: i % 1000 === 0 ? 'ü€𝄞' : 'x', skip: undefined })),
      holes: [1, undefined, 3],
      nested: { deep: Array.from({ length: 1000 }, (_, i) => [i, -i, null]) },
    };
    expect(jsonToBytes(v).toString('utf8')).toBe(JSON.stringify(v));
  });
});
