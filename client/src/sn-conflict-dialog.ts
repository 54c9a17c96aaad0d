import { LitElement, css, html } from 'lit';

/**
 * Said when someone else saved the model after it was opened: nothing was
 * overwritten; the user saves theirs as a new model or opens the latest. Takes
 * the focus when it opens, keeps Tab inside, and closes on Escape.
 *
 * @fires sn-save-mine - save the user's model as a new library entry
 * @fires sn-reload-latest - drop the user's changes and open the latest revision
 * @fires sn-close - cancelled (Escape or the Cancel button)
 */
export class SnConflictDialog extends LitElement {
  static override styles = css`
    :host { display: block; }
    .conflict { background: #fff; border-radius: 6px; padding: 14px 18px; max-width: 480px; box-shadow: 0 6px 24px rgba(0,0,0,0.18); }
    h2 { font-size: 15px; margin: 0 0 6px; color: #8c1d18; }
    p { font-size: 13.5px; }
    button { font: inherit; font-size: 13px; padding: 4px 12px; margin: 4px 6px 0 0; border-radius: 3px; border: 1px solid #c8c4bb; background: #fff; cursor: pointer; }
    button.primary { background: #1d3a4a; color: #fff; border-color: #1d3a4a; }
    button:focus { outline: 2px solid #d48a1a; outline-offset: 2px; }
  `;

  static override properties = {
    baseRevision: { type: Number },
    currentRevision: { type: Number },
  };

  /** The revision the user's changes were made on. */
  declare baseRevision: number;
  /** The library's latest revision (0 when the server did not say). */
  declare currentRevision: number;

  constructor() {
    super();
    this.baseRevision = 0;
    this.currentRevision = 0;
  }

  override render() {
    return html`<div class="conflict" role="alertdialog" aria-modal="true" aria-labelledby="conflict-title" aria-describedby="conflict-text" @keydown=${this.onKey}>
      <h2 id="conflict-title">Someone else saved this model first</h2>
      <p id="conflict-text">Your changes were made on revision ${this.baseRevision}; the library now holds revision ${this.currentRevision || 'newer'}.
        Nothing was overwritten.</p>
      <button class="primary" data-action="save-as-copy" @click=${() => this.fire('sn-save-mine')}>Save mine as a new model</button>
      <button data-action="reload-latest" @click=${() => this.fire('sn-reload-latest')}>Open the latest (drop my changes)</button>
      <button data-action="cancel" @click=${() => this.fire('sn-close')}>Cancel</button>
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
