/**
 * Sign-in sessions of token mode, and the per-address limit on sign-in attempts.
 *
 * A session is a random id (256 bits) made at each sign-in and sent to the
 * browser in the cookie; the server keeps it, with when it was made and last
 * used, behind the `SessionStore` interface (in memory here, so a restart signs
 * everyone out; with PostgreSQL in the database, server/store/pg-sessions.ts, whose
 * methods answer Promises: callers await every call). A session ends when it has not
 * been used for `idleMs`, when `absoluteMs` have passed since the sign-in, or
 * when it is signed out: a copied cookie then stops working.
 *
 * Nothing here is module-level state: each app makes its own store and limiter.
 */
import { createHash, randomBytes } from 'node:crypto';

/** What a live session carries: the personal key it was made with (null: the team token). */
export interface SessionEntry {
  readonly keyId: string | null;
}

/** Where sessions live. Times are milliseconds since the epoch, passed in (testable, no hidden clock). */
export interface SessionStore {
  /** Makes a new session (made with the personal key `keyId`, or the team token) and answers its id (the cookie value). */
  create(now: number, keyId?: string | null): string | Promise<string>;
  /** True when the id is a live session; a use refreshes its idle timer. */
  check(id: string, now: number): boolean | Promise<boolean>;
  /** The live session of this id, or undefined; a use (`touch`, default true) refreshes its idle timer. */
  lookup(id: string, now: number, touch?: boolean): SessionEntry | undefined | Promise<SessionEntry | undefined>;
  /** Ends the session (sign-out). Unknown ids are ignored. */
  revoke(id: string): void | Promise<void>;
  /** Live sessions (for tests and the log). */
  size(now: number): number | Promise<number>;
}

export interface SessionLimits {
  /** A session unused this long ends, ms (default 12 h). */
  readonly idleMs: number;
  /** A session ends this long after its sign-in whatever its use, ms (default 7 days). */
  readonly absoluteMs: number;
  /** Most sessions kept; beyond it the oldest is dropped (default 10,000). */
  readonly maxSessions: number;
}

export const SESSION_DEFAULTS: SessionLimits = {
  idleMs: 12 * 3600_000, // 12 h
  absoluteMs: 7 * 24 * 3600_000, // 7 days
  maxSessions: 10_000,
};

interface Entry {
  readonly created: number;
  lastUsed: number;
  readonly keyId: string | null;
}

/** The server keeps only a digest of each id: a dump of its memory holds no usable cookie. */
function digest(id: string): string {
  return createHash('sha256').update(id, 'utf8').digest('base64url');
}

/** Sessions in a Map (insertion order = sign-in order, which makes "drop the oldest" cheap). */
export class MemorySessionStore implements SessionStore {
  private readonly entries = new Map<string, Entry>();

  constructor(private readonly limits: SessionLimits = SESSION_DEFAULTS) {}

  private live(e: Entry, now: number): boolean {
    return now - e.lastUsed < this.limits.idleMs && now - e.created < this.limits.absoluteMs;
  }

  private sweep(now: number): void {
    for (const [k, e] of this.entries) if (!this.live(e, now)) this.entries.delete(k);
  }

  create(now: number, keyId: string | null = null): string {
    if (this.entries.size >= this.limits.maxSessions) {
      this.sweep(now);
      while (this.entries.size >= this.limits.maxSessions) {
        const oldest = this.entries.keys().next().value as string;
        this.entries.delete(oldest);
      }
    }
    const id = randomBytes(32).toString('base64url');
    this.entries.set(digest(id), { created: now, lastUsed: now, keyId });
    return id;
  }

  check(id: string, now: number): boolean {
    return this.lookup(id, now) !== undefined;
  }

  lookup(id: string, now: number, touch = true): SessionEntry | undefined {
    if (id.length === 0 || id.length > 100) return undefined;
    const key = digest(id);
    const e = this.entries.get(key);
    if (!e) return undefined;
    if (!this.live(e, now)) {
      this.entries.delete(key);
      return undefined;
    }
    if (touch) e.lastUsed = now;
    return { keyId: e.keyId };
  }

  revoke(id: string): void {
    if (id.length > 0 && id.length <= 100) this.entries.delete(digest(id));
  }

  size(now: number): number {
    this.sweep(now);
    return this.entries.size;
  }
}

/**
 * At most `max` attempts per address in a fixed window of `windowMs`. Used for
 * sign-in: every `POST /api/session` and every wrong bearer token counts.
 */
export class AttemptLimiter {
  private readonly windows = new Map<string, { start: number; count: number }>();

  constructor(
    readonly max: number,
    readonly windowMs: number = 60_000,
    /** Addresses tracked at most; expired windows are swept beyond it. */
    private readonly maxAddresses: number = 100_000,
  ) {}

  /** Seconds to wait when the address is over the limit now, else 0. */
  blockedFor(address: string, now: number): number {
    const w = this.windows.get(address);
    if (!w || now - w.start >= this.windowMs || w.count < this.max) return 0;
    return Math.max(1, Math.ceil((w.start + this.windowMs - now) / 1000));
  }

  /** Counts one attempt. */
  count(address: string, now: number): void {
    const w = this.windows.get(address);
    if (w && now - w.start < this.windowMs) {
      w.count++;
      return;
    }
    if (this.windows.size >= this.maxAddresses) {
      for (const [k, v] of this.windows) if (now - v.start >= this.windowMs) this.windows.delete(k);
      if (this.windows.size >= this.maxAddresses) this.windows.delete(this.windows.keys().next().value as string);
    }
    this.windows.delete(address);
    this.windows.set(address, { start: now, count: 1 });
  }
}
