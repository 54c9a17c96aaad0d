/**
 * The review of the revision on screen: loads it (`GET …/revisions/{rev}`
 * carries `review`) whenever the model, the revision or the live stream's
 * count changes, and sends a reviewer's state change. Holds what the review
 * panel and the report head show; an older server's answer has no review, and
 * then there is nothing to show.
 */
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import { ApiError, api } from './api.js';
import { postReview } from './review-api.js';
import { type Review, readReview } from './review-types.js';
import { type ReviewAction, type ReviewErrorView, reviewErrorView } from './review-rules.js';

/** Which revision is on screen: a saved model's id (null for none), the revision, the live count. */
export interface ReviewSubject {
  readonly id: string | null;
  readonly revision: number;
  readonly tick: number;
}

/** What the controller needs from its host. */
export interface ReviewView {
  subject(): ReviewSubject;
  /** Asks for a sign-in on a 401; true when it did. */
  auth(e: unknown): boolean;
  /** A short message to the user. */
  say(text: string): void;
}

export class ReviewDocumentController implements ReactiveController {
  /** The review of the revision on screen, or null (not saved, not loaded yet, or an older server). */
  review: Review | null = null;
  /** Who saved the revision on screen. */
  author = '';
  /** A review request is under way. */
  busy = false;
  /** The last refusal, in plain words, or null. */
  error: ReviewErrorView | null = null;

  private readonly host: ReactiveControllerHost;
  private readonly view: ReviewView;
  private key = '';
  private revisionKey = '';

  constructor(host: ReactiveControllerHost, view: ReviewView) {
    this.host = host;
    this.view = view;
    host.addController(this);
  }

  hostUpdated(): void {
    const s = this.view.subject();
    const revisionKey = s.id ? `${s.id}@${s.revision}` : '';
    const key = `${revisionKey}#${s.tick}`;
    if (key === this.key) return;
    this.key = key;
    if (revisionKey !== this.revisionKey) {
      // Another revision: nothing of the old one stays on screen.
      this.revisionKey = revisionKey;
      this.review = null;
      this.author = '';
      this.error = null;
      this.host.requestUpdate();
    }
    if (s.id) void this.load(s.id, s.revision, key);
  }

  /** Asks the server for a state change of the revision on screen. */
  async submit(state: ReviewAction, note: string): Promise<void> {
    const s = this.view.subject();
    if (!s.id || this.busy) return;
    const key = this.key;
    this.busy = true;
    this.error = null;
    this.host.requestUpdate();
    try {
      const review = await postReview(s.id, s.revision, state, note);
      if (this.key !== key) return;
      if (review) this.review = review;
      else await this.load(s.id, s.revision, key);
      this.view.say(`Revision ${s.revision} ${state}.`);
    } catch (e) {
      if (this.view.auth(e)) return;
      const err = e instanceof ApiError ? e : new ApiError(0, 'SN_NETWORK', e instanceof Error ? e.message : String(e));
      this.error = reviewErrorView(err, s.revision);
      if (this.error.reload && this.key === key) await this.load(s.id, s.revision, key);
    } finally {
      this.busy = false;
      this.host.requestUpdate();
    }
  }

  private async load(id: string, revision: number, key: string): Promise<void> {
    try {
      const stored = await api.getRevision(id, revision);
      if (this.key !== key) return;
      this.review = readReview(stored);
      this.author = stored.author;
    } catch (e) {
      if (this.key !== key) return;
      if (this.view.auth(e)) return;
      // The document itself loaded: a failed review load leaves the panel empty, not an error of the page.
      this.review = null;
    }
    this.host.requestUpdate();
  }
}
