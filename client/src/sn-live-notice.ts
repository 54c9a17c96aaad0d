import { LitElement, css, html, nothing } from 'lit';
import type { Identity, ReviewEvent, RevisionEvent } from './review-types.js';
import { reviewNotice, revisionNotice } from './review-rules.js';

/**
 * What others did to the open model, said at once: "Revision 7 saved by Dana"
 * with an action to open it (the edits on screen stay until the user opens it,
 * and a save of them meets the usual conflict), or "Revision 6 approved by
 * Lee". A polite live region: it is read out but never takes the focus.
 *
 * @fires sn-open - {id, revision}: open the revision named by the notice
 */
export class SnLiveNotice extends LitElement {
  static override styles = css`
    :host { position: fixed; right: 14px; bottom: 14px; z-index: 15; display: flex; flex-direction: column; gap: 6px; align-items: flex-end; max-width: min(420px, 90vw); }
    .notice { background: #fffbef; color: #1d3a4a; border: 1px solid #e8b04b; border-left-width: 4px; border-radius: 4px; padding: 6px 10px;
      box-shadow: 0 4px 14px rgba(0,0,0,0.12); font-size: 13px; display: flex; gap: 8px; align-items: center; }
    .notice.review { border-color: #5b8fb0; background: #f3f8fb; }
    .text { flex: 1; }
    button { font: inherit; font-size: 12px; padding: 2px 8px; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; flex: none; }
    button.primary { background: #1d3a4a; color: #fff; border-color: #1d3a4a; }
    @media print { :host { display: none; } }
  `;

  static override properties = {
    modelId: { type: String },
    revisionEvent: { attribute: false },
    reviewEvent: { attribute: false },
    latest: { type: Number },
    saving: { type: Boolean },
    identity: { attribute: false },
    dismissed: { state: true },
  };

  /** The saved model open on screen. */
  declare modelId: string;
  declare revisionEvent: RevisionEvent | null;
  declare reviewEvent: ReviewEvent | null;
  /** The latest revision this client has (saved or opened). */
  declare latest: number;
  /** A save of this client is under way (its own event is not news). */
  declare saving: boolean;
  declare identity: Identity | null;
  /** The events the user closed. */
  declare private dismissed: ReadonlySet<object>;

  constructor() {
    super();
    this.modelId = '';
    this.revisionEvent = null;
    this.reviewEvent = null;
    this.latest = 0;
    this.saving = false;
    this.identity = null;
    this.dismissed = new Set();
  }

  override render() {
    const rev = this.revisionEvent && !this.dismissed.has(this.revisionEvent) ? this.revisionEvent : null;
    const review = this.reviewEvent && !this.dismissed.has(this.reviewEvent) ? this.reviewEvent : null;
    const saved = revisionNotice(rev, { latest: this.latest, saving: this.saving });
    const reviewed = reviewNotice(review, this.identity);
    // The live region is always there, so that a notice put into it is read out.
    return html`<div role="status" aria-live="polite">
      ${saved && rev
        ? html`<div class="notice revision" data-notice="revision" data-revision=${rev.revision}>
            <span class="text">${saved}</span>
            <button class="primary" data-action="open-revision" @click=${() => this.open(rev)}>Open revision ${rev.revision}</button>
            <button data-action="dismiss" aria-label="Dismiss" @click=${() => this.dismiss(rev)}>×</button>
          </div>`
        : nothing}
      ${reviewed && review
        ? html`<div class="notice review" data-notice="review" data-revision=${review.revision} data-state=${review.state}>
            <span class="text">${reviewed}</span>
            <button data-action="dismiss" aria-label="Dismiss" @click=${() => this.dismiss(review)}>×</button>
          </div>`
        : nothing}
    </div>`;
  }

  private open(ev: RevisionEvent): void {
    this.dispatchEvent(new CustomEvent('sn-open', { detail: { id: this.modelId || ev.id, revision: ev.revision }, bubbles: true, composed: true }));
  }

  private dismiss(ev: object): void {
    this.dismissed = new Set([...this.dismissed, ev]);
  }
}

customElements.define('sn-live-notice', SnLiveNotice);

declare global {
  interface HTMLElementTagNameMap {
    'sn-live-notice': SnLiveNotice;
  }
}
