import { LitElement, css, html, nothing } from 'lit';
import type { ModelIssue } from '../../shared-types/errors.js';
import { type EditModel, History, applyEdit, blankModel, getAt, insertRow, modelFromFile, removeRow, rowFor, sameJson, sizingNote } from './model-edits.js';
import { ApiError, api } from './api.js';
import { download, fileName, stationCsv } from './export.js';
import type { UnitSystem } from './units.js';
import type { DraftDetail, EditDetail, RowDetail, SelectDetail } from './sn-table.js';
import type { OpenDetail } from './sn-library.js';
import type { SaveDetail } from './sn-save-dialog.js';
import type { SnEditor } from './sn-editor.js';
import type { Command } from './sn-top-bar.js';
import type { GoDetail } from './sn-problems.js';
import { SolveController, TYPING_DELAY } from './controllers/solve-controller.js';
import { LibraryDocumentController } from './controllers/library-document.js';
import { ShortcutsController } from './controllers/shortcuts.js';
import { type IssueMarks, bannerReason, issueMarks } from './issue-text.js';
import { modelCombinations } from './cases-results.js';
import './sn-top-bar.js';
import './sn-editor.js';
import './sn-schematic.js';
import './sn-results.js';
import './sn-progress.js';
import './sn-problems.js';
import './sn-report-head.js';
import './sn-library.js';
import './sn-signin.js';
import './sn-save-dialog.js';
import './sn-conflict-dialog.js';
import './sn-cautions.js';
import { type Identity, hasReviews, readIdentity } from './review-types.js';
import { ReviewDocumentController } from './review-document.js';
import { ReviewLiveController } from './review-live.js';
import type { ReviewDetail } from './sn-review-panel.js';
import './sn-review-panel.js';
import './sn-live-notice.js';
import './sheet-action.js';
import './sn-compare.js';

type Panel = 'none' | 'library' | 'save' | 'save-copy' | 'conflict';

/**
 * The application: holds the model on screen and its undo history, and
 * mediates between the top bar, the editor, the schematic and the results. The
 * solve lives in `SolveController`, the library document (open, save, conflict)
 * in `LibraryDocumentController`, the keys in `ShortcutsController`.
 */
export class SnApp extends LitElement {
  static override styles = css`
    :host { display: block; min-height: 100vh; }
    main { display: grid; grid-template-columns: minmax(0, 46fr) minmax(0, 54fr); gap: 14px; padding: 10px 14px; align-items: start; }
    .col { min-width: 0; }
    .editor-col { align-self: stretch; }
    .card { background: #fff; border: 1px solid #dcd7cd; border-radius: 6px; padding: 8px 12px; margin-bottom: 12px; min-width: 0; }
    .card h2 { font-size: 14px; margin: 2px 0 6px; color: #1d3a4a; }
    .editor-card { max-height: calc(100vh - 70px); overflow-y: auto; overflow-x: hidden; position: sticky; top: 52px; }
    .overlay { position: fixed; inset: 0; background: rgba(20, 30, 36, 0.35); z-index: 10; display: flex; align-items: flex-start; justify-content: center; padding-top: 8vh; }
    .overlay > * { width: min(860px, 94vw); }
    .overlay sn-save-dialog { width: min(440px, 94vw); }
    .overlay sn-conflict-dialog { width: min(820px, 94vw); }
    .toast { position: fixed; bottom: 14px; left: 50%; transform: translateX(-50%); background: #1d3a4a; color: #fff; padding: 6px 14px; border-radius: 4px; z-index: 20; font-size: 13px; }
    .loading { padding: 40px; text-align: center; color: #6b665e; }
    @media (max-width: 1000px) { main { grid-template-columns: 1fr; } .editor-card { position: static; max-height: none; } }
    @media print {
      sn-top-bar, .editor-col, .overlay, .toast, .review { display: none !important; }
      main { display: block; padding: 0; }
      .card { border: none; padding: 0; margin: 0 0 10px; }
    }
  `;

  static override properties = {
    model: { state: true },
    system: { state: true },
    selected: { state: true },
    panel: { state: true },
    toast: { state: true },
    needSignIn: { state: true },
    notes: { state: true },
    identity: { state: true },
  };

  declare private model: EditModel | null;
  declare private system: UnitSystem;
  declare private selected: string;
  declare private panel: Panel;
  declare private toast: string;
  declare private needSignIn: boolean;
  /** Notes under editor rows (what a gear mesh's new sizing did), by row pointer. */
  declare private notes: Readonly<Record<string, string>>;
  /** Who is signed in with a personal key, or null. */
  declare private identity: Identity | null;
  /** The server records reviews (it has the live stream). */
  private reviewsOn = false;

  private readonly history = new History<EditModel | null>(null);
  private toastTimer: ReturnType<typeof setTimeout> | undefined;

  private readonly solver = new SolveController(this, (e) => this.handleAuth(e));
  private readonly library = new LibraryDocumentController(this, {
    current: () => this.model,
    show: (model) => this.show(model),
    replace: (model) => this.commit(model),
    say: (text) => this.say(text),
    auth: (e) => this.handleAuth(e),
  });
  private readonly keys = new ShortcutsController(this, {
    undo: () => this.undo(),
    redo: () => this.redo(),
    panelOpen: () => this.panel !== 'none',
    closePanel: () => this.closePanel(),
  });
  private readonly live = new ReviewLiveController(this, () => (this.needSignIn || !this.reviewsOn ? null : this.library.doc.id));
  private readonly reviews = new ReviewDocumentController(this, {
    subject: () => ({ id: this.library.doc.id, revision: this.library.doc.viewing ?? this.library.doc.revision, tick: this.live.tick }),
    auth: (e) => this.handleAuth(e),
    say: (text) => this.say(text),
  });

  constructor() {
    super();
    this.model = null;
    this.system = localStorage.getItem('shaftnet.units')?.toLowerCase() === 'us' ? 'us' : 'si';
    this.selected = '';
    this.panel = 'none';
    this.toast = '';
    this.needSignIn = false;
    this.notes = {};
    this.identity = null;
  }

  override connectedCallback(): void {
    super.connectedCallback();
    window.addEventListener('beforeunload', this.onBeforeUnload);
    void this.boot();
  }

  override disconnectedCallback(): void {
    window.removeEventListener('beforeunload', this.onBeforeUnload);
    super.disconnectedCallback();
  }

  override render() {
    if (this.needSignIn) return html`<sn-signin @sn-signed-in=${this.onSignedIn}></sn-signin>`;
    const m = this.model;
    const doc = this.library.doc;
    const dirty = this.library.isDirty(m);
    const state = this.solver.state;
    const issues = this.solver.issues;
    const marks = this.marks(issues);
    return html`
      <sn-top-bar .modelName=${m?.name ?? ''} .doc=${doc} ?dirty=${dirty} ?canUndo=${this.history.canUndo} ?canRedo=${this.history.canRedo}
        .system=${this.system} ?hasSolution=${this.solver.solution !== null} .identity=${this.identity}
        @sn-command=${this.onCommand} @sn-units=${this.onUnits} @sn-import=${this.onImport}></sn-top-bar>
      ${this.library.loading || !m
        ? html`<div class="loading">${this.library.loading || 'No model.'}</div>`
        : html`<main @sn-edit=${this.onEdit} @sn-draft=${this.onDraft} @sn-row-add=${this.onRowAdd} @sn-row-remove=${this.onRowRemove} @sn-select=${this.onSelect} @sn-combination=${this.onCombination}>
            <div class="col editor-col">
              <div class="card editor-card">
                <h2>Model</h2>
                <sn-editor .model=${m} .system=${this.system} .errors=${marks.messages} .selected=${this.selected}
                  .flagged=${marks.rows} .notes=${this.notes} .solution=${this.solver.solution}></sn-editor>
              </div>
            </div>
            <div class="col">
              <sn-report-head .model=${m} .doc=${doc} ?dirty=${dirty} .system=${this.system} ?fresh=${state === 'fresh'} .review=${this.reviews.review}></sn-report-head>
              <sn-review-panel .modelId=${doc.id ?? ''} .review=${this.reviews.review} .author=${this.reviews.author} .revision=${doc.viewing ?? doc.revision}
                .latest=${Math.max(doc.revision, this.live.revisionEvent?.revision ?? 0)} .identity=${this.identity} ?busy=${this.reviews.busy}
                .error=${this.reviews.error} ?dirty=${dirty} @sn-review=${(e: CustomEvent<ReviewDetail>) => void this.reviews.submit(e.detail.state, e.detail.note)}
                @sn-open=${this.onOpen}></sn-review-panel>
              <sn-problems .model=${m} .issues=${issues} ?invalid=${state === 'invalid'} @sn-go=${this.onGo}></sn-problems>
              <div class="card">
                <h2>Schematic</h2>
                <sn-schematic .model=${m} .system=${this.system} .selected=${this.selected} .flaggedShafts=${marks.shafts}></sn-schematic>
              </div>
              <div class="card">
                <h2>Results</h2>
                <sn-progress .progress=${this.solver.progress} @sn-cancel=${() => this.solver.cancel()}></sn-progress>
                <sn-results .solution=${this.solver.solution} .model=${m} .system=${this.system} .state=${state}
                  .message=${bannerReason(m, issues, this.solver.message)} .selected=${this.selected}></sn-results>
              </div>
              <div class="card review">
                <h2>Review</h2>
                <sn-sheet-action .modelId=${doc.id ?? ''} .revision=${doc.viewing ?? doc.revision} ?dirty=${dirty} .model=${m}></sn-sheet-action>
                <sn-compare .modelId=${doc.id ?? ''} .latest=${doc.revision} .system=${this.system}></sn-compare>
              </div>
              <sn-cautions></sn-cautions>
            </div>
          </main>`}
      ${this.renderPanel()}
      ${this.toast ? html`<div class="toast" role="status">${this.toast}</div>` : nothing}
      <sn-live-notice .modelId=${doc.id ?? ''} .revisionEvent=${this.live.revisionEvent} .reviewEvent=${this.live.reviewEvent} .latest=${doc.revision}
        ?saving=${this.library.saveBusy} .identity=${this.identity} @sn-open=${this.onOpen}></sn-live-notice>
    `;
  }

  override updated(): void {
    const name = this.model?.name ?? '';
    const title = name ? `${name}${this.library.isDirty(this.model) ? ' •' : ''} — Shaftnet` : 'Shaftnet';
    if (document.title !== title) document.title = title;
  }

  private renderPanel() {
    const doc = this.library.doc;
    switch (this.panel) {
      case 'library':
        return html`<div class="overlay" @click=${this.onOverlayClick}>
          <sn-library .currentId=${doc.id ?? ''} .currentRevision=${doc.viewing ?? doc.revision}
            @sn-open=${this.onOpen} @sn-open-demo=${this.onOpenDemo} @sn-close=${this.closePanel} @sn-api-error=${this.onLibraryError}></sn-library>
        </div>`;
      case 'save':
      case 'save-copy':
        return html`<div class="overlay" @click=${this.onOverlayClick}>
          <sn-save-dialog .asNew=${!doc.id || this.panel === 'save-copy'} .busy=${this.library.saveBusy} .error=${this.library.saveError}
            .baseRevision=${doc.revision} .signedAs=${this.identity?.name ?? ''} @sn-save=${this.onSave} @sn-close=${this.closePanel}></sn-save-dialog>
        </div>`;
      case 'conflict':
        return html`<div class="overlay">
          <sn-conflict-dialog .baseRevision=${doc.revision} .currentRevision=${this.library.conflictRevision} .modelId=${doc.id ?? ''} .mine=${this.model} .system=${this.system}
            @sn-save-mine=${this.onSaveMine} @sn-reload-latest=${this.onReloadLatest} @sn-close=${this.closePanel}></sn-conflict-dialog>
        </div>`;
      default:
        return nothing;
    }
  }

  // ——— the model on screen ———

  private async boot(): Promise<void> {
    try {
      const s = await api.session();
      this.identity = readIdentity(s);
      this.reviewsOn = hasReviews(s);
      if (s.tokenRequired && !s.signedIn) {
        this.needSignIn = true;
        return;
      }
    } catch {
      // No session route: an open server.
    }
    await this.library.route();
  }

  /** A document was loaded: fresh history, nothing selected, solved at once. */
  private show(model: EditModel): void {
    this.history.reset(model);
    this.selected = '';
    this.notes = {};
    this.solver.clear();
    this.changed(model);
  }

  /** The model on screen changed by a committed edit, undo or load: solved at once. */
  private changed(model: EditModel | null): void {
    this.model = model;
    this.keepCombination(model);
    if (model) this.solver.solve(model);
    else this.solver.clear();
  }

  private commit(next: EditModel): void {
    this.history.commit(next);
    this.changed(next);
  }

  private undo(): void {
    this.changed(this.history.undo());
  }

  private redo(): void {
    this.changed(this.history.redo());
  }

  private marksCache: { model: EditModel | null; issues: readonly ModelIssue[]; marks: IssueMarks } | null = null;

  /** The issues' marks, the same object while model and issues stay (so nothing re-renders for nothing). */
  private marks(issues: readonly ModelIssue[]): IssueMarks {
    const c = this.marksCache;
    if (c && c.model === this.model && c.issues === issues) return c.marks;
    const marks = issueMarks(this.model, issues);
    this.marksCache = { model: this.model, issues, marks };
    return marks;
  }

  // ——— events from the editor, schematic and results ———

  private onEdit = (e: CustomEvent<EditDetail>): void => {
    const m = this.model;
    if (!m) return;
    const { pointer, value } = e.detail;
    if (!pointer.includes('/@') && sameJson(getAt(m, pointer), value)) {
      // Nothing changed, but a draft typed and undone may have been solved: solve the model as it is.
      if (this.solver.state !== 'fresh') this.solver.solve(m);
      return;
    }
    const next = applyEdit(m, pointer, value);
    const sizing = /^\/gearMeshes\/(\d+)\/@sizing$/.exec(pointer);
    if (sizing) this.notes = { ...this.notes, [`/gearMeshes/${sizing[1]}`]: sizingNote(m, next, Number(sizing[1])) };
    this.commit(next);
  };

  /** Typing: solve what the field holds so far after a pause; the model itself changes on commit. */
  private onDraft = (e: CustomEvent<DraftDetail>): void => {
    const m = this.model;
    if (!m) return;
    const { pointer, value } = e.detail;
    // Typed back to what the model holds: solve the model itself (an earlier draft may have been solved).
    this.keepCombination(m);
    this.solver.solve(sameJson(getAt(m, pointer), value) ? m : applyEdit(m, pointer, value), TYPING_DELAY);
  };

  /** The combination picked for the results: solved again with it shown. */
  private onCombination = (e: CustomEvent<{ id: string }>): void => {
    const m = this.model;
    if (!m) return;
    this.solver.combination = e.detail.id || undefined;
    this.keepCombination(m);
    this.solver.solve(m);
  };

  /** The picked combination stays only while the model still has it (else the first is shown). */
  private keepCombination(model: EditModel | null): void {
    const id = this.solver.combination;
    if (id !== undefined && !modelCombinations(model).some((c) => c.id === id)) this.solver.combination = undefined;
  }

  private onRowAdd = (e: CustomEvent<RowDetail>): void => {
    const m = this.model;
    if (!m) return;
    const { pointer, index } = e.detail;
    this.commit(insertRow(m, pointer, rowFor(m, pointer), index));
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

  /** A problem's link: select, show and focus the field it names. */
  private onGo = async (e: CustomEvent<GoDetail>): Promise<void> => {
    this.selected = e.detail.pointer;
    await this.updateComplete;
    const editor = this.renderRoot.querySelector<SnEditor>('sn-editor');
    if (!editor) return;
    await editor.updateComplete;
    await Promise.all([...editor.renderRoot.querySelectorAll('sn-table')].map((t) => t.updateComplete));
    if (!editor.focusPointer(e.detail.pointer)) this.say('That field is not in the editor.');
  };

  // ——— the top bar ———

  private onCommand = (e: CustomEvent<{ command: Command }>): void => {
    switch (e.detail.command) {
      case 'undo':
        return this.undo();
      case 'redo':
        return this.redo();
      case 'library':
        this.panel = 'library';
        return;
      case 'save':
        this.panel = 'save';
        return;
      case 'save-copy':
        this.panel = 'save-copy';
        return;
      case 'link':
        void this.copyLink();
        return;
      case 'new':
        return this.newModel();
      case 'export':
        if (this.model) download(JSON.stringify(this.model, null, 2) + '\n', fileName(this.model.name, 'json'), 'application/json');
        return;
      case 'csv':
        if (this.solver.solution && this.model) download(stationCsv(this.solver.solution, this.system), fileName(this.model.name + '-stations', 'csv'), 'text/csv');
        return;
      case 'print':
        window.print();
        return;
      case 'sign-out':
        void this.signOut();
        return;
    }
  };

  private onUnits = (e: CustomEvent<{ system: UnitSystem }>): void => {
    this.system = e.detail.system;
    localStorage.setItem('shaftnet.units', this.system);
  };

  private onImport = async (e: CustomEvent<{ file: File }>): Promise<void> => {
    const file = e.detail.file;
    try {
      const model = modelFromFile(await file.text());
      if (!this.confirmDiscard()) return;
      this.library.openUnsaved(model, 'import');
      this.say(`Imported ${file.name}. Save it to share it.`);
    } catch (err) {
      this.say(`Could not import ${file.name}: ${err instanceof Error ? err.message : String(err)}`);
    }
  };

  private newModel(): void {
    if (this.confirmDiscard()) this.library.openUnsaved(blankModel(), 'new');
  }

  private async copyLink(): Promise<void> {
    const id = this.library.doc.id;
    if (!id) return;
    const url = `${location.origin}/m/${encodeURIComponent(id)}`;
    try {
      await navigator.clipboard.writeText(url);
      this.say(`Link copied: ${url}`);
    } catch {
      this.say(`Link: ${url}`);
    }
  }

  // ——— library and panels ———

  private confirmDiscard(): boolean {
    return !this.library.isDirty(this.model) || window.confirm('Drop the unsaved changes to this model?');
  }

  private onOpen = (e: CustomEvent<OpenDetail>): void => {
    if (!this.confirmDiscard()) return;
    this.panel = 'none';
    void this.library.openSaved(e.detail.id, e.detail.revision, true);
  };

  private onOpenDemo = (e: CustomEvent<{ id: string }>): void => {
    if (!this.confirmDiscard()) return;
    this.panel = 'none';
    history.pushState(null, '', '/');
    void this.library.loadDemo(e.detail.id);
  };

  private onLibraryError = (e: CustomEvent<{ error: unknown }>): void => {
    this.handleAuth(e.detail.error);
  };

  private onSave = async (e: CustomEvent<SaveDetail>): Promise<void> => {
    const outcome = await this.library.save(e.detail.author, e.detail.message, this.panel === 'save-copy');
    if (outcome === 'saved') this.panel = 'none';
    else if (outcome === 'conflict') this.panel = 'conflict';
  };

  private onSaveMine = async (): Promise<void> => {
    const outcome = await this.library.saveMineAsNew();
    if (outcome !== 'signin') this.closePanel();
  };

  private onReloadLatest = (): void => {
    this.panel = 'none';
    void this.library.reloadLatest();
  };

  private closePanel = (): void => {
    const was = this.panel;
    this.panel = 'none';
    // Focus goes back to where the panel was opened from.
    if (was !== 'none') {
      const action = was === 'library' ? 'library' : was === 'save-copy' ? 'save-copy' : 'save';
      void this.updateComplete.then(() => {
        this.renderRoot.querySelector('sn-top-bar')?.renderRoot.querySelector<HTMLElement>(`button[data-action="${action}"]`)?.focus();
      });
    }
  };

  private onOverlayClick = (e: Event): void => {
    if (e.target === e.currentTarget) this.closePanel();
  };

  private onBeforeUnload = (e: BeforeUnloadEvent): void => {
    if (this.library.isDirty(this.model) && this.library.doc.id) e.preventDefault();
  };

  private onSignedIn = (): void => {
    this.needSignIn = false;
    void api.session().then((s) => {
      this.reviewsOn = hasReviews(s);
      this.identity = readIdentity(s);
    }, () => undefined);
    void this.library.route();
  };

  /** Ends this browser's session; the sign-in box follows (unsaved changes are asked about first). */
  private async signOut(): Promise<void> {
    if (!this.confirmDiscard()) return;
    try {
      await api.signOut();
    } catch {
      // Signed out or not, the sign-in box is shown; the next request asks again.
    }
    this.identity = null;
    this.needSignIn = true;
    this.panel = 'none';
  }

  /** Shows the sign-in box for a 401; true when it did. */
  private handleAuth(e: unknown): boolean {
    if (e instanceof ApiError && e.status === 401) {
      this.needSignIn = true;
      this.panel = 'none';
      return true;
    }
    return false;
  }

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
