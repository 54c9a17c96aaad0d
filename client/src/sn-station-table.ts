import { LitElement, css, html, nothing } from 'lit';
import type { ShaftResult } from '../../shared-types/solution.js';
import { type UnitSystem, displayUnit, formatValue, prettyUnit } from './units.js';

/**
 * The station table of one shaft on screen, folded until opened (its rows are
 * built only then): z, rotation, and the torque just before and just after
 * each station ("—" beyond the shaft's ends).
 */
export class SnStationTable extends LitElement {
  static override styles = css`
    :host { display: block; }
    summary { cursor: pointer; font-size: 12.5px; color: #1d3a4a; font-weight: 600; padding: 2px 0; }
    .scroll { max-height: 320px; overflow: auto; }
    table { border-collapse: collapse; font-size: 12.5px; }
    th { position: sticky; top: 0; background: #fff; text-align: right; font-size: 11.5px; color: #4a5258; font-weight: 600; padding: 2px 10px 2px 0; border-bottom: 1px solid #dcd7cd; white-space: nowrap; }
    td { text-align: right; padding: 1px 10px 1px 0; border-bottom: 1px solid #f0ece4; font-variant-numeric: tabular-nums; white-space: nowrap; }
    @media print { .scroll { max-height: none; overflow: visible; } }
  `;

  static override properties = { shaft: { attribute: false }, system: { type: String }, open: { state: true } };

  declare shaft: ShaftResult | null;
  declare system: UnitSystem;
  declare private open: boolean;

  constructor() {
    super();
    this.shaft = null;
    this.system = 'si';
    this.open = false;
  }

  override render() {
    const sh = this.shaft;
    if (!sh) return nothing;
    const u = (k: 'length' | 'angle' | 'torque') => prettyUnit(displayUnit(k, this.system));
    return html`<details ?open=${this.open} @toggle=${(e: Event) => (this.open = (e.target as HTMLDetailsElement).open)}>
      <summary>Stations of ${sh.id} (${sh.stations.length})</summary>
      ${this.open
        ? html`<div class="scroll"><table class="stations" aria-label=${`Stations of ${sh.id}`}>
            <thead><tr><th>z [${u('length')}]</th><th>Rotation φ [${u('angle')}]</th><th>T(z−) [${u('torque')}]</th><th>T(z+) [${u('torque')}]</th></tr></thead>
            <tbody>
              ${sh.stations.map(
                (st) => html`<tr>
                  <td>${formatValue(st.z, 'length', this.system)}</td><td>${formatValue(st.rotation, 'angle', this.system)}</td>
                  <td>${formatValue(st.torqueLeft, 'torque', this.system)}</td><td>${formatValue(st.torqueRight, 'torque', this.system)}</td>
                </tr>`,
              )}
            </tbody>
          </table></div>`
        : nothing}
    </details>`;
  }
}

customElements.define('sn-station-table', SnStationTable);

declare global {
  interface HTMLElementTagNameMap {
    'sn-station-table': SnStationTable;
  }
}
