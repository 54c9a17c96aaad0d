/**
 * Progress and cancel of a solve over HTTP (Accept: text/event-stream) and in
 * the worker pool: events in order, then the same bytes as without progress;
 * errors before the stream as ordinary answers, after it as an `error` event;
 * a closed connection or an aborted job frees its worker, which takes the next
 * job at once (the pool's events and state say so, not a clock).
 * No physical number is asserted here: answers are compared with the same
 * solve without progress (the engine's own output, checked elsewhere).
 */
import { once } from 'node:events';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { solveModelJson, PROGRESS_PHASES, type ProgressPhase } from '../../server/engine/index.js';
import { SolverPool, type PoolEvents } from '../../server/http/solver-pool.js';
import { HttpError } from '../../server/http/errors.js';
import { cantilever, freeShaft, makeApp, type TestApp } from './helpers.js';
import { longChain } from '../helpers/long-chain.js';

interface SseEvent {
  event: string;
  data: string;
}

/** Splits an event-stream body into its events (every data field is one line). */
function parseEvents(body: string): SseEvent[] {
  return body
    .split('\n\n')
    .filter((b) => b.length > 0)
    .map((block) => {
      const lines = block.split('\n');
      expect(lines).toHaveLength(2);
      expect(lines[0].startsWith('event: ')).toBe(true);
      expect(lines[1].startsWith('data: ')).toBe(true);
      return { event: lines[0].slice(7), data: lines[1].slice(6) };
    });
}

function inProcess(model: unknown): string {
  let text = '';
  solveModelJson(model, (t) => (text += t));
  return text;
}

describe('solve with progress over HTTP', () => {
  let w: TestApp;
  let base: string;
  beforeAll(async () => {
    w = await makeApp({ workerThreshold: 20_000, workers: 1, queueLimit: 0 });
    await w.app.listen({ port: 0, host: '127.0.0.1' });
    const addr = w.app.server.address();
    if (addr === null || typeof addr === 'string') throw new Error('no port');
    base = `http://127.0.0.1:${addr.port}`;
  });
  afterAll(async () => w.close());

  const post = (model: unknown, events: boolean, signal?: AbortSignal) =>
    fetch(`${base}/api/solve`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', ...(events ? { accept: 'text/event-stream' } : {}) },
      body: JSON.stringify(model),
      signal,
    });
  const busy = async () => ((await (await fetch(`${base}/api/health`)).json()) as { workers: { busy: number } }).workers.busy;

  it('a large solve streams progress in phase order, then the same bytes as without progress', async () => {
    const model = longChain(100_001); // in the worker (over the threshold), about 1 s of work
    const plain = Buffer.from(await (await post(model, false)).arrayBuffer());
    const res = await post(model, true);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^text\/event-stream/);
    const body = Buffer.from(await res.arrayBuffer());
    const at = body.indexOf('event: result\ndata: ');
    expect(at).toBeGreaterThan(0);
    const result = body.subarray(at + 'event: result\ndata: '.length, body.length - 2);
    expect(result.equals(plain)).toBe(true); // byte-equal
    expect(body.subarray(body.length - 2).toString()).toBe('\n\n');
    const events = parseEvents(body.subarray(0, at).toString('utf8'));
    expect(events.length).toBeGreaterThanOrEqual(2);
    let lastOverall = 0;
    let lastPhase = 0;
    for (const e of events) {
      expect(e.event).toBe('progress');
      const p = JSON.parse(e.data) as { phase: ProgressPhase; fraction: number; overall: number };
      const k = PROGRESS_PHASES.indexOf(p.phase);
      expect(k).toBeGreaterThanOrEqual(lastPhase);
      expect(p.fraction).toBeGreaterThanOrEqual(0);
      expect(p.fraction).toBeLessThanOrEqual(1);
      expect(p.overall).toBeGreaterThanOrEqual(lastOverall);
      lastPhase = k;
      lastOverall = p.overall;
    }
  });

  it('a small solve asked for events answers only the result event, with the same JSON; unasked, exactly as before', async () => {
    const model = cantilever(3);
    const plain = await post(model, false);
    expect(plain.headers.get('content-type')).toMatch(/^application\/json/);
    const plainText = await plain.text();
    expect(plainText).toBe(inProcess(model));
    const res = await post(model, true);
    expect(res.headers.get('content-type')).toMatch(/^text\/event-stream/);
    expect(parseEvents(await res.text())).toEqual([{ event: 'result', data: plainText }]);
  });

  it('an error before the stream starts is an ordinary error answer; one after it is an error event with the same body', async () => {
    const small = await post(freeShaft(), true);
    expect(small.status).toBe(422);
    expect(small.headers.get('content-type')).toMatch(/^application\/json/);
    // A large free chain: the mechanism is found in the assembly, after the first progress event.
    const free = longChain(60_001);
    free.supports = [];
    const plain = await post(free, false);
    expect(plain.status).toBe(422);
    const plainBody = await plain.text();
    const res = await post(free, true);
    expect(res.status).toBe(200);
    const events = parseEvents(await res.text());
    expect(events.at(0)?.event).toBe('progress');
    expect(events.at(-1)).toEqual({ event: 'error', data: plainBody });
    expect(JSON.parse(plainBody).error.code).toBe('SN_MECHANISM');
  });

  it('closing the connection cancels the solve and frees the only worker for the next large solve', async () => {
    const ac = new AbortController();
    const res = await post(longChain(400_001), true, ac.signal);
    expect(res.status).toBe(200);
    const reader = res.body!.getReader();
    const first = await reader.read(); // the first progress event: the worker is solving
    expect(new TextDecoder().decode(first.value)).toMatch(/^event: progress\n/);
    expect(await busy()).toBe(1);
    ac.abort();
    await expect.poll(busy, { timeout: 10_000, interval: 20 }).toBe(0);
    // One worker, no queue: a busy worker would answer 503 SN_BUSY.
    const next = await post(longChain(30_001), false);
    expect(next.status).toBe(200);
    expect(await next.text()).toBe(inProcess(longChain(30_001)));
  });
});

describe('the pool cancels a job', () => {
  it('an aborted job frees its worker by the abort flag: the same thread takes the next job at once', async () => {
    const pool = new SolverPool({ size: 1, queueLimit: 1, timeoutMs: 60_000 });
    const started: Array<PoolEvents['started'][0]> = [];
    const freed: Array<PoolEvents['freed'][0]> = [];
    pool.events.on('started', (e) => started.push(e));
    pool.events.on('freed', (e) => freed.push(e));
    try {
      const ac = new AbortController();
      let sawProgress!: () => void;
      const progressed = new Promise<void>((r) => (sawProgress = r));
      const a = pool.run({ kind: 'model', model: longChain(300_001) }, { signal: ac.signal, onProgress: () => sawProgress() });
      // A second job waits in the queue; cancelled there, it never starts.
      const acQueued = new AbortController();
      const queued = pool.run({ kind: 'model', model: cantilever(2) }, { signal: acQueued.signal });
      expect(pool.queued).toBe(1);
      acQueued.abort();
      expect(pool.queued).toBe(0);
      await expect(queued).rejects.toMatchObject({ code: 'SN_CANCELLED' });

      await progressed;
      const freedNow = once(pool.events, 'freed');
      ac.abort();
      await expect(a).rejects.toBeInstanceOf(HttpError);
      await expect(a).rejects.toMatchObject({ code: 'SN_CANCELLED' });
      const [f] = (await freedNow) as PoolEvents['freed'];
      // 'aborted': the worker's engine stopped at its flag and answered; it was not terminated.
      expect(f).toEqual({ id: started[0].id, threadId: started[0].threadId, how: 'aborted' });
      expect(pool.stats().busy).toBe(0);

      // The next job is posted to the same worker thread within run(): it starts at once.
      const model = cantilever(4);
      const b = pool.run({ kind: 'model', model });
      expect(started).toHaveLength(2);
      expect(started[1].threadId).toBe(started[0].threadId);
      expect(pool.stats().busy).toBe(1);
      expect(pool.queued).toBe(0);
      const chunks = (await b) ?? [];
      expect(Buffer.concat(chunks).toString('utf8')).toBe(inProcess(model));
      expect(freed.map((e) => e.how)).toEqual(['aborted', 'done']);
    } finally {
      await pool.close();
    }
  });
});
