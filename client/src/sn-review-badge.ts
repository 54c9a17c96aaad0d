import { LitElement, css, html, nothing } from 'lit';
import type { ReviewState } from './review-types.js';
import { STATE_LABELS } from './review-rules.js';

/**
 * A revision's review state as a small coloured label (nothing when the state
 * is unknown, as from an older server). The host carries `data-state` for
 * tests and styles.
 */
export class SnReviewBadge extends LitElement {
  static override styles = css`
    :host { display: inline-block; }
    span { border-radius: 3px; padding: 0 6px; font-size: 11.5px; line-height: 17px; display: inline-block; font-weight: 600; border: 1px solid transparent; }
    .prepared { background: #eef1f3; color: #3d4a52; border-color: #c9d1d6; }
    .checked { background: #e3eef8; color: #174a7a; border-color: #a9c6e3; }
    .approved { background: #1f6f3f; color: #fff; }
    .returned { background: #fbe3e1; color: #8c1d18; border-color: #e6a7a1; }
  `;

  static override properties = { state: { type: String, reflect: true, attribute: 'data-state' } };

  /** The state shown, or null. */
  declare state: ReviewState | null;

  constructor() {
    super();
    this.state = null;
  }

  override render() {
    return this.state ? html`<span class=${this.state}>${STATE_LABELS[this.state]}</span>` : nothing;
  }
}

customElements.define('sn-review-badge', SnReviewBadge);

declare global {
  interface HTMLElementTagNameMap {
    'sn-review-badge': SnReviewBadge;
  }
}
