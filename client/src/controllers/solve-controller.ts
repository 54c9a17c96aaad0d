/**
 * The solve of the model on screen, as a Lit task: a committed edit solves at
 * once, typing solves after a pause, a newer solve aborts the older one, and
 * the last good solution stays (greyed) while the next is pending or refused.
 */
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import { Task, TaskStatus } from '@lit/task';
import type { Solution } from '../../../shared-types/solution.js';
import type { ModelIssue } from '../../../shared-types/errors.js';
import { ApiError, api, isAbort } from '../api.js';
import type { EditModel } from '../model-edits.js';
import type { ResultState } from '../sn-results.js';

/** One empty issue list, so that "no issues" stays the same object and nothing re-renders for it. */
const NO_ISSUES: readonly ModelIssue[] = Object.freeze([]);

/** ms after the last keystroke before a draft (typed, not yet committed) is solved. */
export const TYPING_DELAY = 300;

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

  /** `onAuth` gets a 401 and says whether it handled it (asked to sign in). */
  constructor(host: ReactiveControllerHost, onAuth: (e: unknown) => boolean) {
    this.host = host;
    this.onAuth = onAuth;
    host.addController(this);
    this.task = new Task<[EditModel, string | undefined], Solution>(host, {
      autoRun: false,
      task: ([model, combination], { signal }) => api.solve(model, signal, combination),
      onComplete: (solution) => {
        this.solution = solution;
        this.issues = NO_ISSUES;
        this.message = '';
        this.solvedAt = performance.now();
      },
      onError: (e) => this.failed(e),
    });
  }

  hostDisconnected(): void {
    this.clear();
  }

  /** Where the results stand against the model on screen. */
  get state(): ResultState {
    if (this.waiting) return 'stale';
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

  /** Forgets the results (another document is about to load). */
  clear(): void {
    clearTimeout(this.timer);
    this.waiting = false;
    this.task.abort();
    this.solution = null;
    this.issues = NO_ISSUES;
    this.message = '';
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
