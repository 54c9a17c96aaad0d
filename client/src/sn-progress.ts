import { LitElement, css, html, nothing } from 'lit';
import type { SolveProgressView } from './controllers/solve-controller.js';

/** The phases as the bar names them (the server's phase names, in words). */
const PHASE_WORDS: Readonly<Record<string, string>> = {
  '': 'waiting for the server',
  stations: 'placing stations',
  assembly: 'assembling',
  frequencies: 'finding the natural frequencies',
  factorisation: 'factorising',
  solve: 'solving',
  recovery: 'recovering torques and stresses',
  'forced response': 'sweeping the running speeds (forced response)',
  writing: 'sending the results',
};

/**
 * The progress of a long solve: a bar, its phase in words, and a Cancel button.
 * Shows nothing while `progress` is null (the solve controller sets it once a
 * solve has run half a second).
 *
 * @fires sn-cancel - the Cancel button was pressed
 */
export class SnProgress extends LitElement {
  static override styles = css`
    :host { display: block; }
    .box { display: flex; align-items: center; gap: 10px; padding: 6px 10px; margin-bottom: 8px;
      border: 1px solid #c9d6e8; border-radius: 6px; background: #f1f6fc; font-size: 13px; }
    progress { flex: 1; height: 10px; }
    .phase { min-width: 16em; color: #334; }
    button { font: inherit; padding: 2px 10px; }
    @media print { :host { display: none; } }
  `;

  static override properties = {
    progress: { attribute: false },
  };

  declare progress: SolveProgressView | null;

  constructor() {
    super();
    this.progress = null;
  }

  override render() {
    const p = this.progress;
    if (!p) return nothing;
    const pct = Math.floor(p.overall * 100);
    return html`<div class="box" role="status" aria-live="polite" data-phase=${p.phase} data-overall=${p.overall}>
      <progress max="100" .value=${pct} aria-label="Solve progress"></progress>
      <span class="phase">${PHASE_WORDS[p.phase] ?? p.phase} · ${pct}%</span>
      <button type="button" class="cancel" @click=${this.onCancel}>Cancel</button>
    </div>`;
  }

  private onCancel(): void {
    this.dispatchEvent(new CustomEvent('sn-cancel', { bubbles: true, composed: true }));
  }
}

customElements.define('sn-progress', SnProgress);

declare global {
  interface HTMLElementTagNameMap {
    'sn-progress': SnProgress;
  }
}
