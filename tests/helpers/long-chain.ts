/**
 * Long models for the progress and cancel tests (invented, for run time only):
 * one steel shaft of `stations` stations, fixed at both ends, a torque at every
 * tenth station; with `cases`, its torques spread over that many load cases and
 * `combos` combinations of them.
 */
export function longChain(stations: number, cases = 0, combos = 0): Record<string, unknown> {
  const segs = stations - 1;
  const h = 0.01; // m
  const segments = Array.from({ length: segs }, (_, k) => ({ length: h, section: k % 2 ? 'a' : 'b', material: 'steel' }));
  const torques: Array<Record<string, unknown>> = [];
  for (let k = 5; k < segs; k += 10) {
    torques.push({ id: `t${k}`, shaft: 's', at: k * h, torque: (k % 7) - 3, ...(cases > 0 ? { case: `c${torques.length % cases}` } : {}) });
  }
  const ids = Array.from({ length: cases }, (_, k) => `c${k}`);
  return {
    format: 'shaftnet/1',
    name: `Long chain (invented), ${stations} stations`,
    materials: [{ id: 'steel', G: 79.3e9, allowableShear: 55e6 }],
    sections: [
      { id: 'a', shape: 'solid', d: 0.04 },
      { id: 'b', shape: 'hollow', d: 0.05, di: 0.03 },
    ],
    shafts: [{ id: 's', segments }],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: segs * h, kind: 'fixed' },
    ],
    torques,
    ...(cases > 0
      ? {
          loadCases: ids.map((id) => ({ id })),
          combinations: Array.from({ length: combos }, (_, k) => ({ id: `k${k}`, factors: Object.fromEntries(ids.map((id, j) => [id, ((k + j) % 3) - 1])) })),
        }
      : {}),
  };
}
