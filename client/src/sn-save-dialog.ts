import { LitElement, css, html, nothing } from 'lit';

/** Detail of `sn-save`. */
export interface SaveDetail { author: string; message: string; asCopy: boolean }

/**
 * Asks for the author and a message before a save. The author is remembered
 * in this browser. With `asNew`, the model goes to the library as a new entry.
 *
 * @fires sn-save - {author, message, asCopy}
 * @fires sn-close - cancelled
 */
export class SnSaveDialog extends LitElement {
  static override styles = css`
    :host { display: block; }
    form { background: #fff; border: 1px solid #c8c4bb; border-radius: 6px; padding: 12px 16px; box-shadow: 0 6px 24px rgba(0,0,0,0.12); max-width: 420px; }
    h2 { font-size: 15px; margin: 0 0 8px; color: #1d3a4a; }
    label { display: block; font-size: 13px; margin: 6px 0; }
    input { font: inherit; width: 100%; box-sizing: border-box; padding: 4px 6px; border: 1px solid #c8c4bb; border-radius: 3px; }
    .row { display: flex; gap: 8px; justify-content: flex-end; margin-top: 10px; }
    button { font: inherit; font-size: 13px; padding: 3px 12px; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; }
    button.primary { background: #1d3a4a; color: #fff; border-color: #1d3a4a; }
    .muted { color: #6b665e; font-size: 12px; }
    .err { color: #b3261e; font-size: 13px; }
  `;

  static override properties = {
    asNew: { type: Boolean },
    busy: { type: Boolean },
    error: { type: String },
    baseRevision: { type: Number },
    signedAs: { type: String },
  };

  declare asNew: boolean;
  declare busy: boolean;
  declare error: string;
  declare baseRevision: number;
  /** The personal key's name when signed in with one: it is the author (the server ignores a typed one). */
  declare signedAs: string;

  constructor() {
    super();
    this.asNew = false;
    this.busy = false;
    this.error = '';
    this.baseRevision = 0;
    this.signedAs = '';
  }

  override render() {
    const author = this.signedAs || (localStorage.getItem('shaftnet.author') ?? '');
    return html`<form @submit=${this.onSubmit} aria-label="Save the model">
      <h2>${this.asNew ? 'Save to the team library' : `Save a new revision (on top of revision ${this.baseRevision})`}</h2>
      <label>Your name <input name="author" required maxlength="100" .value=${author} autocomplete="name" ?readonly=${!!this.signedAs}
        title=${this.signedAs ? 'Your personal key names you' : ''} /></label>
      <label>What changed <input name="message" required maxlength="500" placeholder="e.g. tail shaft 40 → 45 mm" /></label>
      ${this.error ? html`<p class="err">${this.error}</p>` : nothing}
      <p class="muted">Everyone on this server can open what you save.</p>
      <div class="row">
        <button type="button" @click=${this.cancel}>Cancel</button>
        <button type="submit" class="primary" ?disabled=${this.busy}>${this.busy ? 'Saving…' : 'Save'}</button>
      </div>
    </form>`;
  }

  override firstUpdated(): void {
    const form = this.renderRoot.querySelector('form');
    const target = (form?.elements.namedItem('author') as HTMLInputElement | null)?.value ? 'message' : 'author';
    (form?.elements.namedItem(target) as HTMLInputElement | null)?.focus();
  }

  private onSubmit(e: Event): void {
    e.preventDefault();
    const form = e.target as HTMLFormElement;
    const author = (form.elements.namedItem('author') as HTMLInputElement).value.trim();
    const message = (form.elements.namedItem('message') as HTMLInputElement).value.trim();
    if (!this.signedAs) localStorage.setItem('shaftnet.author', author);
    this.dispatchEvent(new CustomEvent<SaveDetail>('sn-save', { detail: { author, message, asCopy: false }, bubbles: true, composed: true }));
  }

  private cancel(): void {
    this.dispatchEvent(new CustomEvent('sn-close', { bubbles: true, composed: true }));
  }
}

customElements.define('sn-save-dialog', SnSaveDialog);

declare global {
  interface HTMLElementTagNameMap {
    'sn-save-dialog': SnSaveDialog;
  }
}
