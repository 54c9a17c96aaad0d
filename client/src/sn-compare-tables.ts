import { LitElement, css, html } from 'lit';
import type { UnitSystem } from '../../shared-types/present.js';
import type { ComparisonAnswer } from './sheet-api.js';
import { inputRows, resultRows } from './sheet-compare.js';

/**
 * The two tables of a comparison: inputs changed, added or removed (as typed, old → new) and
 * results changed (old, new, absolute and relative delta, in the user's units).
 */
export class SnCompareTables extends LitElement {
  static override styles = css`
    :host { display: block; font-size: 12.5px; }
    h3 { font-size: 13px; margin: 8px 0 4px; color: #1d3a4a; }
    table { border-collapse: collapse; width: 100%; }
    th, td { border-bottom: 1px solid #e4e0d8; padding: 2px 6px; text-align: left; vertical-align: top; }
    th { font-weight: 600; color: #4a4640; }
    td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
    td.typed { font-family: ui-monospace, Menlo, Consolas, monospace; font-size: 11.5px; overflow-wrap: anywhere; }
    .added { color: #1b5e20; }
    .removed { color: #8c1d18; }
    .none, .unsolved { color: #6b665e; }
  `;

  static override properties = {
    comparison: { attribute: false },
    system: { type: String },
    fromLabel: { type: String },
    toLabel: { type: String },
  };

  declare comparison: ComparisonAnswer | null;
  declare system: UnitSystem;
  /** Column heads for the two sides ("rev 3", "yours"). */
  declare fromLabel: string;
  declare toLabel: string;

  constructor() {
    super();
    this.comparison = null;
    this.system = 'si';
    this.fromLabel = 'from';
    this.toLabel = 'to';
  }

  override render() {
    const c = this.comparison;
    if (!c) return html``;
    const inputs = inputRows(c.inputs);
    const results = resultRows(c.results, this.system);
    return html`
      ${c.unsolved.map((u) => html`<p class="unsolved">${u.side === 'from' ? this.fromLabel : this.toLabel} does not solve (${u.code}): ${u.message}</p>`)}
      <h3>Inputs</h3>
      ${inputs.length === 0
        ? html`<p class="none">No input changed.</p>`
        : html`<table class="inputs"><thead><tr><th>change</th><th>item</th><th>field</th><th>${this.fromLabel}</th><th>${this.toLabel}</th></tr></thead><tbody>
            ${inputs.map((r) => html`<tr class=${r.change} data-item=${r.item} data-field=${r.field}><td>${r.change}</td><td>${r.item}</td><td>${r.field}</td><td class="typed">${r.from}</td><td class="typed">${r.to}</td></tr>`)}
          </tbody></table>`}
      <h3>Results</h3>
      ${results.length === 0
        ? html`<p class="none">No result changed.</p>`
        : html`<table class="results"><thead><tr><th>result</th><th>item</th><th>unit</th><th>${this.fromLabel}</th><th>${this.toLabel}</th><th>Δ</th><th>Δ %</th></tr></thead><tbody>
            ${results.map((r) => html`<tr data-what=${r.what} data-item=${r.item}><td>${r.what}</td><td>${r.item}</td><td>${r.unit}</td><td class="n">${r.from}</td><td class="n">${r.to}</td><td class="n">${r.delta}</td><td class="n">${r.relative}</td></tr>`)}
          </tbody></table>`}
    `;
  }
}

customElements.define('sn-compare-tables', SnCompareTables);

declare global {
  interface HTMLElementTagNameMap {
    'sn-compare-tables': SnCompareTables;
  }
}
