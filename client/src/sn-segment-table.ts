import { LitElement, css, html, nothing } from 'lit';
import type { ShaftResult, SegmentResult } from '../../shared-types/solution.js';
import { type UnitSystem, displayUnit, formatNumber, formatValue, prettyUnit } from './units.js';
import type { EnvelopeShaft } from './cases-results.js';
import { type SectionLike, type SegmentWithShape, sectionToDisplay, sectionUnit, segmentProperties } from './section-geometry.js';

/** Segments above which the table starts folded (its rows are built when opened). */
const OPEN_UP_TO = 12;

/**
 * The segments of one shaft: where each runs, its section, torsion constant J,
 * rigidity G·J and stiffness k (G·J / L; for a taper the exact 1/∫dz/(G·J)),
 * polar moment Ip and torsional modulus Wt, its peak torque, twist and peak
 * shear stress of its layers. A tapered segment shows J, G·J, Ip and Wt at its
 * start and end ("a → b"). Open for a few segments, folded for many.
 */
export class SnSegmentTable extends LitElement {
  static override styles = css`
    :host { display: block; overflow-x: auto; }
    summary { cursor: pointer; font-size: 12.5px; color: #1d3a4a; font-weight: 600; padding: 2px 0; }
    table { border-collapse: collapse; font-size: 12.5px; margin: 2px 0 6px; }
    th { text-align: left; font-size: 11.5px; color: #4a5258; font-weight: 600; padding: 2px 8px 2px 0; border-bottom: 1px solid #dcd7cd; white-space: nowrap; }
    td { padding: 2px 8px 2px 0; border-bottom: 1px solid #ece8e0; white-space: nowrap; }
    td.num { text-align: right; font-variant-numeric: tabular-nums; }
  `;

  static override properties = {
    shaft: { attribute: false },
    system: { type: String },
    sections: { attribute: false },
    envelope: { attribute: false },
    names: { attribute: false },
    open: { state: true },
  };

  declare shaft: ShaftResult | null;
  /** The model's sections (a taper's end radius for Wt of a round section). */
  declare sections: readonly SectionLike[];
  declare system: UnitSystem;
  /** This shaft's envelope over the load combinations (null: one load state): the worst |T| and its combination. */
  declare envelope: EnvelopeShaft | null;
  /** Combination names by id. */
  declare names: Readonly<Record<string, string>>;
  /** Open or folded by the user; undefined: by the number of segments. */
  declare private open: boolean | undefined;

  constructor() {
    super();
    this.shaft = null;
    this.system = 'si';
    this.sections = [];
    this.envelope = null;
    this.names = {};
    this.open = undefined;
  }

  override render() {
    const sh = this.shaft;
    if (!sh) return nothing;
    const open = this.open ?? sh.segments.length <= OPEN_UP_TO;
    return html`<details ?open=${open} @toggle=${(e: Event) => (this.open = (e.target as HTMLDetailsElement).open)}>
      <summary>Segments of ${sh.id} (${sh.segments.length})</summary>
      ${open ? this.table(sh) : nothing}
    </details>`;
  }

  private table(sh: ShaftResult) {
    const u = (k: Parameters<typeof displayUnit>[0]) => prettyUnit(displayUnit(k, this.system));
    const len = u('length');
    return html`<table class="segments" aria-label=${`Segments of ${sh.id}`}>
      <thead><tr>
        <th>Segment</th><th>From–to [${len}]</th><th>Section</th><th title="Torsion constant">J [${u('torsionConstant')}]</th>
        <th title="Torsional rigidity">G·J [${u('torsionalRigidity')}]</th><th title="Stiffness G·J / L (a taper: 1 / ∫ dz / G·J)">k [${u('torsionalStiffness')}]</th>
        <th title="Polar moment of area">Ip [${u('torsionConstant')}]</th><th title="Torsional modulus: τmax = T / Wt">Wt [${prettyUnit(sectionUnit('sectionModulus', this.system))}]</th>
        <th>Peak |T| [${u('torque')}]</th><th>Twist [${u('angle')}]</th><th>Peak τ [${u('stress')}]</th>
        ${this.envelope ? html`<th title="The largest |T| of the segment over all combinations, and the combination that gives it">Worst |T| [${u('torque')}] in</th>` : nothing}
      </tr></thead>
      <tbody>
        ${sh.segments.map((seg: SegmentResult) => {
          const g = seg as SegmentWithShape;
          const peak = Math.max(0, ...g.layers.map((l) => l.maxShear));
          const taper = g.sectionEnd !== undefined;
          const a = segmentProperties(g, false);
          const b = taper ? segmentProperties(g, true, this.sections.find((s) => s.id === g.sectionEnd)) : a;
          const two = (x: number | null, y: number | null, f: (v: number | null) => string) => (taper ? `${f(x)} → ${f(y)}` : f(x));
          const J = (v: number | null) => formatValue(v, 'torsionConstant', this.system);
          const Wt = (v: number | null) => (v === null ? '—' : formatNumber(sectionToDisplay(v, 'sectionModulus', this.system), 5));
          return html`<tr data-segment=${g.index} data-tapered=${taper ? 'true' : 'false'}>
            <td>${g.index + 1}</td>
            <td class="num">${formatValue(g.from, 'length', this.system, 4)}–${formatValue(g.to, 'length', this.system, 4)}</td>
            <td>${taper ? `${g.section} → ${g.sectionEnd}` : g.section}</td>
            <td class="num" data-j>${two(a.J, b.J, J)}</td>
            <td class="num" data-gj>${two(g.torsionalRigidity, g.torsionalRigidityEnd ?? null, (v) => formatValue(v, 'torsionalRigidity', this.system))}</td>
            <td class="num" data-k>${formatValue(g.stiffness, 'torsionalStiffness', this.system)}</td>
            <td class="num" data-ip>${two(a.Ip, b.Ip, J)}</td>
            <td class="num" data-wt>${two(a.Wt, b.Wt, Wt)}</td>
            <td class="num">${formatValue(g.maxAbsTorque, 'torque', this.system)}</td>
            <td class="num">${formatValue(g.twist, 'angle', this.system)}</td>
            <td class="num">${formatValue(peak, 'stress', this.system)}</td>
            ${this.envelope ? this.worst(g.index) : nothing}
          </tr>`;
        })}
      </tbody>
    </table>`;
  }

  private worst(index: number) {
    const e = this.envelope?.segments.find((s) => s.index === index);
    if (!e) return html`<td>—</td>`;
    return html`<td data-worst-combination=${e.combination} data-worst=${e.maxAbsTorque}><span class="num">${formatValue(e.maxAbsTorque, 'torque', this.system)}</span> ${this.names[e.combination] ?? e.combination}</td>`;
  }
}

customElements.define('sn-segment-table', SnSegmentTable);

declare global {
  interface HTMLElementTagNameMap {
    'sn-segment-table': SnSegmentTable;
  }
}
