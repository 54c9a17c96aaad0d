import { LitElement, css, html, nothing, svg } from 'lit';
import { stepCursor, valueAt } from './diagram-readout.js';
import { type FieldKind, type UnitSystem, displayUnit, formatNumber, formatQuantity, prettyUnit, toDisplay } from './units.js';
import { chartStyles } from './shared-styles.js';
import { linearScale, niceTicks } from './chart-scale.js';

const PW = 680; // px, viewBox width
const PH = 150; // px, viewBox height
const ML = 58; // px, left margin for tick labels
const MR = 12;
const MT = 20;
const MB = 28;

/** A local value marked on a diagram beside its curve (a stress raiser's local peak), SI. */
export interface PlotPeak { z: number; value: number; label: string }

/** An envelope band behind the line: lower and upper values over z (SI), as `cases-results.ts` builds it. */
export interface PlotBand { z: readonly number[]; lo: readonly number[]; hi: readonly number[] }

/** Detail of `sn-cursor`: the z (m) to read the diagrams at, or null to stop reading. */
export interface CursorDetail { z: number | null }

/**
 * A diagram of one quantity along a shaft's z: a line through the given points
 * (two points at one z draw a jump), shaded to zero, with the governing point
 * marked and labelled, and any local peaks (a stress raiser's) marked by a
 * diamond on a stem from the curve, labelled "local peak". Values come in SI and are shown in the system's units.
 * A cursor (a vertical line with the value) follows the pointer, or ← → Home End
 * when the diagram has the focus; the parent reads all diagrams of a shaft at it.
 *
 * @fires sn-cursor - {z}: the pointer or a key moved the cursor (null: it left)
 */
export class SnPlot extends LitElement {
  static override styles = [chartStyles, css`
    .mark { font-size: 11.5px; font-weight: 600; paint-order: stroke; stroke: #fff; stroke-width: 3px; }
    .cursor { font-size: 11.5px; font-weight: 600; fill: #1d3a4a; paint-order: stroke; stroke: #fff; stroke-width: 3px; }
    svg:focus { outline: 2px solid #2b6f8e; outline-offset: 1px; }
    svg:focus-visible { outline: 2px solid #2b6f8e; }
  `];

  static override properties = {
    z: { attribute: false },
    values: { attribute: false },
    kind: { type: String },
    system: { type: String },
    label: { type: String },
    color: { type: String },
    markIndex: { type: Number },
    breaks: { attribute: false },
    cursor: { attribute: false },
    peaks: { attribute: false },
    band: { attribute: false },
  };

  declare z: readonly number[];
  declare values: readonly number[];
  /** Field kind of the values (torque, angle, stress). */
  declare kind: FieldKind;
  declare system: UnitSystem;
  declare label: string;
  declare color: string;
  /** Index of the governing point to mark, or -1. */
  declare markIndex: number;
  /** z of segment boundaries, drawn as faint verticals. */
  declare breaks: readonly number[];
  /** z (m) of the reading cursor, or null. */
  declare cursor: number | null;
  /** Local peaks to mark beside the curve (they widen the value axis to fit). */
  declare peaks: readonly PlotPeak[];
  /** The envelope over all combinations, drawn as a shaded band with the line inside it; null: none. */
  declare band: PlotBand | null;

  constructor() {
    super();
    this.z = [];
    this.values = [];
    this.kind = 'torque';
    this.system = 'si';
    this.label = '';
    this.color = '#2b6f8e';
    this.markIndex = -1;
    this.breaks = [];
    this.cursor = null;
    this.peaks = [];
    this.band = null;
  }

  override render() {
    if (this.z.length === 0) return nothing;
    const xs = this.z.map((z) => toDisplay(z, 'length', this.system));
    const ys = this.values.map((v) => toDisplay(v, this.kind, this.system));
    const x0 = Math.min(...xs);
    const x1 = Math.max(...xs, x0 + 1e-12);
    const py = this.peaks.map((p) => toDisplay(p.value, this.kind, this.system));
    const band = this.band && this.band.z.length ? this.band : null;
    const blo = band ? band.lo.map((v) => toDisplay(v, this.kind, this.system)) : [];
    const bhi = band ? band.hi.map((v) => toDisplay(v, this.kind, this.system)) : [];
    let y0 = Math.min(0, ...ys, ...py, ...blo);
    let y1 = Math.max(0, ...ys, ...py, ...bhi);
    if (y1 - y0 < 1e-12 * Math.max(1, Math.abs(y1))) {
      y0 -= 1;
      y1 += 1;
    }
    const pad = (y1 - y0) * 0.08;
    y0 -= y0 < 0 ? pad : 0;
    y1 += pad;
    const X = linearScale(x0, x1, ML, PW - MR);
    const Y = linearScale(y0, y1, PH - MB, MT);
    const pts = xs.map((x, i) => `${X(x).toFixed(2)},${Y(ys[i]).toFixed(2)}`).join(' ');
    const area = `${X(xs[0]).toFixed(2)},${Y(0).toFixed(2)} ${pts} ${X(xs[xs.length - 1]).toFixed(2)},${Y(0).toFixed(2)}`;
    const bandPts = band
      ? [
          ...band.z.map((z, i) => `${X(toDisplay(z, 'length', this.system)).toFixed(2)},${Y(bhi[i]).toFixed(2)}`),
          ...band.z.map((z, i) => `${X(toDisplay(z, 'length', this.system)).toFixed(2)},${Y(blo[i]).toFixed(2)}`).reverse(),
        ].join(' ')
      : '';
    const yt = niceTicks(y0, y1, 4);
    const xt = niceTicks(x0, x1, 8);
    const mi = this.markIndex;
    const unit = prettyUnit(displayUnit(this.kind, this.system));
    const cz = this.cursor;
    const cv = cz === null ? null : valueAt(this.z, this.values, cz);
    const cx = cz === null ? 0 : X(toDisplay(cz, 'length', this.system));
    const cursor =
      cz !== null && cv !== null
        ? svg`<g class="readout" data-z=${cz} data-value=${cv}>
            <line x1=${cx} x2=${cx} y1=${MT} y2=${PH - MB} stroke="#1d3a4a" stroke-width="1" stroke-dasharray="4 2"/>
            <circle cx=${cx} cy=${Y(toDisplay(cv, this.kind, this.system))} r="3.5" fill="#1d3a4a"/>
            <text class="cursor" x=${cx > PW / 2 ? cx - 6 : cx + 6} y=${MT + 10} text-anchor=${cx > PW / 2 ? 'end' : 'start'}>${formatQuantity(cv, this.kind, this.system, 4)}</text>
          </g>`
        : nothing;
    const mark =
      mi >= 0 && mi < xs.length
        ? svg`<g class="gov" data-z=${this.z[mi]} data-value=${this.values[mi]}>
            <circle cx=${X(xs[mi])} cy=${Y(ys[mi])} r="4.5" fill="#fff" stroke="#b3261e" stroke-width="2"/>
            <text class="mark" x=${X(xs[mi]) > PW / 2 ? X(xs[mi]) - 7 : X(xs[mi]) + 7} text-anchor=${X(xs[mi]) > PW / 2 ? 'end' : 'start'}
              y=${Y(ys[mi]) < MT + 14 ? Y(ys[mi]) + 15 : Y(ys[mi]) - 7} fill="#b3261e">
              ${formatQuantity(this.values[mi], this.kind, this.system, 4)} at z = ${formatQuantity(this.z[mi], 'length', this.system, 4)}
            </text>
          </g>`
        : nothing;
    const peaks = this.peaks.map((p, k) => {
      const x = X(toDisplay(p.z, 'length', this.system));
      const y = Y(py[k]);
      const onCurve = valueAt(this.z, this.values, p.z);
      const yc = onCurve === null ? Y(0) : Y(toDisplay(onCurve, this.kind, this.system));
      // The label goes away from the governing point's own label where there is room (about 160 px of text).
      const gx = mi >= 0 && mi < xs.length ? X(xs[mi]) : null;
      const roomLeft = x - ML >= 160;
      const roomRight = PW - MR - x >= 160;
      const right = gx === null ? x < PW * 0.6 : gx > x ? !roomLeft : roomRight;
      return svg`<g class="peak" data-z=${p.z} data-value=${p.value}>
        <line x1=${x} x2=${x} y1=${yc} y2=${y} stroke="#8c1d18" stroke-width="1.2" stroke-dasharray="2 2"/>
        <path d="M${x} ${y - 6} l5 6 l-5 6 l-5 -6 Z" fill="#fff" stroke="#8c1d18" stroke-width="1.6"/>
        <text class="mark" x=${right ? x + 8 : x - 8} y=${y < MT + 14 ? y + 14 : y - 4} text-anchor=${right ? 'start' : 'end'} fill="#8c1d18">${p.label}: ${formatQuantity(p.value, this.kind, this.system, 3)}</text>
      </g>`;
    });
    return html`<svg viewBox="0 0 ${PW} ${PH}" role="img" tabindex="0"
      aria-label=${`${this.label}; pointer or arrow keys read the value at any z`}
      @pointermove=${this.onPointer} @pointerleave=${this.onLeave} @keydown=${this.onKey} @blur=${this.onLeave}>
      <text class="title" x=${ML} y="13">${this.label} [${unit}]</text>
      ${yt.map((t) => svg`<line x1=${ML} x2=${PW - MR} y1=${Y(t)} y2=${Y(t)} stroke="#e4e0d8"/>
        <text class="tick" x=${ML - 5} y=${Y(t) + 3} text-anchor="end">${formatNumber(t, 4)}</text>`)}
      ${this.breaks.map((b) => svg`<line x1=${X(toDisplay(b, 'length', this.system))} x2=${X(toDisplay(b, 'length', this.system))} y1=${MT} y2=${PH - MB} stroke="#d6d1c7" stroke-dasharray="3 3"/>`)}
      ${xt.map((t) => svg`<text class="tick" x=${X(t)} y=${PH - MB + 13} text-anchor="middle">${formatNumber(t, 4)}</text>`)}
      <text class="tick" x=${PW - MR} y=${PH - 3} text-anchor="end">z [${prettyUnit(displayUnit('length', this.system))}]</text>
      ${band
        ? svg`<g class="band" data-lo=${Math.min(...band.lo)} data-hi=${Math.max(...band.hi)}>
            <title>Envelope of all combinations: ${formatQuantity(Math.min(...band.lo), this.kind, this.system, 4)} to ${formatQuantity(Math.max(...band.hi), this.kind, this.system, 4)}</title>
            <polygon points=${bandPts} fill=${this.color} fill-opacity="0.2" stroke=${this.color} stroke-opacity="0.55" stroke-width="1" stroke-dasharray="3 2" />
          </g>`
        : svg`<polygon points=${area} fill=${this.color} fill-opacity="0.13" />`}
      <line x1=${ML} x2=${PW - MR} y1=${Y(0)} y2=${Y(0)} stroke="#6b665e" />
      <polyline points=${pts} fill="none" stroke=${this.color} stroke-width="1.8" stroke-linejoin="round" />
      ${mark} ${peaks} ${cursor}
    </svg>`;
  }

  private zRange(): [number, number] {
    return [Math.min(...this.z), Math.max(...this.z)];
  }

  private onPointer(e: PointerEvent): void {
    const svgEl = e.currentTarget as SVGSVGElement;
    const box = svgEl.getBoundingClientRect();
    if (box.width <= 0) return;
    const x = ((e.clientX - box.left) / box.width) * PW;
    const [z0, z1] = this.zRange();
    const frac = (x - ML) / (PW - ML - MR);
    this.fireCursor(frac < 0 || frac > 1 ? null : z0 + frac * (z1 - z0));
  }

  private onLeave(): void {
    this.fireCursor(null);
  }

  private onKey(e: KeyboardEvent): void {
    const [z0, z1] = this.zRange();
    const next = stepCursor(e.key, e.shiftKey, this.cursor, z0, z1);
    if (next === null) return;
    e.preventDefault();
    this.fireCursor(next);
  }

  private fireCursor(z: number | null): void {
    this.dispatchEvent(new CustomEvent<CursorDetail>('sn-cursor', { detail: { z }, bubbles: true, composed: true }));
  }
}

customElements.define('sn-plot', SnPlot);

declare global {
  interface HTMLElementTagNameMap {
    'sn-plot': SnPlot;
  }
}
