/**
 * The client's side of progress and cancel without a browser: the event-stream
 * reader (client/src/solve-stream.ts) over a fake fetch whose answer arrives in
 * awkward pieces, and the solve controller's bar timing and Cancel.
 * The answers are invented placeholders, never solved.
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import type { Model } from '../../shared-types/model.js';
import { solveWithProgress, type SolveProgressEvent } from '../../client/src/solve-stream.js';
import { ApiError } from '../../client/src/api.js';
import { PROGRESS_AFTER, SolveController } from '../../client/src/controllers/solve-controller.js';

class FakeHost implements ReactiveControllerHost {
  updates = 0;
  addController(_c: ReactiveController): void {}
  removeController(): void {}
  requestUpdate(): void {
    this.updates++;
  }
  get updateComplete(): Promise<boolean> {
    return Promise.resolve(true);
  }
}

const model = { format: 'shaftnet/1', name: 'm', materials: [], sections: [], shafts: [] } as unknown as Model;

/** An event-stream answer cut into pieces of `size` characters. */
function sse(text: string, size: number): Response {
  const bytes = new TextEncoder().encode(text);
  const body = new ReadableStream<Uint8Array>({
    start(c) {
      for (let k = 0; k < bytes.length; k += size) c.enqueue(bytes.subarray(k, k + size));
      c.close();
    },
  });
  return new Response(body, { status: 200, headers: { 'content-type': 'text/event-stream; charset=utf-8' } });
}

afterEach(() => {
  vi.unstubAllGlobals();
  vi.useRealTimers();
});

describe('the event-stream reader', () => {
  const solution = { format: 'shaftnet-solution/1', name: 'a "quoted"\nname ünïcode' };
  const text =
    'event: progress\ndata: {"phase":"stations","fraction":0,"overall":0}\n\n' +
    'event: progress\ndata: {"phase":"writing","fraction":0.5,"overall":0.65}\n\n' +
    `event: result\ndata: ${JSON.stringify(solution)}\n\n`;

  for (const size of [1, 3, 7, 64, 10_000]) {
    it(`reads progress in order and the solution, in pieces of ${size} bytes`, async () => {
      let init: RequestInit | undefined;
      vi.stubGlobal('fetch', (_u: string, i: RequestInit) => ((init = i), Promise.resolve(sse(text, size))));
      const seen: SolveProgressEvent[] = [];
      const answer = await solveWithProgress(model, undefined, undefined, (p) => seen.push(p));
      expect(answer).toEqual(solution);
      expect(seen).toEqual([
        { phase: 'stations', fraction: 0, overall: 0 },
        { phase: 'writing', fraction: 0.5, overall: 0.65 },
      ]);
      expect((init?.headers as Record<string, string>).accept).toMatch(/^text\/event-stream/);
    });
  }

  it('an error event becomes the ApiError of its code, with its issues', async () => {
    const body = { error: { code: 'SN_MECHANISM', message: 'free', issues: [{ code: 'SN_MECHANISM', pointer: '/shafts/0', message: 'free', shafts: ['s'] }] } };
    vi.stubGlobal('fetch', () => Promise.resolve(sse(`event: progress\ndata: {"phase":"assembly","fraction":0,"overall":0.08}\n\nevent: error\ndata: ${JSON.stringify(body)}\n\n`, 5)));
    const e = await solveWithProgress(model, undefined, undefined, () => {}).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(ApiError);
    expect(e).toMatchObject({ status: 422, code: 'SN_MECHANISM', issues: body.error.issues });
  });

  it('an ordinary error answer (before the stream) is read as before', async () => {
    const body = { error: { code: 'SN_SCHEMA', message: '/name: is required', issues: [{ code: 'SN_SCHEMA', pointer: '/name', message: 'is required' }] } };
    vi.stubGlobal('fetch', () => Promise.resolve(new Response(JSON.stringify(body), { status: 400, headers: { 'content-type': 'application/json' } })));
    await expect(solveWithProgress(model, undefined, undefined, () => {})).rejects.toMatchObject({ status: 400, code: 'SN_SCHEMA' });
  });
});

describe('the solve controller shows progress and cancels', () => {
  it('no bar before half a second; then the bar with the latest phase; Cancel aborts the request and leaves the state out of date', async () => {
    vi.useFakeTimers();
    let signal: AbortSignal | undefined;
    let push!: (s: string) => void;
    vi.stubGlobal('fetch', (_u: string, init: RequestInit) => {
      signal = init.signal ?? undefined;
      const body = new ReadableStream<Uint8Array>({
        start(c) {
          push = (s) => c.enqueue(new TextEncoder().encode(s));
          signal?.addEventListener('abort', () => c.error(new DOMException('aborted', 'AbortError')));
        },
      });
      return Promise.resolve(new Response(body, { headers: { 'content-type': 'text/event-stream' } }));
    });
    const c = new SolveController(new FakeHost(), () => false);
    c.solve(model as never);
    await vi.advanceTimersByTimeAsync(10);
    push('event: progress\ndata: {"phase":"assembly","fraction":0.4,"overall":0.1}\n\n');
    await vi.advanceTimersByTimeAsync(PROGRESS_AFTER - 20);
    expect(c.state).toBe('solving');
    expect(c.progress).toBeNull();
    await vi.advanceTimersByTimeAsync(20);
    expect(c.progress).toEqual({ phase: 'assembly', overall: 0.1 });
    push('event: progress\ndata: {"phase":"recovery","fraction":0.5,"overall":0.25}\n\n');
    await vi.advanceTimersByTimeAsync(1);
    expect(c.progress).toEqual({ phase: 'recovery', overall: 0.25 });
    c.cancel();
    await vi.advanceTimersByTimeAsync(1);
    expect(signal?.aborted).toBe(true);
    expect(c.progress).toBeNull();
    expect(c.state).toBe('none'); // no earlier results: none; with some, 'stale'
    expect(c.message).toBe('');
  });
});
