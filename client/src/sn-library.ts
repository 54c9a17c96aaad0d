import { LitElement, css, html, nothing } from 'lit';
import { type DemoInfo, type ModelSummary, type RevisionInfo, ApiError, api } from './api.js';
import { readReviewState } from './review-types.js';
import './sn-review-badge.js';

/** Detail of `sn-open`: a saved model, at its latest revision unless `revision` is given. */
export interface OpenDetail { id: string; revision?: number }

function when(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : d.toLocaleString();
}

/**
 * The team library: search the saved models, open one, archive or restore it;
 * and the revision history of the open model, any revision of which opens.
 * Lists load from the API each time the panel opens or `refresh` changes.
 *
 * @fires sn-open - {id, revision?}: open a saved model
 * @fires sn-open-demo - {id}: open one of the server's demo models
 * @fires sn-close - the panel should close
 * @fires sn-api-error - {error}: a call failed (the app decides, e.g. sign in)
 */
export class SnLibrary extends LitElement {
  static override styles = css`
    :host { display: block; }
    .panel { background: #fff; border: 1px solid #c8c4bb; border-radius: 6px; padding: 10px 14px; box-shadow: 0 6px 24px rgba(0,0,0,0.12); }
    header { display: flex; align-items: center; gap: 10px; margin-bottom: 8px; }
    h2 { font-size: 15px; margin: 0; flex: 1; color: #1d3a4a; }
    h3 { font-size: 13px; margin: 12px 0 4px; color: #1d3a4a; }
    input[type=search] { font: inherit; padding: 3px 6px; border: 1px solid #c8c4bb; border-radius: 3px; width: 16em; }
    table { border-collapse: collapse; width: 100%; font-size: 13px; }
    th { text-align: left; font-size: 12px; color: #4a5258; border-bottom: 1px solid #dcd7cd; padding: 2px 6px; }
    td { border-bottom: 1px solid #ece8e0; padding: 3px 6px; }
    tr.current td { background: #fbeed3; }
    button { font: inherit; font-size: 12px; cursor: pointer; border: 1px solid #c8c4bb; background: #fff; border-radius: 3px; padding: 2px 8px; }
    button.primary { background: #1d3a4a; color: #fff; border-color: #1d3a4a; }
    .muted { color: #6b665e; font-size: 12px; }
    .err { color: #b3261e; font-size: 13px; }
    .scroll { max-height: 40vh; overflow-y: auto; }
  `;

  static override properties = {
    currentId: { type: String },
    currentRevision: { type: Number },
    refresh: { type: Number },
    models: { state: true },
    revisions: { state: true },
    demos: { state: true },
    query: { state: true },
    archived: { state: true },
    error: { state: true },
  };

  declare currentId: string;
  declare currentRevision: number;
  /** Change to reload the lists. */
  declare refresh: number;
  declare private models: ModelSummary[] | null;
  declare private revisions: RevisionInfo[] | null;
  declare private demos: DemoInfo[];
  declare private query: string;
  declare private archived: boolean;
  declare private error: string;
  private timer: ReturnType<typeof setTimeout> | undefined;

  constructor() {
    super();
    this.currentId = '';
    this.currentRevision = 0;
    this.refresh = 0;
    this.models = null;
    this.revisions = null;
    this.demos = [];
    this.query = '';
    this.archived = false;
    this.error = '';
  }

  override render() {
    return html`<div class="panel" role="dialog" aria-label="Team library">
      <header>
        <h2>Team library</h2>
        <input type="search" placeholder="Search name or author" aria-label="Search the library" .value=${this.query} @input=${this.onSearch} />
        <label class="muted"><input type="checkbox" .checked=${this.archived} @change=${this.onArchived} /> show archived</label>
        <button @click=${this.close}>Close</button>
      </header>
      ${this.error ? html`<p class="err">${this.error}</p>` : nothing}
      <div class="scroll">
        ${this.models === null
          ? html`<p class="muted">Loading…</p>`
          : this.models.length === 0
            ? html`<p class="muted">No saved models${this.query ? ' match' : ' yet'}.</p>`
            : html`<table class="models">
                <thead><tr><th>Name</th><th>Author</th><th>Updated</th><th>Rev.</th><th>Review</th><th></th></tr></thead>
                <tbody>
                  ${this.models.map(
                    (m) => html`<tr class=${m.id === this.currentId ? 'current' : ''} data-id=${m.id}>
                      <td>${m.name}${m.archived ? html` <span class="muted">(archived)</span>` : nothing}</td>
                      <td>${m.author}</td><td>${when(m.updated)}</td><td>${m.revision}</td>
                      <td class="review"><sn-review-badge .state=${readReviewState(m)}></sn-review-badge></td>
                      <td>
                        <button class="primary open" @click=${() => this.open({ id: m.id })}>Open</button>
                        ${m.archived
                          ? html`<button @click=${() => this.setArchived(m.id, false)}>Restore</button>`
                          : html`<button @click=${() => this.setArchived(m.id, true)}>Archive</button>`}
                      </td>
                    </tr>`,
                  )}
                </tbody>
              </table>`}
      </div>
      ${this.demos.length
        ? html`<h3>Demo models</h3>
            <table class="demos"><tbody>
              ${this.demos.map(
                (d) => html`<tr data-demo=${d.id}><td>${d.name}</td>
                  <td><button @click=${() => this.fire('sn-open-demo', { id: d.id })}>Open demo</button></td></tr>`,
              )}
            </tbody></table>`
        : nothing}
      ${this.currentId
        ? html`<h3>Revisions of the open model</h3>
            ${this.revisions === null
              ? html`<p class="muted">Loading…</p>`
              : html`<div class="scroll"><table class="revisions">
                  <thead><tr><th>Rev.</th><th>Author</th><th>Saved</th><th>Message</th><th>Review</th><th></th></tr></thead>
                  <tbody>
                    ${[...this.revisions].sort((a, b) => b.revision - a.revision).map(
                      (r) => html`<tr class=${r.revision === this.currentRevision ? 'current' : ''} data-revision=${r.revision}>
                        <td>${r.revision}</td><td>${r.author}</td><td>${when(r.created)}</td><td>${r.message}</td>
                        <td class="review"><sn-review-badge .state=${readReviewState(r)}></sn-review-badge></td>
                        <td><button @click=${() => this.open({ id: this.currentId, revision: r.revision })}>Open</button></td>
                      </tr>`,
                    )}
                  </tbody>
                </table></div>`}`
        : nothing}
    </div>`;
  }

  override updated(changed: Map<string, unknown>): void {
    if (changed.has('refresh') || changed.has('currentId')) void this.load();
  }

  private async load(): Promise<void> {
    this.error = '';
    try {
      const [list, revs] = await Promise.all([
        api.listModels(this.query, this.archived),
        this.currentId ? api.revisions(this.currentId).catch(() => null) : Promise.resolve(null),
      ]);
      this.models = list.models;
      if (this.demos.length === 0) this.demos = (await api.demos().catch(() => ({ demos: [] }))).demos;
      this.revisions = revs ? revs.revisions : null;
    } catch (e) {
      this.models = [];
      this.error = e instanceof Error ? e.message : String(e);
      this.fire('sn-api-error', { error: e });
    }
  }

  private onSearch(e: Event): void {
    this.query = (e.target as HTMLInputElement).value;
    clearTimeout(this.timer);
    this.timer = setTimeout(() => void this.load(), 250);
  }

  private onArchived(e: Event): void {
    this.archived = (e.target as HTMLInputElement).checked;
    void this.load();
  }

  private async setArchived(id: string, archived: boolean): Promise<void> {
    try {
      await (archived ? api.archive(id) : api.restore(id));
      await this.load();
    } catch (e) {
      this.error = e instanceof ApiError ? e.message : String(e);
    }
  }

  private open(detail: OpenDetail): void {
    this.fire('sn-open', detail);
  }

  private close(): void {
    this.fire('sn-close', {});
  }

  private fire(type: string, detail: unknown): void {
    this.dispatchEvent(new CustomEvent(type, { detail, bubbles: true, composed: true }));
  }
}

customElements.define('sn-library', SnLibrary);

declare global {
  interface HTMLElementTagNameMap {
    'sn-library': SnLibrary;
  }
}
