/**
 * The live notice's channel: who listens to which model, and what was said.
 * `Broadcaster` is the whole interface the routes use (publish, subscribe), so a
 * database's notification channel can take the place of the in-memory one when
 * several server processes share a library. One is made per app by buildApp:
 * nothing here is module-level state.
 */
import type { ReviewEvent, RevisionEvent } from '../../shared-types/library.js';

/** One notice: its SSE event name and its data. */
export type Notice = { readonly event: 'revision'; readonly data: RevisionEvent } | { readonly event: 'review'; readonly data: ReviewEvent };

export type NoticeListener = (notice: Notice) => void;

export interface Broadcaster {
  /** Tells every listener of `modelId`; a listener that throws is dropped, the others are told. */
  publish(modelId: string, notice: Notice): void;
  /** Listens to `modelId` until the answered function is called. */
  subscribe(modelId: string, listener: NoticeListener): () => void;
  /** Listeners of `modelId` now (for tests and the log). */
  listeners(modelId: string): number;
}

/** Listeners in a Map of Sets, in this process only. */
export class MemoryBroadcaster implements Broadcaster {
  private readonly byModel = new Map<string, Set<NoticeListener>>();

  publish(modelId: string, notice: Notice): void {
    const set = this.byModel.get(modelId);
    if (!set) return;
    for (const listener of [...set]) {
      try {
        listener(notice);
      } catch {
        set.delete(listener);
      }
    }
    if (set.size === 0) this.byModel.delete(modelId);
  }

  subscribe(modelId: string, listener: NoticeListener): () => void {
    let set = this.byModel.get(modelId);
    if (!set) this.byModel.set(modelId, (set = new Set()));
    set.add(listener);
    return () => {
      const current = this.byModel.get(modelId);
      if (!current) return;
      current.delete(listener);
      if (current.size === 0) this.byModel.delete(modelId);
    };
  }

  listeners(modelId: string): number {
    return this.byModel.get(modelId)?.size ?? 0;
  }
}
