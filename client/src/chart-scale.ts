/*
 * Scales and ticks of the client's charts (sn-plot's diagrams along z, sn-dynamics-chart's x–y charts):
 * pure, tested in tests/client/dynamics.test.ts.
 */

/** A linear map from [d0, d1] onto [r0, r1] (a degenerate domain maps to r0). */
export function linearScale(d0: number, d1: number, r0: number, r1: number): (x: number) => number {
  const span = d1 - d0;
  return span === 0 ? () => r0 : (x) => r0 + ((x - d0) / span) * (r1 - r0);
}

/** Round tick values covering [lo, hi] (1, 2, 2.5, 5 × a power of ten), about `count` steps. */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / count;
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 2.5, 5, 10].map((k) => k * p).find((s) => s >= raw) ?? 10 * p;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step - 1e-9) * step; v <= hi + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return out;
}
