/**
 * Progress and abort of a solve: the interface a holder passes in
 * (`options.progress`) and the engine's side of it. Pure: no clock is read
 * here except by `throttled`, which a holder wraps around its own reporter.
 *
 * The engine calls `checkpoint(progress, phase, fraction)` between the steps
 * of a solve (each stage of the pipeline, each right-hand side solved, each
 * piece of JSON written): without a holder that is one comparison with
 * undefined; with one it reads `aborted` (throwing `SolveAborted`) and calls
 * `report`. The number of calls is bounded by the steps, not by the stations,
 * except while writing, where it is one per piece of text (about 64 Ki
 * characters each). A long loop of a later stage (combinations, dynamics)
 * calls `loopCheckpoint`, which does the same every 2^k iterations.
 *
 * An abort leaves nothing behind: the pipeline's arrays are taken inside the
 * workspace's session, which gives all of them back when it ends, by return
 * or by throw (`Workspace.session`'s finally).
 */

/** The phases of a solve, in order, as progress reports them. */
export type ProgressPhase = 'stations' | 'assembly' | 'frequencies' | 'factorisation' | 'solve' | 'recovery' | 'forced response' | 'writing';

export const PROGRESS_PHASES: readonly ProgressPhase[] = ['stations', 'assembly', 'frequencies', 'factorisation', 'solve', 'recovery', 'forced response', 'writing'];

/** The phases of a model with `dynamics` only: a model without reports none of them. */
export const DYNAMICS_PHASES: readonly ProgressPhase[] = ['frequencies', 'forced response'];

/**
 * Each phase's share of a whole solve, for one overall fraction (a bar, a time
 * left). Measured on 1e6-station chains and gear trees written as JSON (the
 * engine bench's models; `onPhase` durations): stations 6–12 %, assembly 3–8 %,
 * factorisation and solve 4–8 %, recovery 6–15 %, writing the JSON 57–79 %.
 * The two phases of a model with dynamics (each root found; each speed of the
 * forced response's sweep and each refined bracket) are given no share of the
 * whole: their cost depends on the modes and speeds asked, not on the stations,
 * so the bar holds while they run and their own fraction is reported.
 * A solution written as an object instead spends less in writing; the bar then
 * jumps at the end, it never goes back.
 */
const PHASE_SHARE: Readonly<Record<ProgressPhase, number>> = {
  stations: 0.08,
  assembly: 0.05,
  frequencies: 0,
  factorisation: 0.05,
  solve: 0.02,
  recovery: 0.1,
  'forced response': 0,
  writing: 0.7,
};

/** What a holder passes in `options.progress`: where reports go, and whether to stop. */
export interface SolveProgress {
  /**
   * Called with the phase under way and the fraction of it done (0 … 1), in
   * phase order, the fraction not decreasing within a phase. Called between
   * steps, so as often as the steps go (see the file's comment); wrap it in
   * `throttled` to pass on at most one report per interval.
   */
  report(phase: ProgressPhase, fraction: number): void;
  /** True once the holder wants the solve stopped: the engine then throws `SolveAborted` at its next checkpoint. */
  readonly aborted: boolean;
}

/** Thrown by a solve whose holder set `aborted`; the workspace is given back when it propagates. */
export class SolveAborted extends Error {
  constructor() {
    super('the solve was cancelled');
    this.name = 'SolveAborted';
  }
}

/** The fraction of the whole solve done when `phase` is `fraction` done (0 … 1). */
export function overallFraction(phase: ProgressPhase, fraction: number): number {
  let before = 0;
  for (const p of PROGRESS_PHASES) {
    if (p === phase) break;
    before += PHASE_SHARE[p];
  }
  return Math.min(1, before + PHASE_SHARE[phase] * Math.min(1, Math.max(0, fraction)));
}

/** Between two steps: stops the solve if asked to, else reports. Nothing without a holder. */
export function checkpoint(progress: SolveProgress | undefined, phase: ProgressPhase, fraction: number): void {
  if (progress === undefined) return;
  if (progress.aborted) throw new SolveAborted();
  progress.report(phase, fraction);
}

/**
 * Inside a long loop: a checkpoint every 2^shift iterations (i of n), one
 * mask test otherwise. For later stages (combination batches, dynamics roots)
 * whose loops run long.
 */
export function loopCheckpoint(progress: SolveProgress | undefined, phase: ProgressPhase, i: number, n: number, shift = 12): void {
  if (progress === undefined || (i & ((1 << shift) - 1)) !== 0) return;
  checkpoint(progress, phase, n > 0 ? i / n : 0);
}

/**
 * A reporter that passes on at most one report per `intervalMs` (the first at
 * once; those in between are dropped), reading `now` only when a report comes:
 * for the holders that send reports on (a worker's messages, a stream, a terminal).
 */
export function throttled(
  report: (phase: ProgressPhase, fraction: number) => void,
  intervalMs: number,
  now: () => number = () => performance.now(),
): (phase: ProgressPhase, fraction: number) => void {
  let last = -Infinity;
  return (phase, fraction) => {
    const t = now();
    if (t - last < intervalMs) return;
    last = t;
    report(phase, fraction);
  };
}

/**
 * Characters of solution JSON per station, a little more than measured on the
 * bench's 1e6-station models (645–690 with 8 diagram points): the writing
 * phase's fraction is the characters written over this estimate, held below 1
 * until the last piece.
 */
export const JSON_CHARS_PER_STATION = 700;

/** A sink that counts what it passes on and checkpoints the writing phase once per piece. */
export function writingSink(sink: (text: string) => void, progress: SolveProgress | undefined, stations: number): (text: string) => void {
  if (progress === undefined) return sink;
  const expected = Math.max(1, stations * JSON_CHARS_PER_STATION);
  let written = 0;
  checkpoint(progress, 'writing', 0);
  return (text) => {
    checkpoint(progress, 'writing', Math.min(0.99, written / expected));
    written += text.length;
    sink(text);
  };
}
