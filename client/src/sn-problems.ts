import { LitElement, css, html, nothing } from 'lit';
import type { ModelIssue } from '../../shared-types/errors.js';
import type { EditModel } from './model-edits.js';
import { describePointer } from './model-edits.js';
import { freeShafts, mechanismText } from './issue-text.js';

/** Detail of `sn-go`: the field (or row, or list) a problem names. */
export interface GoDetail { pointer: string }

/**
 * The list of the model's problems, each a link (reachable by Tab, followed by
 * Enter or a click) to the field it names, with readable paths; shafts free to
 * spin are said once, above the list.
 *
 * @fires sn-go - {pointer}: show and focus the field a problem names
 */
export class SnProblems extends LitElement {
  static override styles = css`
    :host { display: block; }
    .problems { border: 1px solid #e9b7b2; background: #fdf0ef; border-radius: 6px; padding: 6px 12px; margin-bottom: 12px; font-size: 13px; }
    h2 { font-size: 14px; color: #8c1d18; margin: 2px 0 4px; }
    ul { margin: 0; padding-left: 18px; }
    a { color: #8c1d18; text-decoration: underline; }
    a:focus-visible { outline: 2px solid #2b6f8e; outline-offset: 1px; }
    .mechanism { font-weight: 600; margin: 2px 0 4px; }
    @media print { a { color: inherit; text-decoration: none; } }
  `;

  static override properties = {
    model: { attribute: false },
    issues: { attribute: false },
    invalid: { type: Boolean },
  };

  declare model: EditModel | null;
  declare issues: readonly ModelIssue[];
  /** The model was refused (not merely warned about). */
  declare invalid: boolean;

  constructor() {
    super();
    this.model = null;
    this.issues = [];
    this.invalid = false;
  }

  override render() {
    if (this.issues.length === 0) return nothing;
    const free = freeShafts(this.issues);
    const rest = this.issues.filter((i) => i.code !== 'SN_MECHANISM');
    return html`<section class="problems" role="alert" aria-labelledby="problems-title" data-problems>
      <h2 id="problems-title">${this.invalid ? 'The model cannot be solved yet' : 'Problems'}</h2>
      ${free.length
        ? html`<p class="mechanism" data-mechanism=${free.join(',')}>
            ${mechanismText(free)} <a href="#/supports" @click=${(e: Event) => this.go(e, '/supports')}>Go to the supports</a>
          </p>`
        : nothing}
      ${rest.length
        ? html`<ul>
            ${rest.map(
              (i) => html`<li data-pointer=${i.pointer}>
                <a href=${'#' + i.pointer} @click=${(e: Event) => this.go(e, i.pointer)}>${describePointer(this.model, i.pointer)}</a>: ${i.message}
                ${i.connections?.length ? html` (connections ${i.connections.join(', ')})` : nothing}
              </li>`,
            )}
          </ul>`
        : nothing}
    </section>`;
  }

  private go(e: Event, pointer: string): void {
    e.preventDefault();
    this.dispatchEvent(new CustomEvent<GoDetail>('sn-go', { detail: { pointer }, bubbles: true, composed: true }));
  }
}

customElements.define('sn-problems', SnProblems);

declare global {
  interface HTMLElementTagNameMap {
    'sn-problems': SnProblems;
  }
}
