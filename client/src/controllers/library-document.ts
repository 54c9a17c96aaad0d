/**
 * The document on screen and the team library behind it: which model is open
 * (a demo, an import, a saved model at some revision), loading it from the
 * address bar, saving a new revision on top of the one it was opened at, and
 * the conflict when someone else saved first (nothing is overwritten).
 */
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import { ApiError, api } from '../api.js';
import { type EditModel, sameJson } from '../model-edits.js';

/** The demo a new user lands on, when the server has it. */
const PREFERRED_DEMO = 'mixer-drive';

/** Where the model on screen comes from. */
export interface Doc {
  /** Library id, or null for a demo, an import or a model not saved yet. */
  readonly id: string | null;
  /** Latest revision known in the library: the base of the next save. */
  readonly revision: number;
  /** The revision shown when it is an older one, else null. */
  readonly viewing: number | null;
  /** The model as last loaded or saved, to tell unsaved changes. */
  readonly saved: EditModel | null;
  /** Where it came from: "demo", "import", "library", "new". */
  readonly origin: 'demo' | 'import' | 'library' | 'new';
}

/** What the document needs from the element that shows it. */
export interface DocumentView {
  /** The model on screen. */
  current(): EditModel | null;
  /** Shows a loaded model with a fresh undo history, and solves it. */
  show(model: EditModel): void;
  /** A save changed the model (a copy gets " (copy)" in its name): make it the current edit. */
  replace(model: EditModel): void;
  /** A short message to the user. */
  say(text: string): void;
  /** Asks for the team token on a 401; true when it did. */
  auth(e: unknown): boolean;
}

/** How a save ended. */
export type SaveOutcome = 'saved' | 'conflict' | 'error' | 'signin';

export class LibraryDocumentController implements ReactiveController {
  doc: Doc = { id: null, revision: 0, viewing: null, saved: null, origin: 'new' };
  /** Text shown instead of the editor while a document loads; '' when loaded. */
  loading = 'Loading…';
  saveBusy = false;
  saveError = '';
  /** The library's revision when a save met a newer one (409). */
  conflictRevision = 0;

  private readonly host: ReactiveControllerHost;
  private readonly view: DocumentView;
  /** Author and message of the save in progress, kept for "save mine as a new model". */
  private lastSave: { author: string; message: string } | null = null;

  constructor(host: ReactiveControllerHost, view: DocumentView) {
    this.host = host;
    this.view = view;
    host.addController(this);
  }

  hostConnected(): void {
    window.addEventListener('popstate', this.onPopState);
  }

  hostDisconnected(): void {
    window.removeEventListener('popstate', this.onPopState);
  }

  /** Back and forward in the browser open what the address names. */
  private onPopState = (): void => {
    void this.route();
  };

  /** True when the model on screen differs from the one loaded or saved. */
  isDirty(model: EditModel | null): boolean {
    const saved = this.doc.saved;
    return model !== null && saved !== null && model !== saved && !sameJson(model, saved);
  }

  /** Opens what the address names: `/m/<id>[?rev=N]`, else the demo. */
  async route(): Promise<void> {
    const match = /^\/m\/([^/]+)\/?$/.exec(location.pathname);
    if (match) {
      const rev = Number(new URLSearchParams(location.search).get('rev'));
      await this.openSaved(decodeURIComponent(match[1]), Number.isInteger(rev) && rev > 0 ? rev : undefined, false);
    } else {
      await this.loadDemo();
    }
  }

  /** Loads one of the server's demo models (the preferred one by default). */
  async loadDemo(id?: string): Promise<void> {
    this.setLoading('Loading the demo…');
    try {
      const { demos } = await api.demos();
      if (demos.length === 0) throw new Error('the server has no demo');
      const model = await api.demo(id ?? (demos.find((d) => d.id === PREFERRED_DEMO) ?? demos[0]).id);
      this.open(model, { id: null, revision: 0, viewing: null, saved: model, origin: 'demo' });
    } catch (e) {
      if (this.view.auth(e)) return;
      this.setLoading(`Could not load the demo: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  /** Opens a saved model at its latest revision or at `revision`; `push` adds a history entry. */
  async openSaved(id: string, revision: number | undefined, push: boolean): Promise<void> {
    this.setLoading('Opening…');
    try {
      const latest = await api.getModel(id);
      const shown = revision && revision !== latest.revision ? await api.getRevision(id, revision) : latest;
      const viewing = shown.revision !== latest.revision ? shown.revision : null;
      this.open(shown.model, { id, revision: latest.revision, viewing, saved: shown.model, origin: 'library' });
      const url = `/m/${encodeURIComponent(id)}${viewing ? `?rev=${viewing}` : ''}`;
      if (push && location.pathname + location.search !== url) history.pushState(null, '', url);
      else if (!push) history.replaceState(null, '', url);
      if (viewing) this.view.say(`Showing revision ${viewing}; saving makes it the newest revision.`);
    } catch (e) {
      if (this.view.auth(e)) return;
      this.setLoading('');
      if (!this.view.current()) await this.loadDemo();
      this.view.say(`Could not open ${id}: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  /** A model that is not in the library (new, imported): shown at the address "/". */
  openUnsaved(model: EditModel, origin: 'new' | 'import'): void {
    this.open(model, { id: null, revision: 0, viewing: null, saved: null, origin });
    history.pushState(null, '', '/');
  }

  /**
   * Saves the model: a new revision on top of the one opened, or a new library
   * entry (`asCopy`, or a model not in the library yet). A 409 keeps the user's
   * work and reports 'conflict' with `conflictRevision` set.
   */
  async save(author: string, message: string, asCopy: boolean): Promise<SaveOutcome> {
    const m = this.view.current();
    if (!m) return 'error';
    const copy = asCopy || !this.doc.id;
    this.lastSave = { author, message };
    this.saveBusy = true;
    this.saveError = '';
    this.host.requestUpdate();
    try {
      if (copy) {
        const model = this.doc.id ? { ...m, name: `${m.name} (copy)` } : m;
        const res = await api.create(model, author, message);
        this.saved(res.id, res.revision, model);
      } else {
        const res = await api.update(this.doc.id as string, m, this.doc.revision, author, message);
        this.saved(res.id, res.revision, m);
      }
      return 'saved';
    } catch (err) {
      if (this.view.auth(err)) return 'signin';
      if (err instanceof ApiError && err.status === 409) {
        this.conflictRevision = err.currentRevision ?? 0;
        return 'conflict';
      }
      this.saveError = err instanceof Error ? err.message : String(err);
      return 'error';
    } finally {
      this.saveBusy = false;
      this.host.requestUpdate();
    }
  }

  /** After a conflict: the user's model as a new library entry, with the same author and message. */
  async saveMineAsNew(): Promise<SaveOutcome> {
    const detail = this.lastSave ?? { author: '', message: '' };
    const outcome = await this.save(detail.author, detail.message, true);
    if (outcome === 'error') this.view.say(`Could not save a copy: ${this.saveError}`);
    return outcome;
  }

  /** After a conflict: drops the user's changes and opens the library's latest revision. */
  async reloadLatest(): Promise<void> {
    if (this.doc.id) await this.openSaved(this.doc.id, undefined, true);
  }

  private saved(id: string, revision: number, model: EditModel): void {
    if (model !== this.view.current()) this.view.replace(model);
    this.doc = { id, revision, viewing: null, saved: model, origin: 'library' };
    this.lastSave = null;
    const url = `/m/${encodeURIComponent(id)}`;
    if (location.pathname + location.search !== url) history.pushState(null, '', url);
    this.view.say(`Saved as revision ${revision}.`);
  }

  private open(model: EditModel, doc: Doc): void {
    this.doc = doc;
    this.loading = '';
    this.view.show(model);
    this.host.requestUpdate();
  }

  private setLoading(text: string): void {
    this.loading = text;
    this.host.requestUpdate();
  }
}
