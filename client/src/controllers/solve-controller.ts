/**
 * The solve of the model on screen, as a Lit task: a committed edit solves at
 * once, typing solves after a pause, a newer solve aborts the older one, and
 * the last good solution stays (greyed) while the next is pending or refused.
 *
 * Progress and cancel: every solve asks the server for progress events
 * (solve-stream.ts); once a solve has run PROGRESS_AFTER ms, `progress` holds
 * its phase and fraction for the bar (sn-progress.ts). `cancel()`, or any newer
 * solve, aborts the request: the closed connection stops the solve on the server
 * and frees its worker. A cancelled solve leaves the last results, out of date.
 */
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import { Task, TaskStatus } from '@lit/task';
import type { Solution } from '../../../shared-types/solution.js';
import type { ModelIssue } from '../../../shared-types/errors.js';
import { ApiError, isAbort } from '../api.js';
import { solveWithProgress, type SolveProgressEvent } from '../solve-stream.js';
import type { EditModel } from '../model-edits.js';
import type { ResultState } from '../sn-results.js';

/** One empty issue list, so that "no issues" stays the same object and nothing re-renders for it. */
const NO_ISSUES: readonly ModelIssue[] = Object.freeze([]);

/** ms after the last keystroke before a draft (typed, not yet committed) is solved. */
export const TYPING_DELAY = 300;
/** ms a solve runs before its progress bar shows. */
export const PROGRESS_AFTER = 500;

/** What the progress bar shows of a running solve. */
export interface SolveProgressView {
  /** The phase under way ('' until the server's first report). */
  readonly phase: string;
  /** Fraction of the whole solve done, 0 … 1 (the server's estimate). */
  readonly overall: number;
}

export class SolveController implements ReactiveController {
  /** The last solution the server gave (it may be for an earlier model: see `state`). */
  solution: Solution | null = null;
  /** Problems of the model last sent, with their pointers (400, 413, 422). */
  issues: readonly ModelIssue[] = NO_ISSUES;
  /** The API's message when the last solve was refused or failed. */
  message = '';
  /** performance.now() when the last solution arrived (for the browser tests' figure). */
  solvedAt = 0;

  private readonly host: ReactiveControllerHost;
  private readonly onAuth: (e: unknown) => boolean;
  private readonly task: Task<[EditModel, string | undefined], Solution>;
  /** The combination whose single state the solution holds at its top level (undefined: the first). */
  combination: string | undefined = undefined;
  private timer: ReturnType<typeof setTimeout> | undefined;
  private waiting = false; // a solve is scheduled but not started
  private refused = false; // the last error was the server refusing the model (not a fault)
  private cancelled = false; // the last solve was cancelled (Cancel, not a newer solve)
  /** The running solve's progress, once it has run PROGRESS_AFTER ms; null otherwise. */
  progress: SolveProgressView | null = null;
  private latest: SolveProgressView = { phase: '', overall: 0 };
  private progressTimer: ReturnType<typeof setTimeout> | undefined;

  /** `onAuth` gets a 401 and says whether it handled it (asked to sign in). */
  constructor(host: ReactiveControllerHost, onAuth: (e: unknown) => boolean) {
    this.host = host;
    this.onAuth = onAuth;
    host.addController(this);
    this.task = new Task<[EditModel, string | undefined], Solution>(host, {
      autoRun: false,
      task: ([model, combination], { signal }) => {
        this.startProgress(signal);
        return solveWithProgress(model, signal, combination, (p) => this.onProgress(p));
      },
      onComplete: (solution) => {
        this.stopProgress();
        this.solution = solution;
        this.issues = NO_ISSUES;
        this.message = '';
        this.solvedAt = performance.now();
      },
      onError: (e) => {
        this.stopProgress();
        this.failed(e);
      },
    });
  }

  hostDisconnected(): void {
    this.clear();
  }

  /** Where the results stand against the model on screen. */
  get state(): ResultState {
    if (this.waiting) return 'stale';
    if (this.cancelled) return this.solution ? 'stale' : 'none';
    switch (this.task.status) {
      case TaskStatus.PENDING:
        return 'solving';
      case TaskStatus.COMPLETE:
        return 'fresh';
      case TaskStatus.ERROR:
        return this.issues.length || this.refused ? 'invalid' : 'failed';
      default:
        return this.solution ? 'stale' : 'none';
    }
  }

  /** Solves `model` at once (a committed edit, a load) or after `delay` ms (typing). */
  solve(model: EditModel, delay = 0): void {
    clearTimeout(this.timer);
    this.task.abort();
    this.cancelled = false;
    if (delay <= 0) {
      this.waiting = false;
      void this.task.run([model, this.combination]);
      return;
    }
    this.waiting = true;
    this.host.requestUpdate();
    this.timer = setTimeout(() => {
      this.waiting = false;
      void this.task.run([model, this.combination]);
    }, delay);
  }

  /** Stops the running solve (the Cancel button): the server stops it too; the last results stay, out of date. */
  cancel(): void {
    if (this.task.status !== TaskStatus.PENDING) return;
    this.cancelled = true;
    this.task.abort();
    this.stopProgress();
  }

  /** Forgets the results (another document is about to load). */
  clear(): void {
    clearTimeout(this.timer);
    this.waiting = false;
    this.task.abort();
    this.stopProgress();
    this.solution = null;
    this.issues = NO_ISSUES;
    this.message = '';
  }

  /** A solve starts: its bar shows after PROGRESS_AFTER ms if it is still running. */
  private startProgress(signal: AbortSignal): void {
    this.stopProgress();
    this.latest = { phase: '', overall: 0 };
    this.progressTimer = setTimeout(() => {
      if (signal.aborted) return;
      this.progress = this.latest;
      this.host.requestUpdate();
    }, PROGRESS_AFTER);
  }

  private onProgress(p: SolveProgressEvent): void {
    this.latest = { phase: p.phase, overall: p.overall };
    if (this.progress === null) return;
    this.progress = this.latest;
    this.host.requestUpdate();
  }

  private stopProgress(): void {
    clearTimeout(this.progressTimer);
    this.progressTimer = undefined;
    if (this.progress === null) return;
    this.progress = null;
    this.host.requestUpdate();
  }

  private failed(e: unknown): void {
    if (isAbort(e)) return;
    if (this.onAuth(e)) return;
    if (e instanceof ApiError && (e.status === 400 || e.status === 422 || e.status === 413)) {
      this.refused = true;
      this.issues = e.issues.length ? e.issues : [{ code: e.code as ModelIssue['code'], pointer: '', message: e.message }];
    } else {
      this.refused = false;
      this.issues = NO_ISSUES;
    }
    this.message = e instanceof Error ? e.message : String(e);
  }
}
