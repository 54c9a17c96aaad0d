import { LitElement, css, html, nothing } from 'lit';
import type { Model } from '../../shared-types/model.js';
import type { UnitSystem } from '../../shared-types/present.js';
import { api } from './api.js';
import { compareModels, compareStored, type ComparisonAnswer } from './sheet-api.js';
import './sn-compare-tables.js';

/**
 * Said when someone else saved the model after it was opened: nothing was
 * overwritten; the user saves theirs as a new model or opens the latest. Takes
 * the focus when it opens, keeps Tab inside, and closes on Escape.
 *
 * So that the user decides knowing what the other person changed, it shows two
 * comparisons (shared-types/compare.ts through the API, both solved by the
 * server): what changed in the library from the user's base revision to the
 * latest (GET /api/models/{id}/compare), and the user's edit against the latest
 * (POST /api/compare with the latest model and the edit).
 *
 * @fires sn-save-mine - save the user's model as a new library entry
 * @fires sn-reload-latest - drop the user's changes and open the latest revision
 * @fires sn-close - cancelled (Escape or the Cancel button)
 */
export class SnConflictDialog extends LitElement {
  static override styles = css`
    :host { display: block; }
    .conflict { background: #fff; border-radius: 6px; padding: 14px 18px; box-shadow: 0 6px 24px rgba(0,0,0,0.18); max-height: 84vh; overflow-y: auto; }
    .compare { border-top: 1px solid #e4e0d8; margin-top: 10px; padding-top: 4px; }
    .compare h3 { font-size: 13.5px; margin: 8px 0 2px; }
    .muted { color: #6b665e; font-size: 12.5px; }
    h2 { font-size: 15px; margin: 0 0 6px; color: #8c1d18; }
    p { font-size: 13.5px; }
    button { font: inherit; font-size: 13px; padding: 4px 12px; margin: 4px 6px 0 0; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; }
    button.primary { background: #1d3a4a; color: #fff; border-color: #1d3a4a; }
    button:focus { outline: 2px solid #d48a1a; outline-offset: 2px; }
  `;

  static override properties = {
    baseRevision: { type: Number },
    currentRevision: { type: Number },
    modelId: { type: String },
    mine: { attribute: false },
    system: { type: String },
    theirs: { state: true },
    yours: { state: true },
    compareError: { state: true },
  };

  /** The revision the user's changes were made on. */
  declare baseRevision: number;
  /** The library's latest revision (0 when the server did not say). */
  declare currentRevision: number;

  /** The library id of the model (for the comparisons; '' shows none). */
  declare modelId: string;
  /** The user's edit, not saved. */
  declare mine: Model | null;
  declare system: UnitSystem;
  /** Base revision → latest: what the other person changed. */
  declare private theirs: ComparisonAnswer | null;
  /** Latest → the user's edit. */
  declare private yours: ComparisonAnswer | null;
  declare private compareError: string;

  constructor() {
    super();
    this.baseRevision = 0;
    this.currentRevision = 0;
    this.modelId = '';
    this.mine = null;
    this.system = 'si';
    this.theirs = null;
    this.yours = null;
    this.compareError = '';
  }

  override connectedCallback(): void {
    super.connectedCallback();
    void this.loadComparisons();
  }

  /** Fetches both comparisons; a failure leaves the dialog's choices as they are and says why. */
  private async loadComparisons(): Promise<void> {
    if (!this.modelId || !this.mine) return;
    try {
      const latest = this.currentRevision > 0 ? await api.getRevision(this.modelId, this.currentRevision) : await api.getModel(this.modelId);
      const [theirs, yours] = await Promise.all([
        this.baseRevision > 0 && this.baseRevision !== latest.revision ? compareStored(this.modelId, this.baseRevision, latest.revision) : Promise.resolve(null),
        compareModels(latest.model, this.mine),
      ]);
      this.theirs = theirs;
      this.yours = yours;
      if (this.currentRevision === 0) this.currentRevision = latest.revision;
    } catch (e) {
      this.compareError = `The comparison could not be made: ${e instanceof Error ? e.message : String(e)}`;
    }
  }

  override render() {
    return html`<div class="conflict" role="alertdialog" aria-modal="true" aria-labelledby="conflict-title" aria-describedby="conflict-text" @keydown=${this.onKey}>
      <h2 id="conflict-title">Someone else saved this model first</h2>
      <p id="conflict-text">Your changes were made on revision ${this.baseRevision}; the library now holds revision ${this.currentRevision || 'newer'}.
        Nothing was overwritten.</p>
      ${this.renderComparisons()}
      <button class="primary" data-action="save-as-copy" @click=${() => this.fire('sn-save-mine')}>Save mine as a new model</button>
      <button data-action="reload-latest" @click=${() => this.fire('sn-reload-latest')}>Open the latest (drop my changes)</button>
      <button data-action="cancel" @click=${() => this.fire('sn-close')}>Cancel</button>
    </div>`;
  }

  private renderComparisons() {
    if (!this.modelId || !this.mine) return nothing;
    if (this.compareError) return html`<p class="muted" role="status">${this.compareError}</p>`;
    if (!this.yours) return html`<p class="muted">Comparing your edit with the latest revision…</p>`;
    const latest = `revision ${this.currentRevision}`;
    return html`<div class="compare">
      ${this.theirs
        ? html`<section class="theirs"><h3>What changed from revision ${this.baseRevision} to ${latest}</h3>
            <sn-compare-tables .comparison=${this.theirs} .system=${this.system} .fromLabel=${`revision ${this.baseRevision}`} .toLabel=${latest}></sn-compare-tables></section>`
        : nothing}
      <section class="yours"><h3>Your edit compared with ${latest}</h3>
        <sn-compare-tables .comparison=${this.yours} .system=${this.system} .fromLabel=${latest} .toLabel=${'your edit'}></sn-compare-tables></section>
    </div>`;
  }

  override firstUpdated(): void {
    this.renderRoot.querySelector<HTMLButtonElement>('button.primary')?.focus();
  }

  private onKey(e: KeyboardEvent): void {
    if (e.key === 'Escape') {
      e.preventDefault();
      e.stopPropagation();
      this.fire('sn-close');
      return;
    }
    if (e.key !== 'Tab') return;
    const buttons = [...this.renderRoot.querySelectorAll<HTMLButtonElement>('button')];
    const at = buttons.indexOf((this.renderRoot as ShadowRoot).activeElement as HTMLButtonElement);
    const next = e.shiftKey ? (at <= 0 ? buttons.length - 1 : at - 1) : at >= buttons.length - 1 ? 0 : at + 1;
    e.preventDefault();
    buttons[next]?.focus();
  }

  private fire(type: string): void {
    this.dispatchEvent(new CustomEvent(type, { bubbles: true, composed: true }));
  }
}

customElements.define('sn-conflict-dialog', SnConflictDialog);

declare global {
  interface HTMLElementTagNameMap {
    'sn-conflict-dialog': SnConflictDialog;
  }
}
