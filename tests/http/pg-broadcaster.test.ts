/**
 * The payload of a live notice between instances (server/http/pg-broadcaster.ts):
 * it stays under PostgreSQL's 8000-byte NOTIFY limit (the limit is PostgreSQL's
 * documented one), shortening only a review note that would not fit.
 */
import { describe, expect, it } from 'vitest';
import { noticePayload } from '../../server/http/pg-broadcaster.js';

describe('live notice payload', () => {
  it('carries the origin, the model id and the notice as JSON', () => {
    const notice = { event: 'revision', data: { id: 'm1', revision: 3, author: 'Ann', at: '2026-12-02T08:00:00.000Z' } } as const;
    expect(JSON.parse(noticePayload('me', 'm1', notice))).toEqual({ o: 'me', m: 'm1', n: notice });
  });

  it('shortens a review note of 2000 four-byte characters to fit under 8000 bytes, marked with …', () => {
    const note = '😀'.repeat(2000); // 8000 bytes of UTF-8 alone
    const notice = { event: 'review', data: { id: 'm1', revision: 1, state: 'returned', by: 'Bob', at: '2026-12-02T08:00:00.000Z', note } } as const;
    const text = noticePayload('me', 'm1', notice);
    expect(Buffer.byteLength(text, 'utf8')).toBeLessThan(8000);
    const sent = JSON.parse(text).n.data.note as string;
    expect(sent.endsWith('…')).toBe(true);
    expect(note.startsWith(sent.slice(0, -1))).toBe(true);
    expect(sent.length).toBeGreaterThan(1000);
  });
});
