import { LitElement, css, html } from 'lit';
import { CAUTIONS } from '../../shared-types/present.js';

/** What the results are and are not (the one text of shared-types/present.ts): shown under the results and in the printed report. */
export class SnCautions extends LitElement {
  static override styles = css`
    :host { display: block; }
    aside { border-left: 4px solid #d48a1a; background: #fbf5e8; padding: 6px 12px; font-size: 12.5px; color: #4a4030; }
    strong { color: #7a4f00; }
    ul { margin: 4px 0; padding-left: 18px; }
    @media print { aside { background: none; } }
  `;

  override render() {
    return html`<aside class="cautions" aria-label="Cautions">
      <strong>Cautions.</strong>
      <ul>
        ${CAUTIONS.map((c) => html`<li>${c}</li>`)}
      </ul>
    </aside>`;
  }
}

customElements.define('sn-cautions', SnCautions);

declare global {
  interface HTMLElementTagNameMap {
    'sn-cautions': SnCautions;
  }
}
