/**
 * Sign-in sessions in the PostgreSQL library, so that a session made on one
 * server instance is accepted by every other one on the same database, and a
 * sign-out (or a revoked key, which auth.ts checks at every request) ends it on
 * all of them at once. The SessionStore interface and its rules are
 * server/http/sessions.ts's: only the sha-256 digest of a session id is kept
 * (the table holds no usable cookie), a session ends after `idleMs` unused or
 * `absoluteMs` after its sign-in, and beyond `maxSessions` the oldest go.
 * SQLite servers keep their sessions in memory (one process serves that library).
 */
import { createHash, randomBytes } from 'node:crypto';
import type { SessionEntry, SessionLimits, SessionStore } from '../http/sessions.js';
import type { PgStore } from './pg-store.js';

function digest(id: string): string {
  return createHash('sha256').update(id, 'utf8').digest('base64url');
}

/** Ids longer than this are no session of ours (as in the in-memory store). */
const MAX_ID = 100;

export class PgSessionStore implements SessionStore {
  constructor(
    private readonly store: Pick<PgStore, 'query'>,
    private readonly limits: SessionLimits,
  ) {}

  /** Ends the sessions no longer live at `now`. */
  private async sweep(now: number): Promise<void> {
    await this.store.query('session_sweep', 'DELETE FROM sessions WHERE last_used <= $1 OR created <= $2', [now - this.limits.idleMs, now - this.limits.absoluteMs]);
  }

  async create(now: number, keyId: string | null = null): Promise<string> {
    await this.sweep(now);
    const id = randomBytes(32).toString('base64url');
    await this.store.query('session_insert', 'INSERT INTO sessions (digest, key_id, created, last_used) VALUES ($1, $2, $3, $3)', [digest(id), keyId, now]);
    // Beyond the most kept: the oldest sign-ins go.
    await this.store.query(
      'session_trim',
      'DELETE FROM sessions WHERE digest IN (SELECT digest FROM sessions ORDER BY created DESC, digest OFFSET $1)',
      [this.limits.maxSessions],
    );
    return id;
  }

  async check(id: string, now: number): Promise<boolean> {
    return (await this.lookup(id, now)) !== undefined;
  }

  async lookup(id: string, now: number, touch = true): Promise<SessionEntry | undefined> {
    if (id.length === 0 || id.length > MAX_ID) return undefined;
    const live = [digest(id), now - this.limits.idleMs, now - this.limits.absoluteMs];
    const res = touch
      ? await this.store.query<{ key_id: string | null }>(
          'session_touch',
          'UPDATE sessions SET last_used = GREATEST(last_used, $4) WHERE digest = $1 AND last_used > $2 AND created > $3 RETURNING key_id',
          [...live, now],
        )
      : await this.store.query<{ key_id: string | null }>('session_look', 'SELECT key_id FROM sessions WHERE digest = $1 AND last_used > $2 AND created > $3', live);
    const row = res.rows[0];
    return row === undefined ? undefined : { keyId: row.key_id };
  }

  async revoke(id: string): Promise<void> {
    if (id.length > 0 && id.length <= MAX_ID) await this.store.query('session_revoke', 'DELETE FROM sessions WHERE digest = $1', [digest(id)]);
  }

  async size(now: number): Promise<number> {
    await this.sweep(now);
    return (await this.store.query<{ n: number }>('session_count', 'SELECT count(*)::integer AS n FROM sessions', [])).rows[0].n;
  }
}
