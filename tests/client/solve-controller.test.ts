/**
 * The solve controller (client/src/controllers/solve-controller.ts) without a
 * browser: a fake host and a fake fetch. A committed edit solves at once, typing
 * waits, a newer solve wins over an older one still in flight, and a refused
 * model keeps the last solution with the issues of the new one.
 */
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import type { Model } from '../../shared-types/model.js';
import { SolveController, TYPING_DELAY } from '../../client/src/controllers/solve-controller.js';

/** A host that only counts the updates it is asked for. */
class FakeHost implements ReactiveControllerHost {
  controllers: ReactiveController[] = [];
  updates = 0;
  addController(c: ReactiveController): void {
    this.controllers.push(c);
  }
  removeController(): void {}
  requestUpdate(): void {
    this.updates++;
  }
  get updateComplete(): Promise<boolean> {
    return Promise.resolve(true);
  }
}

/** A model whose name carries what the fake server should answer (invented, never solved for real). */
const model = (name: string): Model => ({ format: 'shaftnet/1', name, materials: [], sections: [], shafts: [] }) as unknown as Model;

/** Pending answers of the fake server, by model name. */
let answers: Map<string, { resolve: (r: Response) => void; signal: AbortSignal | undefined }>;

beforeEach(() => {
  answers = new Map();
  vi.stubGlobal('fetch', (_url: string, init: RequestInit) => {
    const name = (JSON.parse(String(init.body)) as { name: string }).name;
    return new Promise<Response>((resolve, reject) => {
      init.signal?.addEventListener('abort', () => reject(new DOMException('aborted', 'AbortError')));
      answers.set(name, { resolve, signal: init.signal ?? undefined });
    });
  });
});

afterEach(() => {
  vi.unstubAllGlobals();
  vi.useRealTimers();
});

const solution = (tag: string) => new Response(JSON.stringify({ format: 'shaftnet-solution/1', name: tag }), { status: 200 });
const refusal = () =>
  new Response(JSON.stringify({ error: { code: 'SN_NOT_POSITIVE', message: '/sections/0/d: must be positive', issues: [{ code: 'SN_NOT_POSITIVE', pointer: '/sections/0/d', message: 'must be positive' }] } }), { status: 400 });

/** Lets the controller's promises run. */
const settle = () => new Promise((r) => setTimeout(r, 0));

describe('the solve controller', () => {
  it('solves a committed edit at once and says so', async () => {
    const c = new SolveController(new FakeHost(), () => false);
    expect(c.state).toBe('none');
    c.solve(model('a'));
    expect(c.state).toBe('solving');
    await settle();
    answers.get('a')!.resolve(solution('a'));
    await settle();
    expect(c.state).toBe('fresh');
    expect(c.solution?.name).toBe('a');
  });

  it('waits after typing, and a commit in the pause solves at once', async () => {
    vi.useFakeTimers();
    const c = new SolveController(new FakeHost(), () => false);
    c.solve(model('typed'), TYPING_DELAY);
    expect(c.state).toBe('stale');
    await vi.advanceTimersByTimeAsync(TYPING_DELAY - 1);
    expect(answers.has('typed')).toBe(false);
    c.solve(model('committed'));
    await vi.advanceTimersByTimeAsync(TYPING_DELAY * 2);
    expect(answers.has('typed')).toBe(false); // the draft's timer was dropped
    expect(answers.has('committed')).toBe(true);
  });

  it('lets the newer solve win over one still in flight, aborting the older request', async () => {
    const c = new SolveController(new FakeHost(), () => false);
    c.solve(model('old'));
    await settle();
    c.solve(model('new'));
    await settle();
    expect(answers.get('old')!.signal?.aborted).toBe(true);
    answers.get('new')!.resolve(solution('new'));
    await settle();
    expect(c.state).toBe('fresh');
    expect(c.solution?.name).toBe('new');
  });

  it('keeps the last solution when a model is refused, with the issues by pointer', async () => {
    const c = new SolveController(new FakeHost(), () => false);
    c.solve(model('good'));
    await settle();
    answers.get('good')!.resolve(solution('good'));
    await settle();
    c.solve(model('bad'));
    await settle();
    answers.get('bad')!.resolve(refusal());
    await settle();
    expect(c.state).toBe('invalid');
    expect(c.solution?.name).toBe('good');
    expect(c.issues.map((i) => i.pointer)).toEqual(['/sections/0/d']);
    // Fixed again: fresh, and the issues are gone.
    c.solve(model('good again'));
    await settle();
    answers.get('good again')!.resolve(solution('good again'));
    await settle();
    expect(c.state).toBe('fresh');
    expect(c.issues).toEqual([]);
  });

  it('hands a 401 to the sign-in', async () => {
    const seen: unknown[] = [];
    const c = new SolveController(new FakeHost(), (e) => (seen.push(e), true));
    c.solve(model('locked'));
    await settle();
    answers.get('locked')!.resolve(new Response(JSON.stringify({ error: { code: 'SN_UNAUTHORISED', message: 'token', issues: [] } }), { status: 401 }));
    await settle();
    expect(seen).toHaveLength(1);
    expect((seen[0] as { status: number }).status).toBe(401);
  });
});
