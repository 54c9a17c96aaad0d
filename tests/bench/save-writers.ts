/**
 * The writer loop the save benches share (not a test): `writers` writers at once,
 * each creating its own model, then saving revision after revision on the latest
 * base until the time is up; saves per second and the p50/p99 latency of a save.
 */

/** A model as the last write left it. */
export interface Written {
  readonly id: string;
  readonly revision: number;
}

export interface WriterFigures {
  readonly perSecond: number;
  /** Milliseconds. */
  readonly p50: number;
  /** Milliseconds. */
  readonly p99: number;
  readonly saves: number;
}

/** Runs the writers for `seconds`: `create(w)` makes writer w's model, `save(w, k, last)` its k-th save on `last`. */
export async function measureWriters(
  writers: number,
  seconds: number,
  create: (w: number) => Promise<Written>,
  save: (w: number, k: number, last: Written) => Promise<Written>,
): Promise<WriterFigures> {
  const latencies: number[] = [];
  const deadline = performance.now() + seconds * 1000;
  const t0 = performance.now();
  await Promise.all(
    Array.from({ length: writers }, async (_, w) => {
      let last = await create(w);
      for (let k = 0; performance.now() < deadline; k++) {
        const s = performance.now();
        last = await save(w, k, last);
        latencies.push(performance.now() - s);
      }
    }),
  );
  const elapsed = (performance.now() - t0) / 1000;
  latencies.sort((a, b) => a - b);
  const at = (q: number) => latencies[Math.min(latencies.length - 1, Math.floor(q * latencies.length))] ?? NaN;
  return { perSecond: latencies.length / elapsed, p50: at(0.5), p99: at(0.99), saves: latencies.length };
}

/** One line of figures: the label padded to `labelWidth`, the milliseconds to `msWidth`. */
export function figuresLine(label: string, r: WriterFigures, labelWidth: number, msWidth: number): string {
  return `${label.padEnd(labelWidth)} ${r.perSecond.toFixed(0).padStart(7)} saves/s   p50 ${r.p50.toFixed(2).padStart(msWidth)} ms   p99 ${r.p99.toFixed(2).padStart(msWidth)} ms   (${r.saves} saves)`;
}
