import { LitElement, css, html, nothing } from 'lit';
import type { UnitSystem } from '../../shared-types/present.js';
import { api, type RevisionInfo } from './api.js';
import { compareStored, type ComparisonAnswer } from './sheet-api.js';
import './sn-compare-tables.js';

/**
 * Compare two revisions of the open model: pick them from its revisions (newest first; by default
 * the one before the latest against the latest) and see what changed in the inputs and the results
 * (GET /api/models/{id}/compare).
 */
export class SnCompare extends LitElement {
  static override styles = css`
    :host { display: block; font-size: 13px; }
    button, select { font: inherit; font-size: 13px; }
    button { padding: 3px 10px; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; }
    .pick { display: flex; gap: 8px; align-items: center; flex-wrap: wrap; margin: 6px 0; }
    .error { color: #8c1d18; }
  `;

  static override properties = {
    modelId: { type: String },
    latest: { type: Number },
    system: { type: String },
    open: { state: true },
    revisions: { state: true },
    from: { state: true },
    to: { state: true },
    comparison: { state: true },
    error: { state: true },
    busy: { state: true },
  };

  /** The library id of the open model, '' for none. */
  declare modelId: string;
  /** Its latest revision (a new save changes it: the list reloads). */
  declare latest: number;
  declare system: UnitSystem;
  declare private open: boolean;
  declare private revisions: RevisionInfo[] | null;
  declare private from: number;
  declare private to: number;
  declare private comparison: ComparisonAnswer | null;
  declare private error: string;
  declare private busy: boolean;

  constructor() {
    super();
    this.modelId = '';
    this.latest = 0;
    this.system = 'si';
    this.open = false;
    this.revisions = null;
    this.from = 0;
    this.to = 0;
    this.comparison = null;
    this.error = '';
    this.busy = false;
  }

  override willUpdate(changed: Map<string, unknown>): void {
    if (changed.has('modelId') || changed.has('latest')) {
      this.revisions = null;
      this.comparison = null;
      if (this.open) void this.loadRevisions();
    }
  }

  override render() {
    if (!this.modelId) return html`<p class="none">Save the model to compare its revisions.</p>`;
    if (!this.open) return html`<button data-action="compare-open" @click=${this.onOpen}>Compare revisions…</button>`;
    const revs = this.revisions;
    const options = (selected: number) =>
      (revs ?? []).map((r) => html`<option value=${r.revision} ?selected=${r.revision === selected}>revision ${r.revision} · ${r.author}</option>`);
    return html`
      <div class="pick">
        <label>from <select name="from" @change=${(e: Event) => (this.from = Number((e.target as HTMLSelectElement).value))}>${options(this.from)}</select></label>
        <label>to <select name="to" @change=${(e: Event) => (this.to = Number((e.target as HTMLSelectElement).value))}>${options(this.to)}</select></label>
        <button data-action="compare" ?disabled=${this.busy || !revs || this.from === this.to} @click=${this.onCompare}>Compare</button>
        <button data-action="compare-close" @click=${() => (this.open = false)}>Close</button>
      </div>
      ${this.error ? html`<p class="error" role="status">${this.error}</p>` : nothing}
      ${this.busy ? html`<p>Comparing…</p>` : nothing}
      <sn-compare-tables .comparison=${this.comparison} .system=${this.system} .fromLabel=${`revision ${this.from}`} .toLabel=${`revision ${this.to}`}></sn-compare-tables>
    `;
  }

  private onOpen(): void {
    this.open = true;
    void this.loadRevisions();
  }

  private async loadRevisions(): Promise<void> {
    this.error = '';
    try {
      const list = (await api.revisions(this.modelId)).revisions.slice().sort((a, b) => b.revision - a.revision);
      this.revisions = list;
      this.to = list[0]?.revision ?? 0;
      this.from = list[1]?.revision ?? this.to;
    } catch (e) {
      this.error = `Could not list the revisions: ${e instanceof Error ? e.message : String(e)}`;
    }
  }

  private async onCompare(): Promise<void> {
    this.busy = true;
    this.error = '';
    try {
      this.comparison = await compareStored(this.modelId, this.from, this.to);
    } catch (e) {
      this.comparison = null;
      this.error = `Could not compare: ${e instanceof Error ? e.message : String(e)}`;
    } finally {
      this.busy = false;
    }
  }
}

customElements.define('sn-compare', SnCompare);

declare global {
  interface HTMLElementTagNameMap {
    'sn-compare': SnCompare;
  }
}
