import { LitElement, css, html, nothing } from 'lit';
import type { Doc } from './controllers/library-document.js';
import { type UnitSystem, UNIT_SYSTEMS, UNIT_SYSTEM_LABELS } from './units.js';
import type { Identity } from './review-types.js';

/** The commands of the top bar, as `sn-command` details. */
export type Command = 'undo' | 'redo' | 'library' | 'save' | 'save-copy' | 'link' | 'new' | 'export' | 'csv' | 'print' | 'sign-out';

/**
 * The top bar: what is open (name, library revision, an older revision, unsaved
 * changes) and the commands. One line at 1366 px and wider: the name gives way
 * (ellipsis), the revision state never does.
 *
 * @fires sn-command - {command}: a button was pressed
 * @fires sn-units - {system}: the unit system was changed
 * @fires sn-import - {file}: a model file was chosen
 */
export class SnTopBar extends LitElement {
  static override styles = css`
    :host { display: block; position: sticky; top: 0; z-index: 5; }
    header { display: flex; flex-wrap: nowrap; align-items: center; gap: 6px; padding: 6px 12px; background: #1d3a4a; color: #eef3f5; white-space: nowrap; }
    .brand { font-weight: 700; letter-spacing: 0.04em; color: #e8b04b; margin-right: 4px; flex: none; }
    .doc { flex: 1 1 auto; min-width: 0; display: flex; align-items: center; gap: 6px; font-size: 13px; }
    .name { flex: 0 1 auto; min-width: 2em; overflow: hidden; text-overflow: ellipsis; }
    .state { flex: none; display: flex; gap: 6px; align-items: center; }
    .state a { color: #9fd3c7; }
    .badge { border-radius: 3px; padding: 0 6px; font-size: 12px; line-height: 18px; }
    .older { background: #e8b04b; color: #1d3a4a; font-weight: 600; }
    .dirty { color: #e8b04b; }
    button, select { font: inherit; font-size: 12.5px; background: #2a5063; color: #eef3f5; border: 1px solid #3d6b80;
      border-radius: 3px; padding: 3px 8px; cursor: pointer; flex: none; }
    button:disabled { opacity: 0.45; cursor: default; }
    button:focus-visible, select:focus-visible { outline: 2px solid #e8b04b; outline-offset: 1px; }
    button.primary { background: #e8b04b; color: #1d3a4a; border-color: #e8b04b; font-weight: 600; }
    .sep { width: 1px; height: 20px; background: #3d6b80; flex: none; }
    input[type=file] { display: none; }
    .who { flex: none; font-size: 12.5px; color: #cfe0e6; }
    .who b { color: #eef3f5; font-weight: 600; }
  `;

  static override properties = {
    modelName: { type: String },
    doc: { attribute: false },
    dirty: { type: Boolean },
    canUndo: { type: Boolean },
    canRedo: { type: Boolean },
    system: { type: String },
    hasSolution: { type: Boolean },
    identity: { attribute: false },
  };

  declare modelName: string;
  declare doc: Doc;
  declare dirty: boolean;
  declare canUndo: boolean;
  declare canRedo: boolean;
  declare system: UnitSystem;
  /** Whether there is a station table to write. */
  declare hasSolution: boolean;
  /** Who is signed in with a personal key (shown, with a sign-out), or null. */
  declare identity: Identity | null;

  constructor() {
    super();
    this.modelName = '';
    this.doc = { id: null, revision: 0, viewing: null, saved: null, origin: 'new' };
    this.dirty = false;
    this.canUndo = false;
    this.canRedo = false;
    this.system = 'si';
    this.hasSolution = false;
    this.identity = null;
  }

  override render() {
    const d = this.doc;
    const link = d.id ? `/m/${encodeURIComponent(d.id)}` : '';
    const cmd = (c: Command) => () => this.fire('sn-command', { command: c });
    return html`<header class="bar">
      <span class="brand">SHAFTNET</span>
      <span class="doc" data-doc-id=${d.id ?? ''} data-revision=${d.revision} title=${this.modelName}>
        <span class="name">${this.modelName}</span>
        <span class="state">
          ${d.id
            ? html`<a href=${link} title="Link to this model" @click=${(e: Event) => e.preventDefault()}>rev. ${d.viewing ?? d.revision}</a>
                ${d.viewing ? html`<span class="badge older" data-older>older revision; latest ${d.revision}</span>` : nothing}`
            : html`<em>${d.origin === 'demo' ? 'demo, not saved' : 'not saved'}</em>`}
          ${this.dirty ? html`<span class="dirty" data-dirty>• unsaved</span>` : nothing}
        </span>
      </span>
      <button @click=${cmd('undo')} ?disabled=${!this.canUndo} title="Undo (Ctrl+Z)">Undo</button>
      <button @click=${cmd('redo')} ?disabled=${!this.canRedo} title="Redo (Ctrl+Shift+Z or Ctrl+Y)">Redo</button>
      <select aria-label="Units" title="Units of every input and output" @change=${this.onUnits}>
        ${UNIT_SYSTEMS.map((u) => html`<option value=${u} ?selected=${this.system === u}>${UNIT_SYSTEM_LABELS[u]}</option>`)}
      </select>
      <span class="sep"></span>
      <button @click=${cmd('library')} data-action="library">Library</button>
      <button class="primary" @click=${cmd('save')} data-action="save">Save</button>
      <button @click=${cmd('save-copy')} ?disabled=${!d.id} data-action="save-copy" title="Save as a new model in the library">Save copy</button>
      ${d.id ? html`<button @click=${cmd('link')} data-action="link">Copy link</button>` : nothing}
      <span class="sep"></span>
      <button @click=${cmd('new')} data-action="new">New</button>
      <button @click=${this.chooseFile} data-action="import" title="Open a model JSON file">Import…</button>
      <input type="file" accept=".json,application/json" tabindex="-1" aria-hidden="true" @change=${this.onFile} />
      <button @click=${cmd('export')} data-action="export" title="Write the model as a JSON file">Export</button>
      <button @click=${cmd('csv')} ?disabled=${!this.hasSolution} data-action="csv" title="Write the station table as CSV">CSV</button>
      <button @click=${cmd('print')} data-action="print" title="Print the report">Print</button>
      ${this.identity
        ? html`<span class="sep"></span><span class="who" data-identity=${this.identity.name} data-role=${this.identity.role}
              title="Signed in with a personal key"><b>${this.identity.name}</b> · ${this.identity.role}</span>
            <button @click=${cmd('sign-out')} data-action="sign-out" title="Sign out of this browser">Sign out</button>`
        : nothing}
    </header>`;
  }

  private chooseFile(): void {
    this.renderRoot.querySelector<HTMLInputElement>('input[type=file]')?.click();
  }

  private onFile(e: Event): void {
    const input = e.target as HTMLInputElement;
    const file = input.files?.[0];
    input.value = '';
    if (file) this.fire('sn-import', { file });
  }

  private onUnits(e: Event): void {
    this.fire('sn-units', { system: (e.target as HTMLSelectElement).value === 'us' ? 'us' : 'si' });
  }

  private fire(type: string, detail: unknown): void {
    this.dispatchEvent(new CustomEvent(type, { detail, bubbles: true, composed: true }));
  }
}

customElements.define('sn-top-bar', SnTopBar);

declare global {
  interface HTMLElementTagNameMap {
    'sn-top-bar': SnTopBar;
  }
}
