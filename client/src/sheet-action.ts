import { LitElement, css, html } from 'lit';
import type { Model } from '../../shared-types/model.js';
import { sheetUrl, unsavedSheet } from './sheet-api.js';

/** How long a Blob URL of an unsaved model's sheet stays valid, ms: the new tab has loaded it by then. */
const BLOB_LIFETIME = 60_000;

/**
 * The "Calculation sheet" action for the model on screen: a saved revision without unsaved changes
 * opens the sheet's address in a new tab; anything else (new, imported, edited) is posted to
 * POST /api/sheet and the answered HTML opened from a Blob URL. The tab is opened at the click
 * (a later window.open would be taken for a pop-up) and pointed at the sheet when it is ready.
 */
export class SnSheetAction extends LitElement {
  static override styles = css`
    :host { display: inline-block; }
    button { font: inherit; font-size: 13px; padding: 3px 10px; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; }
    .error { color: #8c1d18; font-size: 12px; margin-left: 6px; }
  `;

  static override properties = {
    modelId: { type: String },
    revision: { type: Number },
    dirty: { type: Boolean },
    model: { attribute: false },
    error: { state: true },
  };

  /** The library id, '' for a model not in the library. */
  declare modelId: string;
  /** The revision on screen. */
  declare revision: number;
  /** Unsaved changes on screen. */
  declare dirty: boolean;
  declare model: Model | null;
  declare private error: string;

  constructor() {
    super();
    this.modelId = '';
    this.revision = 0;
    this.dirty = false;
    this.model = null;
    this.error = '';
  }

  override render() {
    const saved = this.modelId !== '' && this.revision > 0 && !this.dirty;
    return html`<button data-action="sheet" title=${saved ? `The calculation sheet of revision ${this.revision}` : 'The calculation sheet of the model on screen (not saved)'}
      @click=${this.onClick}>Calculation sheet</button>${this.error ? html`<span class="error" role="status">${this.error}</span>` : ''}`;
  }

  private async onClick(): Promise<void> {
    this.error = '';
    if (this.modelId !== '' && this.revision > 0 && !this.dirty) {
      window.open(sheetUrl(this.modelId, this.revision), '_blank', 'noopener');
      return;
    }
    if (!this.model) return;
    const tab = window.open('', '_blank');
    try {
      const text = await unsavedSheet(this.model);
      const url = URL.createObjectURL(new Blob([text], { type: 'text/html;charset=utf-8' }));
      setTimeout(() => URL.revokeObjectURL(url), BLOB_LIFETIME);
      if (tab) tab.location.href = url;
      else window.location.assign(url);
    } catch (e) {
      tab?.close();
      this.error = `No sheet: ${e instanceof Error ? e.message : String(e)}`;
    }
  }
}

customElements.define('sn-sheet-action', SnSheetAction);

declare global {
  interface HTMLElementTagNameMap {
    'sn-sheet-action': SnSheetAction;
  }
}
