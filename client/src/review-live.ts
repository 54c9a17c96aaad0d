/**
 * The live stream of the open saved model (`GET /api/models/{id}/events`): one
 * EventSource while a saved model is open, closed when it closes or another
 * opens. Keeps the latest `revision` and `review` events for the live notice,
 * and counts the review events (and reconnections, which may have missed some)
 * so that the review panel loads the review again. A failed or refused stream
 * is reconnected after a wait that doubles per failure (review-rules.ts).
 */
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import { eventsUrl } from './review-api.js';
import { type ReviewEvent, type RevisionEvent, readReviewEvent, readRevisionEvent } from './review-types.js';
import { reconnectDelay } from './review-rules.js';

export class ReviewLiveController implements ReactiveController {
  /** The latest `revision` event of the open model, or null. */
  revisionEvent: RevisionEvent | null = null;
  /** The latest `review` event of the open model, or null. */
  reviewEvent: ReviewEvent | null = null;
  /** Changes on every review event and reconnection: the review shown is loaded again. */
  tick = 0;

  private readonly host: ReactiveControllerHost;
  private readonly modelId: () => string | null;
  private id: string | null = null;
  private source: EventSource | null = null;
  private attempt = 0;
  private timer: ReturnType<typeof setTimeout> | undefined;

  /** `modelId` names the saved model open on the host (null for none); read after each update. */
  constructor(host: ReactiveControllerHost, modelId: () => string | null) {
    this.host = host;
    this.modelId = modelId;
    host.addController(this);
  }

  hostUpdated(): void {
    const id = this.modelId();
    if (id !== this.id) this.follow(id);
  }

  hostDisconnected(): void {
    this.follow(null);
  }

  /** Follows model `id` (null: none): the old stream closes, the events are forgotten. */
  private follow(id: string | null): void {
    this.close();
    this.id = id;
    this.attempt = 0;
    const had = this.revisionEvent !== null || this.reviewEvent !== null;
    this.revisionEvent = null;
    this.reviewEvent = null;
    if (id) this.connect(id);
    if (had) this.host.requestUpdate();
  }

  private connect(id: string): void {
    if (typeof EventSource === 'undefined') return;
    const es = new EventSource(eventsUrl(id));
    this.source = es;
    const reconnected = this.attempt > 0;
    es.addEventListener('open', () => {
      this.attempt = 0;
      if (reconnected) this.bump();
    });
    es.addEventListener('revision', (e) => {
      const ev = readRevisionEvent(String((e as MessageEvent).data));
      if (!ev || ev.id !== id || this.source !== es) return;
      this.revisionEvent = ev;
      this.host.requestUpdate();
    });
    es.addEventListener('review', (e) => {
      const ev = readReviewEvent(String((e as MessageEvent).data));
      if (!ev || ev.id !== id || this.source !== es) return;
      this.reviewEvent = ev;
      this.bump();
    });
    es.addEventListener('error', () => {
      // Closed here and opened again by us, so that a refused stream (401, an older server's 404) waits longer each time.
      if (this.source !== es) return;
      es.close();
      this.source = null;
      const wait = reconnectDelay(this.attempt++);
      this.timer = setTimeout(() => {
        this.timer = undefined;
        if (this.id === id && !this.source) this.connect(id);
      }, wait);
    });
  }

  private bump(): void {
    this.tick++;
    this.host.requestUpdate();
  }

  private close(): void {
    clearTimeout(this.timer);
    this.timer = undefined;
    this.source?.close();
    this.source = null;
  }
}
