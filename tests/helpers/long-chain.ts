/**
 * Long models for the progress and cancel tests (invented, for run time only):
 * one steel shaft of `stations` stations, fixed at both ends, a torque at every
 * tenth station; with `cases`, its torques spread over that many load cases and
 * `combos` combinations of them. `fixedFixedChain` is its shaft, for other tests' chains too.
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
  return fixedFixedChain(`Long chain (invented), ${stations} stations`, segments, segs * h, {
    torques,
    ...(cases > 0
      ? {
          loadCases: ids.map((id) => ({ id })),
          combinations: Array.from({ length: combos }, (_, k) => ({ id: `k${k}`, factors: Object.fromEntries(ids.map((id, j) => [id, ((k + j) % 3) - 1])) })),
        }
      : {}),
  });
}

/**
 * A steel shaft 's' fixed at both ends (invented): G = 79.3 GPa, allowable shear 55 MPa, sections
 * 'a' (solid, d = 40 mm) and 'b' (hollow, 50/30 mm), supports A at 0 and B at `length`; `loads`
 * (torques, load cases, combinations) follow.
 */
export function fixedFixedChain(name: string, segments: unknown[], length: number, loads: Record<string, unknown>): Record<string, unknown> {
  return {
    format: 'shaftnet/1',
    name,
    materials: [{ id: 'steel', G: 79.3e9, allowableShear: 55e6 }],
    sections: [
      { id: 'a', shape: 'solid', d: 0.04 },
      { id: 'b', shape: 'hollow', d: 0.05, di: 0.03 },
    ],
    shafts: [{ id: 's', segments }],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: length, kind: 'fixed' },
    ],
    ...loads,
  };
}
