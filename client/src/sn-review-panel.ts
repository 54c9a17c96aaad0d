import { LitElement, css, html, nothing } from 'lit';
import type { Identity, Review } from './review-types.js';
import { ACTION_LABELS, REVIEW_ACTIONS, type ReviewAction, type ReviewErrorView, STATE_LABELS, reviewActions } from './review-rules.js';
import './sn-review-badge.js';

/** Detail of `sn-review`: the state asked for and the reviewer's note. */
export interface ReviewDetail { state: ReviewAction; note: string }

function when(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : d.toLocaleString();
}

/**
 * The review of the saved revision on screen: its state, every step with who,
 * when and the note, and the reviewer's buttons (Check, Approve, Return with a
 * note), each enabled by the key's role and four-eyes (review-rules.ts), with
 * the reason in its title when it is not. The server's refusals are shown in
 * plain words; a stale revision offers to open the latest. Shows nothing when
 * there is no review (a model not saved, or an older server).
 *
 * @fires sn-review - {state, note}: a reviewer asked for a state change
 * @fires sn-open - {id}: open the model's latest revision
 */
export class SnReviewPanel extends LitElement {
  static override styles = css`
    :host { display: block; }
    .card { background: #fff; border: 1px solid #dcd7cd; border-radius: 6px; padding: 8px 12px; margin-bottom: 12px; }
    h2 { font-size: 14px; margin: 2px 0 6px; color: #1d3a4a; display: flex; gap: 8px; align-items: center; }
    table { border-collapse: collapse; font-size: 12.5px; width: 100%; }
    th { text-align: left; font-size: 12px; color: #4a5258; border-bottom: 1px solid #dcd7cd; padding: 2px 6px; }
    td { border-bottom: 1px solid #ece8e0; padding: 2px 6px; vertical-align: top; }
    .actions { display: flex; gap: 6px; align-items: center; flex-wrap: wrap; margin-top: 8px; }
    input { font: inherit; font-size: 12.5px; flex: 1 1 14em; min-width: 10em; padding: 3px 6px; border: 1px solid #c8c4bb; border-radius: 3px; }
    button { font: inherit; font-size: 12.5px; padding: 3px 10px; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; }
    button.primary { background: #1d3a4a; color: #fff; border-color: #1d3a4a; }
    button:disabled { opacity: 0.45; cursor: default; }
    .muted { color: #6b665e; font-size: 12px; margin: 6px 0 0; }
    .final { font-size: 13px; margin: 4px 0; }
    .approved { color: #1f6f3f; font-weight: 600; }
    .err { color: #b3261e; font-size: 13px; margin: 6px 0 0; }
    @media print { .actions, .muted, .err { display: none; } .card { border: none; padding: 0; } }
  `;

  static override properties = {
    modelId: { type: String },
    review: { attribute: false },
    author: { type: String },
    revision: { type: Number },
    latest: { type: Number },
    identity: { attribute: false },
    busy: { type: Boolean },
    error: { attribute: false },
    dirty: { type: Boolean },
    note: { state: true },
  };

  declare modelId: string;
  /** The review of the revision shown, or null (nothing is shown). */
  declare review: Review | null;
  /** Who saved the revision shown. */
  declare author: string;
  /** The revision shown. */
  declare revision: number;
  /** The model's latest revision as far as the client knows. */
  declare latest: number;
  /** The signed-in personal key, or null. */
  declare identity: Identity | null;
  declare busy: boolean;
  declare error: ReviewErrorView | null;
  /** The model on screen has unsaved changes. */
  declare dirty: boolean;
  declare private note: string;

  constructor() {
    super();
    this.modelId = '';
    this.review = null;
    this.author = '';
    this.revision = 0;
    this.latest = 0;
    this.identity = null;
    this.busy = false;
    this.error = null;
    this.dirty = false;
    this.note = '';
  }

  override willUpdate(changed: Map<string, unknown>): void {
    // The note belongs to one step: it is cleared once the state or the revision changes (kept after a refusal).
    const before = changed.get('review') as Review | null | undefined;
    if ((changed.has('review') && before?.state !== this.review?.state) || changed.has('revision')) this.note = '';
  }

  override render() {
    const r = this.review;
    if (!r) return this.error ? html`<div class="card">${this.renderError()}</div>` : nothing;
    const actions = reviewActions({ identity: this.identity, review: r, author: this.author, revision: this.revision, latest: this.latest });
    const offered = REVIEW_ACTIONS.filter((a) => actions[a].enabled);
    const final = r.state === 'approved' || r.state === 'returned';
    return html`<section class="card review" data-state=${r.state} data-revision=${this.revision} aria-label="Review">
      <h2>Review of revision ${this.revision} <sn-review-badge .state=${r.state}></sn-review-badge></h2>
      ${r.state === 'approved'
        ? html`<p class="final approved" data-approved>Revision ${this.revision} is approved and stays approved.${this.dirty
            ? ` Your changes are not part of it: saving them makes revision ${this.latest + 1}, prepared for review.`
            : ' A change saved from here becomes a new revision, prepared for review.'}</p>`
        : r.state === 'returned'
          ? html`<p class="final" data-returned>Revision ${this.revision} was returned: a new revision answers the note.</p>`
          : nothing}
      <table class="history">
        <thead><tr><th>Step</th><th>By</th><th>When</th><th>Note</th></tr></thead>
        <tbody>
          ${r.history.map(
            (e) => html`<tr data-step=${e.state}><td>${STATE_LABELS[e.state]}</td><td>${e.by}</td><td title=${e.at}>${when(e.at)}</td><td>${e.note ?? ''}</td></tr>`,
          )}
        </tbody>
      </table>
      ${final
        ? nothing
        : html`<div class="actions">
            ${REVIEW_ACTIONS.map((a) => this.renderButton(a, actions[a].enabled, actions[a].why))}
            <input type="text" name="note" maxlength="2000" aria-label="Review note" placeholder="Note (needed to return)"
              .value=${this.note} @input=${this.onNote} ?disabled=${offered.length === 0} />
          </div>
          ${offered.length === 0 ? html`<p class="muted" data-why>${actions[r.state === 'checked' ? 'approved' : 'checked'].why}</p>` : nothing}`}
      ${this.renderError()}
    </section>`;
  }

  private renderButton(action: ReviewAction, enabled: boolean, why: string) {
    const needsNote = action === 'returned' && this.note.trim() === '';
    const title = !enabled ? why : needsNote ? 'Write a note saying what to change, then Return.' : '';
    return html`<button class=${action === 'returned' ? '' : 'primary'} data-review-action=${action} title=${title}
      ?disabled=${!enabled || needsNote || this.busy} @click=${() => this.ask(action)}>${ACTION_LABELS[action]}</button>`;
  }

  private renderError() {
    const e = this.error;
    if (!e) return nothing;
    return html`<p class="err" role="alert" data-error>${e.text}
      ${e.offerLatest && this.modelId ? html`<button data-action="open-latest" @click=${this.openLatest}>Open the latest revision</button>` : nothing}</p>`;
  }

  private onNote(e: Event): void {
    this.note = (e.target as HTMLInputElement).value;
  }

  private ask(state: ReviewAction): void {
    const note = this.note.trim();
    if (state === 'returned' && !note) return;
    this.dispatchEvent(new CustomEvent<ReviewDetail>('sn-review', { detail: { state, note }, bubbles: true, composed: true }));
  }

  private openLatest(): void {
    this.dispatchEvent(new CustomEvent('sn-open', { detail: { id: this.modelId }, bubbles: true, composed: true }));
  }
}

customElements.define('sn-review-panel', SnReviewPanel);

declare global {
  interface HTMLElementTagNameMap {
    'sn-review-panel': SnReviewPanel;
  }
}
