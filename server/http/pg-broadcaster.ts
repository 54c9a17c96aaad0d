/**
 * The live notice between server instances that share a PostgreSQL library:
 * the Broadcaster interface (broadcaster.ts) on the database's own notification
 * channel (LISTEN/NOTIFY).
 *
 * - publish: tells this process's listeners at once (as the in-memory channel
 *   does, so one instance behaves as before even while the database is away), and
 *   sends the notice to the channel with pg_notify, tagged with this instance's
 *   random id; the payload is the model id and the notice's JSON, kept under
 *   PostgreSQL's 8000-byte limit (a long review note is shortened, marked "…").
 * - One dedicated connection LISTENs; every notice from another instance is
 *   handed to this process's listeners of its model. When that connection is
 *   lost it is opened again (after 1 s, then up to every 10 s) and LISTENs again;
 *   notices sent while it was away are not replayed (a client that reconnects
 *   reads the model anew).
 * Made per server by main.ts: nothing here is module-level state.
 */
import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { MemoryBroadcaster, type Broadcaster, type Notice, type NoticeListener } from './broadcaster.js';

/** The channel's name. */
export const NOTICE_CHANNEL = 'shaftnet_notices';
/** PostgreSQL refuses a payload of 8000 bytes or more. */
const PAYLOAD_LIMIT = 7900;
const RECONNECT_FIRST_MS = 1_000;
const RECONNECT_MAX_MS = 10_000;

interface Wire {
  /** The sending instance. */
  readonly o: string;
  /** The model id. */
  readonly m: string;
  /** The notice. */
  readonly n: Notice;
}

/** The payload of a notice, under the limit: a review note too long for it is shortened. */
export function noticePayload(origin: string, modelId: string, notice: Notice): string {
  let text = JSON.stringify({ o: origin, m: modelId, n: notice } satisfies Wire);
  if (Buffer.byteLength(text, 'utf8') < PAYLOAD_LIMIT) return text;
  if (notice.event === 'review' && typeof notice.data.note === 'string') {
    let note = notice.data.note;
    while (Buffer.byteLength(text, 'utf8') >= PAYLOAD_LIMIT && note.length > 0) {
      note = note.slice(0, Math.floor(note.length * 0.8)).replace(/[\uD800-\uDBFF]$/, ''); // never half a character
      text = JSON.stringify({ o: origin, m: modelId, n: { event: 'review', data: { ...notice.data, note: note + '…' } } } satisfies Wire);
    }
    if (Buffer.byteLength(text, 'utf8') < PAYLOAD_LIMIT) return text;
  }
  throw new Error(`a live notice of model ${modelId} does not fit in ${PAYLOAD_LIMIT} bytes`);
}

export class PgBroadcaster implements Broadcaster {
  private readonly local = new MemoryBroadcaster();
  private readonly origin = randomBytes(9).toString('base64url');
  private readonly pool: pg.Pool;
  private client: pg.Client | undefined;
  private closed = false;
  private retryMs = RECONNECT_FIRST_MS;
  private timer: NodeJS.Timeout | undefined;
  /** Times the LISTEN connection was (re)opened: 1 after start (for tests and the log). */
  connections = 0;

  private constructor(
    private readonly connectionString: string,
    private readonly log: (message: string) => void,
  ) {
    this.pool = new pg.Pool({ connectionString, max: 2, connectionTimeoutMillis: 5_000, application_name: 'shaftnet-notify' });
    this.pool.on('error', () => undefined); // an idle connection dropped: the next notify opens another
  }

  /** Connects and LISTENs; rejects when the database cannot be reached now. */
  static async start(connectionString: string, log: (message: string) => void = () => undefined): Promise<PgBroadcaster> {
    const b = new PgBroadcaster(connectionString, log);
    try {
      await b.listen();
    } catch (err) {
      await b.pool.end().catch(() => undefined);
      throw err;
    }
    return b;
  }

  private async listen(): Promise<void> {
    const client = new pg.Client({ connectionString: this.connectionString, application_name: 'shaftnet-listen', keepAlive: true, connectionTimeoutMillis: 5_000 });
    const lost = () => {
      if (this.client !== client) return;
      this.client = undefined;
      client.end().catch(() => undefined);
      this.reconnectLater();
    };
    client.on('error', lost);
    client.on('end', lost);
    client.on('notification', (msg) => this.received(msg.payload));
    try {
      await client.connect();
      await client.query(`LISTEN ${NOTICE_CHANNEL}`);
    } catch (err) {
      client.removeAllListeners('end');
      client.end().catch(() => undefined);
      throw err;
    }
    if (this.closed) {
      await client.end().catch(() => undefined);
      return;
    }
    this.client = client;
    this.connections++;
    this.retryMs = RECONNECT_FIRST_MS;
  }

  private reconnectLater(): void {
    if (this.closed || this.timer !== undefined) return;
    this.log(`live notices: the LISTEN connection was lost; reconnecting in ${this.retryMs} ms`);
    this.timer = setTimeout(() => {
      this.timer = undefined;
      this.listen().then(
        () => this.log('live notices: listening again'),
        () => {
          this.retryMs = Math.min(RECONNECT_MAX_MS, this.retryMs * 2);
          this.reconnectLater();
        },
      );
    }, this.retryMs);
    this.timer.unref();
  }

  private received(payload: string | undefined): void {
    if (payload === undefined) return;
    let wire: Wire;
    try {
      wire = JSON.parse(payload) as Wire;
    } catch {
      return; // not ours
    }
    if (wire.o === this.origin || typeof wire.m !== 'string' || wire.n === undefined) return; // our own was delivered at once
    this.local.publish(wire.m, wire.n);
  }

  publish(modelId: string, notice: Notice): void {
    this.local.publish(modelId, notice);
    if (this.closed) return;
    let payload: string;
    try {
      payload = noticePayload(this.origin, modelId, notice);
    } catch (err) {
      this.log((err as Error).message);
      return;
    }
    this.pool.query('SELECT pg_notify($1, $2)', [NOTICE_CHANNEL, payload]).catch((err: Error) => this.log(`live notices: not sent to other instances: ${err.message}`));
  }

  subscribe(modelId: string, listener: NoticeListener): () => void {
    return this.local.subscribe(modelId, listener);
  }

  listeners(modelId: string): number {
    return this.local.listeners(modelId);
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    clearTimeout(this.timer);
    const client = this.client;
    this.client = undefined;
    await client?.end().catch(() => undefined);
    await this.pool.end().catch(() => undefined);
  }
}
