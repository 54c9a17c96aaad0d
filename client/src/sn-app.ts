import { LitElement, css, html, nothing } from 'lit';
import type { Solution } from '../../shared-types/solution.js';
import type { ModelIssue } from '../../shared-types/errors.js';
import { ApiError, api, isAbort } from './api.js';
import {
  type EditModel,
  History,
  applyEdit,
  describePointer,
  getAt,
  insertRow,
  issuesByPointer,
  removeRow,
  rowFor,
  sameJson,
} from './store.js';
import { download, fileName, stationCsv } from './export.js';
import { type UnitSystem, UNIT_SYSTEMS, UNIT_SYSTEM_LABELS, prettyUnit, displayUnit } from './units.js';
import type { EditDetail, RowDetail, SelectDetail } from './sn-table.js';
import type { ResultState } from './sn-results.js';
import type { OpenDetail } from './sn-library.js';
import type { SaveDetail } from './sn-save-dialog.js';
import type { SnEditor } from './sn-editor.js';
import './sn-editor.js';
import './sn-schematic.js';
import './sn-results.js';
import './sn-library.js';
import './sn-signin.js';
import './sn-save-dialog.js';
import './sn-cautions.js';

const SOLVE_DELAY = 300; // ms after the last edit before re-solving
const PREFERRED_DEMO = 'mixer-drive'; // the demo a new user lands on, when the server has it

/** Where the model on screen comes from. */
interface Doc {
  /** Library id, or null for a demo, an import or a model not saved yet. */
  id: string | null;
  /** Latest revision known in the library: the base of the next save. */
  revision: number;
  /** The revision shown when it is an older one, else null. */
  viewing: number | null;
  /** The model as last loaded or saved, to tell unsaved changes. */
  saved: EditModel | null;
  /** Where it came from, for the title: "demo", "import", "library", "new". */
  origin: string;
}

type Panel = 'none' | 'library' | 'save' | 'conflict';

/** Finds an element by selector through open shadow roots. */
function deepQuery(root: ParentNode, selector: string): HTMLElement | null {
  const hit = root.querySelector<HTMLElement>(selector);
  if (hit) return hit;
  for (const el of root.querySelectorAll('*')) {
    if (el.shadowRoot) {
      const found = deepQuery(el.shadowRoot, selector);
      if (found) return found;
    }
  }
  return null;
}

/** The focused element, through shadow roots. */
function deepActive(): Element | null {
  let a: Element | null = document.activeElement;
  while (a?.shadowRoot?.activeElement) a = a.shadowRoot.activeElement;
  return a;
}

/**
 * The application: holds the model, its undo history, the solution and the
 * library document; mediates between the editor, the schematic and the results;
 * re-solves shortly after each edit and says so while the results lag.
 */
export class SnApp extends LitElement {
  static override styles = css`
    :host { display: block; min-height: 100vh; }
    header.bar { position: sticky; top: 0; z-index: 5; display: flex; flex-wrap: wrap; align-items: center; gap: 8px; padding: 6px 14px;
      background: #1d3a4a; color: #eef3f5; }
    .brand { font-weight: 700; letter-spacing: 0.04em; color: #e8b04b; margin-right: 6px; }
    .doc { flex: 1; min-width: 14em; font-size: 13px; overflow: hidden; text-overflow: ellipsis; white-space: nowrap; }
    .doc .dirty { color: #e8b04b; }
    .doc a { color: #9fd3c7; }
    header.bar button, header.bar select, header.bar label.btn { font: inherit; font-size: 12.5px; background: #2a5063; color: #eef3f5; border: 1px solid #3d6b80;
      border-radius: 3px; padding: 3px 9px; cursor: pointer; }
    header.bar button:disabled { opacity: 0.45; cursor: default; }
    header.bar button.primary { background: #e8b04b; color: #1d3a4a; border-color: #e8b04b; font-weight: 600; }
    .sep { width: 1px; height: 20px; background: #3d6b80; }
    input[type=file] { display: none; }
    main { display: grid; grid-template-columns: minmax(0, 46fr) minmax(0, 54fr); gap: 14px; padding: 10px 14px; align-items: start; }
    .col { min-width: 0; }
    .editor-col { align-self: stretch; }
    .card { background: #fff; border: 1px solid #dcd7cd; border-radius: 6px; padding: 8px 12px; margin-bottom: 12px; }
    .card h2 { font-size: 14px; margin: 2px 0 6px; color: #1d3a4a; }
    .editor-card { max-height: calc(100vh - 70px); overflow: auto; position: sticky; top: 52px; }
    .overlay { position: fixed; inset: 0; background: rgba(20, 30, 36, 0.35); z-index: 10; display: flex; align-items: flex-start; justify-content: center; padding-top: 8vh; }
    .overlay > * { width: min(860px, 94vw); }
    .overlay sn-save-dialog { width: min(440px, 94vw); }
    .conflict { background: #fff; border-radius: 6px; padding: 14px 18px; max-width: 480px; }
    .conflict h2 { font-size: 15px; margin: 0 0 6px; color: #8c1d18; }
    .conflict button { font: inherit; font-size: 13px; padding: 4px 12px; margin: 4px 6px 0 0; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; }
    .conflict button.primary { background: #1d3a4a; color: #fff; }
    .problems { border: 1px solid #e9b7b2; background: #fdf0ef; border-radius: 6px; padding: 6px 12px; margin-bottom: 12px; font-size: 13px; }
    .problems h2 { font-size: 14px; color: #8c1d18; margin: 2px 0 4px; }
    .problems ul { margin: 0; padding-left: 18px; }
    .problems a { color: #8c1d18; cursor: pointer; text-decoration: underline; }
    .mechanism { font-weight: 600; }
    .toast { position: fixed; bottom: 14px; left: 50%; transform: translateX(-50%); background: #1d3a4a; color: #fff; padding: 6px 14px; border-radius: 4px; z-index: 20; font-size: 13px; }
    .loading { padding: 40px; text-align: center; color: #6b665e; }
    .print-only { display: none; }
    .report-head h1 { font-size: 18px; margin: 0 0 2px; }
    .report-head table { border-collapse: collapse; font-size: 12px; margin: 6px 0; }
    .report-head td, .report-head th { border-bottom: 1px solid #ddd; padding: 2px 8px 2px 0; text-align: left; }
    @media (max-width: 1000px) { main { grid-template-columns: 1fr; } .editor-card { position: static; max-height: none; } }
    @media print {
      header.bar, .editor-col, .overlay, .toast, .problems a { display: none !important; }
      main { display: block; padding: 0; }
      .card { border: none; padding: 0; margin: 0 0 10px; }
      .print-only { display: block; }
    }
  `;

  static override properties = {
    model: { state: true },
    system: { state: true },
    solution: { state: true },
    resultState: { state: true },
    resultMessage: { state: true },
    issues: { state: true },
    selected: { state: true },
    doc: { state: true },
    panel: { state: true },
    saveBusy: { state: true },
    saveError: { state: true },
    conflictRevision: { state: true },
    toast: { state: true },
    needSignIn: { state: true },
    loading: { state: true },
    libraryRefresh: { state: true },
    canUndo: { state: true },
    canRedo: { state: true },
  };

  declare private model: EditModel | null;
  declare private system: UnitSystem;
  declare private solution: Solution | null;
  declare private resultState: ResultState;
  declare private resultMessage: string;
  declare private issues: readonly ModelIssue[];
  declare private selected: string;
  declare private doc: Doc;
  declare private panel: Panel;
  declare private saveBusy: boolean;
  declare private saveError: string;
  declare private conflictRevision: number;
  declare private toast: string;
  declare private needSignIn: boolean;
  declare private loading: string;
  declare private libraryRefresh: number;
  declare private canUndo: boolean;
  declare private canRedo: boolean;

  private history = new History<EditModel | null>(null);
  private version = 0; // bumps on every change of the model on screen
  private solveTimer: ReturnType<typeof setTimeout> | undefined;
  private solveAbort: AbortController | undefined;
  private toastTimer: ReturnType<typeof setTimeout> | undefined;
  private pendingSave: SaveDetail | null = null;

  constructor() {
    super();
    this.model = null;
    this.system = localStorage.getItem('shaftnet.units')?.toLowerCase() === 'us' ? 'us' : 'si';
    this.solution = null;
    this.resultState = 'none';
    this.resultMessage = '';
    this.issues = [];
    this.selected = '';
    this.doc = { id: null, revision: 0, viewing: null, saved: null, origin: 'new' };
    this.panel = 'none';
    this.saveBusy = false;
    this.saveError = '';
    this.conflictRevision = 0;
    this.toast = '';
    this.needSignIn = false;
    this.loading = 'Loading…';
    this.libraryRefresh = 0;
    this.canUndo = false;
    this.canRedo = false;
  }

  override connectedCallback(): void {
    super.connectedCallback();
    window.addEventListener('keydown', this.onKeyDown);
    window.addEventListener('popstate', this.onPopState);
    window.addEventListener('beforeunload', this.onBeforeUnload);
    void this.boot();
  }

  override disconnectedCallback(): void {
    window.removeEventListener('keydown', this.onKeyDown);
    window.removeEventListener('popstate', this.onPopState);
    window.removeEventListener('beforeunload', this.onBeforeUnload);
    super.disconnectedCallback();
  }

  override render() {
    if (this.needSignIn) return html`<sn-signin @sn-signed-in=${this.onSignedIn}></sn-signin>`;
    const m = this.model;
    return html`
      ${this.renderBar()}
      ${this.loading || !m
        ? html`<div class="loading">${this.loading || 'No model.'}</div>`
        : html`<main
            @sn-edit=${this.onEdit}
            @sn-row-add=${this.onRowAdd}
            @sn-row-remove=${this.onRowRemove}
            @sn-select=${this.onSelect}
          >
            <div class="col editor-col">
              <div class="card editor-card">
                <h2>Model</h2>
                <sn-editor .model=${m} .system=${this.system} .errors=${this.fieldErrors()} .selected=${this.selected} .flagged=${this.flaggedRows()}></sn-editor>
              </div>
            </div>
            <div class="col">
              ${this.renderReportHead(m)}
              ${this.renderProblems()}
              <div class="card">
                <h2>Schematic</h2>
                <sn-schematic .model=${m} .system=${this.system} .selected=${this.selected} .flaggedShafts=${this.mechanismShafts()}></sn-schematic>
              </div>
              <div class="card">
                <h2>Results</h2>
                <sn-results .solution=${this.solution} .model=${m} .system=${this.system} .state=${this.resultState}
                  .message=${this.resultMessage} .selected=${this.selected}></sn-results>
              </div>
              <sn-cautions></sn-cautions>
            </div>
          </main>`}
      ${this.renderPanel()}
      ${this.toast ? html`<div class="toast" role="status">${this.toast}</div>` : nothing}
    `;
  }

  override updated(): void {
    const name = this.model?.name ?? '';
    const title = name ? `${name}${this.isDirty() ? ' •' : ''} — Shaftnet` : 'Shaftnet';
    if (document.title !== title) document.title = title;
  }

  private renderBar() {
    const d = this.doc;
    const dirty = this.isDirty();
    const link = d.id ? `/m/${encodeURIComponent(d.id)}` : '';
    return html`<header class="bar">
      <span class="brand">SHAFTNET</span>
      <span class="doc" data-doc-id=${d.id ?? ''} data-revision=${d.revision}>
        ${this.model?.name ?? ''}
        ${d.id
          ? html` — <a href=${link} title="Link to this model" @click=${this.onLinkClick}>library rev. ${d.viewing ?? d.revision}</a>${d.viewing ? ` (older; latest ${d.revision})` : ''}`
          : html` — <em>${d.origin === 'demo' ? 'demo, not saved' : 'not saved'}</em>`}
        ${dirty ? html`<span class="dirty"> • unsaved changes</span>` : nothing}
      </span>
      <button @click=${this.undo} ?disabled=${!this.canUndo} title="Undo (Ctrl+Z)">Undo</button>
      <button @click=${this.redo} ?disabled=${!this.canRedo} title="Redo (Ctrl+Shift+Z or Ctrl+Y)">Redo</button>
      <select aria-label="Units" @change=${this.onUnits}>
        ${UNIT_SYSTEMS.map((u) => html`<option value=${u} ?selected=${this.system === u}>${UNIT_SYSTEM_LABELS[u]}</option>`)}
      </select>
      <span class="sep"></span>
      <button @click=${this.openLibrary} data-action="library">Library</button>
      <button class="primary" @click=${() => this.openSave(false)} data-action="save">Save</button>
      <button @click=${() => this.openSave(true)} ?disabled=${!d.id} data-action="save-copy">Save as new</button>
      ${d.id ? html`<button @click=${this.copyLink} data-action="link">Copy link</button>` : nothing}
      <span class="sep"></span>
      <button @click=${this.newModel} data-action="new">New</button>
      <label class="btn" title="Open a model JSON file">Import<input type="file" accept=".json,application/json" @change=${this.onImport} /></label>
      <button @click=${this.exportJson} data-action="export">Export JSON</button>
      <button @click=${this.exportCsv} ?disabled=${!this.solution} data-action="csv">Stations CSV</button>
      <button @click=${() => window.print()} data-action="print">Print report</button>
    </header>`;
  }

  private renderReportHead(m: EditModel) {
    const d = this.doc;
    const len = (kind: 'length') => prettyUnit(displayUnit(kind, this.system));
    return html`<div class="print-only report-head card">
      <h1>Shaftnet report — ${m.name}</h1>
      <div>${d.id ? `Library model ${d.id}, revision ${d.viewing ?? d.revision}` : 'Model not saved in the library'}${this.isDirty() ? ' (with unsaved changes)' : ''}.
        Printed ${new Date().toLocaleString()}. Units: ${this.system === 'si' ? 'SI' : 'US customary'}.
        Results ${this.resultState === 'fresh' ? 'match this model' : 'are OUT OF DATE for this model'}.</div>
      ${m.notes ? html`<p>${m.notes}</p>` : nothing}
      <table>
        <thead><tr><th>Shaft</th><th>Name</th><th>Segments (length [${len('length')}] × section)</th><th>Supports</th><th>Point torques</th></tr></thead>
        <tbody>
          ${m.shafts.map(
            (s) => html`<tr><td>${s.id}</td><td>${s.name ?? ''}</td>
              <td>${s.segments.map((g) => `${String(g.length)} × ${g.section}${g.material ? ` (${g.material})` : ''}`).join(', ')}</td>
              <td>${(m.supports ?? []).filter((x) => x.shaft === s.id).map((x) => `${x.id} ${x.kind} at ${String(x.at)}`).join(', ')}</td>
              <td>${(m.torques ?? []).filter((x) => x.shaft === s.id).map((x) => `${x.id} ${String(x.torque ?? `${String(x.power)} at ${String(x.speed)}`)}`).join(', ')}</td></tr>`,
          )}
        </tbody>
      </table>
      <div>Materials: ${m.materials.map((x) => `${x.id} (${x.G !== undefined ? `G ${String(x.G)}` : `E ${String(x.E)}, ν ${String(x.nu)}`}${x.allowableShear !== undefined ? `, τallow ${String(x.allowableShear)}` : ''})`).join('; ')}.
        Sections: ${m.sections.map((x) => `${x.id} ${x.shape}`).join(', ')}.
        Meshes: ${(m.gearMeshes ?? []).map((x) => x.id).join(', ') || 'none'}. Couplings: ${(m.couplings ?? []).map((x) => x.id).join(', ') || 'none'}.</div>
    </div>`;
  }

  private renderProblems() {
    if (this.issues.length === 0) return nothing;
    const mech = this.issues.filter((i) => i.code === 'SN_MECHANISM');
    return html`<div class="problems" role="alert" data-problems>
      <h2>${this.resultState === 'invalid' ? 'The model cannot be solved yet' : 'Problems'}</h2>
      ${mech.map(
        (i) => html`<p class="mechanism" data-mechanism=${(i.shafts ?? []).join(',')}>
          ${(i.shafts ?? []).length > 1 ? 'Shafts' : 'Shaft'} ${(i.shafts ?? []).join(', ')} ${(i.shafts ?? []).length > 1 ? 'are' : 'is'} free to spin.
          <span style="font-weight:400">${i.message}</span>
        </p>`,
      )}
      <ul>
        ${this.issues
          .filter((i) => i.code !== 'SN_MECHANISM')
          .map(
            (i) => html`<li data-pointer=${i.pointer}>
              <a @click=${() => this.goTo(i.pointer)}>${describePointer(this.model, i.pointer)}</a>: ${i.message}
              ${i.connections?.length ? html` (connections ${i.connections.join(', ')})` : nothing}
            </li>`,
          )}
      </ul>
    </div>`;
  }

  private renderPanel() {
    switch (this.panel) {
      case 'library':
        return html`<div class="overlay" @click=${this.onOverlayClick}>
          <sn-library .currentId=${this.doc.id ?? ''} .currentRevision=${this.doc.viewing ?? this.doc.revision} .refresh=${this.libraryRefresh}
            @sn-open=${this.onOpen} @sn-open-demo=${this.onOpenDemo} @sn-close=${this.closePanel} @sn-api-error=${this.onLibraryError}></sn-library>
        </div>`;
      case 'save':
        return html`<div class="overlay" @click=${this.onOverlayClick}>
          <sn-save-dialog .asNew=${!this.doc.id || this.pendingSave?.asCopy === true} .busy=${this.saveBusy} .error=${this.saveError}
            .baseRevision=${this.doc.revision} @sn-save=${this.onSave} @sn-close=${this.closePanel}></sn-save-dialog>
        </div>`;
      case 'conflict':
        return html`<div class="overlay">
          <div class="conflict" role="alertdialog" aria-label="Save conflict">
            <h2>Someone else saved this model first</h2>
            <p>Your changes were made on revision ${this.doc.revision}; the library now holds revision ${this.conflictRevision || 'newer'}.
              Nothing was overwritten.</p>
            <button class="primary" data-action="save-as-copy" @click=${this.saveAsCopy}>Save mine as a new model</button>
            <button data-action="reload-latest" @click=${this.reloadLatest}>Open the latest (drop my changes)</button>
            <button @click=${this.closePanel}>Cancel</button>
          </div>
        </div>`;
      default:
        return nothing;
    }
  }

  // ——— boot and documents ———

  private async boot(): Promise<void> {
    try {
      const s = await api.session();
      if (s.tokenRequired && !s.signedIn) {
        this.needSignIn = true;
        return;
      }
    } catch {
      // No session route: an open server.
    }
    await this.route();
  }

  private async route(): Promise<void> {
    const match = /^\/m\/([^/]+)\/?$/.exec(location.pathname);
    if (match) {
      const rev = Number(new URLSearchParams(location.search).get('rev'));
      await this.openSaved(decodeURIComponent(match[1]), Number.isInteger(rev) && rev > 0 ? rev : undefined, false);
    } else {
      await this.loadDemo();
    }
  }

  private async loadDemo(id?: string): Promise<void> {
    this.loading = 'Loading the demo…';
    try {
      const { demos } = await api.demos();
      if (demos.length === 0) throw new Error('the server has no demo');
      const model = await api.demo(id ?? (demos.find((d) => d.id === PREFERRED_DEMO) ?? demos[0]).id);
      this.setDocument(model, { id: null, revision: 0, viewing: null, saved: model, origin: 'demo' });
    } catch (e) {
      if (this.handleAuth(e)) return;
      this.loading = `Could not load the demo: ${e instanceof Error ? e.message : String(e)}`;
    }
  }

  private async openSaved(id: string, revision: number | undefined, push: boolean): Promise<void> {
    this.loading = 'Opening…';
    try {
      const latest = await api.getModel(id);
      const shown = revision && revision !== latest.revision ? await api.getRevision(id, revision) : latest;
      const viewing = shown.revision !== latest.revision ? shown.revision : null;
      this.setDocument(shown.model, { id, revision: latest.revision, viewing, saved: shown.model, origin: 'library' });
      const url = `/m/${encodeURIComponent(id)}${viewing ? `?rev=${viewing}` : ''}`;
      if (push && location.pathname + location.search !== url) history.pushState(null, '', url);
      else if (!push) history.replaceState(null, '', url);
      if (viewing) this.say(`Showing revision ${viewing}; saving makes it the newest revision.`);
    } catch (e) {
      if (this.handleAuth(e)) return;
      this.loading = '';
      if (!this.model) await this.loadDemo();
      this.say(`Could not open ${id}: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  private setDocument(model: EditModel, doc: Doc): void {
    this.history.reset(model);
    this.doc = doc;
    this.loading = '';
    this.selected = '';
    this.solution = null;
    this.issues = [];
    this.changed(model, 0);
  }

  /** The model on screen changed (edit, undo, load): re-solve after a pause. */
  private changed(model: EditModel | null, delay = SOLVE_DELAY): void {
    this.model = model;
    this.canUndo = this.history.canUndo;
    this.canRedo = this.history.canRedo;
    this.version++;
    clearTimeout(this.solveTimer);
    this.solveAbort?.abort();
    if (!model) return;
    this.resultState = 'stale';
    this.solveTimer = setTimeout(() => void this.solve(), delay);
  }

  private async solve(): Promise<void> {
    const model = this.model;
    if (!model) return;
    const version = this.version;
    const abort = new AbortController();
    this.solveAbort = abort;
    this.resultState = 'solving';
    try {
      const solution = await api.solve(model, abort.signal);
      if (version !== this.version) return;
      this.solution = solution;
      this.issues = [];
      this.resultState = 'fresh';
      this.resultMessage = '';
    } catch (e) {
      if (isAbort(e) || version !== this.version) return;
      if (this.handleAuth(e)) return;
      if (e instanceof ApiError && (e.status === 400 || e.status === 422 || e.status === 413)) {
        this.issues = e.issues.length ? e.issues : [{ code: e.code as ModelIssue['code'], pointer: '', message: e.message }];
        this.resultState = 'invalid';
        this.resultMessage = e.message;
      } else {
        this.issues = [];
        this.resultState = 'failed';
        this.resultMessage = e instanceof Error ? e.message : String(e);
      }
    }
  }

  // ——— errors at fields ———

  private mechanismShafts(): string[] {
    return this.issues.filter((i) => i.code === 'SN_MECHANISM').flatMap((i) => i.shafts ?? []);
  }

  private flaggedRows(): string[] {
    const ids = this.mechanismShafts();
    return (this.model?.shafts ?? []).flatMap((s, i) => (ids.includes(s.id) ? [`/shafts/${i}`] : []));
  }

  private fieldErrors(): Record<string, string> {
    const out = issuesByPointer(this.issues.filter((i) => i.code !== 'SN_MECHANISM'));
    for (const p of this.flaggedRows()) out[p] = 'Free to spin: add a fixed or spring support on this shaft or on one it drives.';
    for (const i of this.issues) {
      for (const c of i.connections ?? []) {
        const g = (this.model?.gearMeshes ?? []).findIndex((x) => x.id === c);
        const k = (this.model?.couplings ?? []).findIndex((x) => x.id === c);
        const p = g >= 0 ? `/gearMeshes/${g}` : k >= 0 ? `/couplings/${k}` : '';
        if (p && !out[p]) out[p] = i.message;
      }
    }
    return out;
  }

  private goTo(pointer: string): void {
    this.selected = pointer;
    void this.updateComplete.then(() => {
      const el = deepQuery(this.renderRoot as ShadowRoot, `[data-pointer="${CSS.escape(pointer)}"]`);
      if (el) {
        el.scrollIntoView({ block: 'center' });
        const input = el.matches('input, select, textarea') ? el : el.querySelector<HTMLElement>('input, select');
        input?.focus();
      }
    });
  }

  // ——— editing ———

  private commit(next: EditModel): void {
    this.history.commit(next);
    this.changed(next);
  }

  private onEdit = (e: CustomEvent<EditDetail>): void => {
    const m = this.model;
    if (!m) return;
    const { pointer, value } = e.detail;
    if (!pointer.includes('/@') && sameJson(getAt(m, pointer), value)) return;
    this.commit(applyEdit(m, pointer, value));
  };

  private onRowAdd = (e: CustomEvent<RowDetail>): void => {
    const m = this.model;
    if (!m) return;
    const { pointer, index } = e.detail;
    const next = insertRow(m, pointer, rowFor(m, pointer), index);
    this.commit(next);
    this.selected = `${pointer}/${index}`;
  };

  private onRowRemove = (e: CustomEvent<RowDetail>): void => {
    const m = this.model;
    if (!m) return;
    const { pointer, index } = e.detail;
    const list = getAt(m, pointer) as unknown[] | undefined;
    if (pointer === '/shafts' && list && list.length <= 1) return this.say('A model needs at least one shaft.');
    if (/^\/shafts\/\d+\/segments$/.test(pointer) && list && list.length <= 1) return this.say('A shaft needs at least one segment.');
    if (/^\/sections\/\d+\/layers$/.test(pointer) && list && list.length <= 1) return this.say('A layered section needs at least one layer.');
    this.commit(removeRow(m, pointer, index));
    this.selected = '';
  };

  private onSelect = (e: CustomEvent<SelectDetail>): void => {
    this.selected = e.detail.pointer;
    const fromPicture = e.composedPath().some((n) => n instanceof HTMLElement && (n.localName === 'sn-schematic' || n.localName === 'sn-results'));
    if (fromPicture) {
      void this.updateComplete.then(async () => {
        const editor = this.renderRoot.querySelector<SnEditor>('sn-editor');
        await editor?.updateComplete;
        editor?.revealSelected();
      });
    }
  };

  private undo = (): void => {
    this.changed(this.history.undo());
  };

  private redo = (): void => {
    this.changed(this.history.redo());
  };

  private onKeyDown = (e: KeyboardEvent): void => {
    if (e.key === 'Escape' && (this.panel === 'library' || this.panel === 'save')) {
      this.panel = 'none';
      return;
    }
    if (!(e.ctrlKey || e.metaKey) || e.altKey || this.panel !== 'none') return;
    const key = e.key.toLowerCase();
    const isUndo = key === 'z' && !e.shiftKey;
    const isRedo = (key === 'z' && e.shiftKey) || key === 'y';
    if (!isUndo && !isRedo) return;
    e.preventDefault();
    // Commit what is being typed first, so undo steps back over it like any other edit.
    const active = deepActive();
    if (active instanceof HTMLInputElement || active instanceof HTMLTextAreaElement) {
      active.blur();
      if (isUndo) this.undo();
      else this.redo();
      void this.updateComplete.then(() => active.isConnected && active.focus());
      return;
    }
    if (isUndo) this.undo();
    else this.redo();
  };

  private onUnits = (e: Event): void => {
    this.system = (e.target as HTMLSelectElement).value === 'us' ? 'us' : 'si';
    localStorage.setItem('shaftnet.units', this.system);
  };

  // ——— library ———

  private isDirty(): boolean {
    return this.model !== null && this.doc.saved !== null && this.model !== this.doc.saved && !sameJson(this.model, this.doc.saved);
  }

  private confirmDiscard(): boolean {
    return !this.isDirty() || window.confirm('Drop the unsaved changes to this model?');
  }

  private openLibrary = (): void => {
    this.libraryRefresh++;
    this.panel = 'library';
  };

  private onOpen = (e: CustomEvent<OpenDetail>): void => {
    if (!this.confirmDiscard()) return;
    this.panel = 'none';
    void this.openSaved(e.detail.id, e.detail.revision, true);
  };

  private onOpenDemo = (e: CustomEvent<{ id: string }>): void => {
    if (!this.confirmDiscard()) return;
    this.panel = 'none';
    history.pushState(null, '', '/');
    void this.loadDemo(e.detail.id);
  };

  private onLibraryError = (e: CustomEvent<{ error: unknown }>): void => {
    this.handleAuth(e.detail.error);
  };

  private openSave(asCopy: boolean): void {
    this.pendingSave = asCopy ? { author: '', message: '', asCopy: true } : null;
    this.saveError = '';
    this.panel = 'save';
  }

  private onSave = async (e: CustomEvent<SaveDetail>): Promise<void> => {
    const m = this.model;
    if (!m) return;
    const asCopy = !this.doc.id || this.pendingSave?.asCopy === true;
    this.pendingSave = { ...e.detail, asCopy };
    this.saveBusy = true;
    this.saveError = '';
    try {
      if (asCopy) {
        const model = this.doc.id ? { ...m, name: `${m.name} (copy)` } : m;
        const res = await api.create(model, e.detail.author, e.detail.message);
        this.afterSave(res.id, res.revision, model);
      } else {
        const res = await api.update(this.doc.id as string, m, this.doc.revision, e.detail.author, e.detail.message);
        this.afterSave(res.id, res.revision, m);
      }
    } catch (err) {
      if (this.handleAuth(err)) return;
      if (err instanceof ApiError && err.status === 409) {
        this.conflictRevision = err.currentRevision ?? 0;
        this.panel = 'conflict';
      } else {
        this.saveError = err instanceof Error ? err.message : String(err);
        if (err instanceof ApiError && err.issues.length) this.issues = err.issues;
      }
    } finally {
      this.saveBusy = false;
    }
  };

  private afterSave(id: string, revision: number, model: EditModel): void {
    if (model !== this.model) {
      this.history.commit(model);
      this.changed(model);
    }
    this.doc = { id, revision, viewing: null, saved: model, origin: 'library' };
    this.panel = 'none';
    this.pendingSave = null;
    const url = `/m/${encodeURIComponent(id)}`;
    if (location.pathname + location.search !== url) history.pushState(null, '', url);
    this.say(`Saved as revision ${revision}.`);
  }

  private saveAsCopy = async (): Promise<void> => {
    const m = this.model;
    const detail = this.pendingSave;
    if (!m || !detail) return;
    try {
      const model = { ...m, name: `${m.name} (copy)` };
      const res = await api.create(model, detail.author, detail.message);
      this.afterSave(res.id, res.revision, model);
    } catch (err) {
      this.say(`Could not save a copy: ${err instanceof Error ? err.message : String(err)}`);
    }
  };

  private reloadLatest = (): void => {
    const id = this.doc.id;
    this.panel = 'none';
    if (id) void this.openSaved(id, undefined, true);
  };

  private closePanel = (): void => {
    this.panel = 'none';
  };

  private onOverlayClick = (e: Event): void => {
    if (e.target === e.currentTarget) this.panel = 'none';
  };

  private copyLink = async (): Promise<void> => {
    if (!this.doc.id) return;
    const url = `${location.origin}/m/${encodeURIComponent(this.doc.id)}`;
    try {
      await navigator.clipboard.writeText(url);
      this.say(`Link copied: ${url}`);
    } catch {
      this.say(`Link: ${url}`);
    }
  };

  private onLinkClick = (e: Event): void => {
    e.preventDefault();
  };

  private onPopState = (): void => {
    void this.route();
  };

  private onBeforeUnload = (e: BeforeUnloadEvent): void => {
    if (this.isDirty() && this.doc.id) e.preventDefault();
  };

  private onSignedIn = (): void => {
    this.needSignIn = false;
    void this.route();
  };

  /** Shows the sign-in box for a 401; true when it did. */
  private handleAuth(e: unknown): boolean {
    if (e instanceof ApiError && e.status === 401) {
      this.needSignIn = true;
      this.panel = 'none';
      return true;
    }
    return false;
  }

  // ——— files ———

  private newModel = (): void => {
    if (!this.confirmDiscard()) return;
    const model: EditModel = {
      format: 'shaftnet/1',
      name: 'New shaft system',
      materials: [{ id: 'steel', name: 'Steel', G: '79.3 GPa', allowableShear: '55 MPa' }],
      sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
      shafts: [{ id: 'shaft1', segments: [{ length: '500 mm', section: 'd40', material: 'steel' }] }],
      supports: [{ id: 'A', shaft: 'shaft1', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T1', shaft: 'shaft1', at: '500 mm', torque: '100 N*m' }],
    };
    this.setDocument(model, { id: null, revision: 0, viewing: null, saved: null, origin: 'new' });
    history.pushState(null, '', '/');
  };

  private onImport = async (e: Event): Promise<void> => {
    const input = e.target as HTMLInputElement;
    const file = input.files?.[0];
    input.value = '';
    if (!file) return;
    try {
      const data = JSON.parse(await file.text()) as unknown;
      const model = (data && typeof data === 'object' && 'model' in data && !('format' in data) ? (data as { model: unknown }).model : data) as EditModel;
      if (!model || typeof model !== 'object' || !Array.isArray(model.shafts)) throw new Error('not a Shaftnet model (no "shafts")');
      if (!this.confirmDiscard()) return;
      this.setDocument(model, { id: null, revision: 0, viewing: null, saved: null, origin: 'import' });
      history.pushState(null, '', '/');
      this.say(`Imported ${file.name}. Save it to share it.`);
    } catch (err) {
      this.say(`Could not import ${file.name}: ${err instanceof Error ? err.message : String(err)}`);
    }
  };

  private exportJson = (): void => {
    if (this.model) download(JSON.stringify(this.model, null, 2) + '\n', fileName(this.model.name, 'json'), 'application/json');
  };

  private exportCsv = (): void => {
    if (this.solution && this.model) download(stationCsv(this.solution, this.system), fileName(this.model.name + '-stations', 'csv'), 'text/csv');
  };

  private say(text: string): void {
    this.toast = text;
    clearTimeout(this.toastTimer);
    this.toastTimer = setTimeout(() => (this.toast = ''), 4000);
  }
}

customElements.define('sn-app', SnApp);

declare global {
  interface HTMLElementTagNameMap {
    'sn-app': SnApp;
  }
}
