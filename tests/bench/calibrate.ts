/**
 * A fixed piece of integer work, timed: this machine's speed drifts from
 * minute to minute (other guests share the host), so each benchmark prints
 * it beside its figures. Lower is faster; compare runs by it.
 */
export function calibrationMs(): number {
  const t0 = performance.now();
  let x = 0;
  for (let i = 0; i < 3e8; i++) x = (Math.imul(x, 1103515245) + 12345) | 0;
  const ms = performance.now() - t0;
  if (x === 42) console.log(''); // keeps the loop from being optimised away
  return ms;
}

/** One line for a benchmark's header. */
export function calibrationLine(): string {
  return `machine speed: 3e8 steps of a linear congruential generator in ${calibrationMs().toFixed(0)} ms (lower is faster)`;
}
