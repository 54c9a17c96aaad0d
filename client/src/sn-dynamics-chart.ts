import { LitElement, css, html, nothing, svg } from 'lit';
import { formatNumber } from './units.js';
import { linearScale, niceTicks } from './chart-scale.js';
import { chartStyles } from './shared-styles.js';

const PW = 680; // px, viewBox width
const PH = 240; // px, viewBox height
const ML = 62; // px, room for the value ticks and the rotated axis label
const MR = 14;
const MT = 22;
const MB = 32;

/** A line through points, in the chart's own numbers (display units). */
export interface ChartSeries { x: readonly number[]; y: readonly number[]; color: string; label: string; dash?: string; width?: number; key?: string }
/** A horizontal line across the chart (a natural frequency). */
export interface ChartLine { y: number; label: string; color: string; key?: string }
/** A shaded vertical band (the running range, its margin). */
export interface ChartBand { x0: number; x1: number; color: string; opacity: number; label: string; key?: string }
/** A marked point (a crossing, a peak); `fail` draws it as a failing check. */
export interface ChartMark { x: number; y: number; label: string; fail?: boolean; key?: string }

/**
 * A small x–y chart of the dynamics results: shaded vertical bands under
 * everything, horizontal lines, lines through points, and marked points with
 * their labels. Numbers come in the units the axis labels name (the parent
 * converts from SI). No pointer reading: the tables beside each chart hold the numbers.
 */
export class SnDynamicsChart extends LitElement {
  static override styles = [chartStyles, css`
    .lbl { font-size: 11px; paint-order: stroke; stroke: #fff; stroke-width: 3px; }
    .legend { font-size: 11px; fill: #4a5258; }
  `];

  static override properties = {
    label: { type: String },
    xLabel: { type: String },
    yLabel: { type: String },
    xMin: { type: Number },
    xMax: { type: Number },
    yMin: { type: Number },
    yMax: { type: Number },
    series: { attribute: false },
    lines: { attribute: false },
    bands: { attribute: false },
    marks: { attribute: false },
  };

  declare label: string;
  declare xLabel: string;
  declare yLabel: string;
  declare xMin: number;
  declare xMax: number;
  declare yMin: number;
  declare yMax: number;
  declare series: readonly ChartSeries[];
  declare lines: readonly ChartLine[];
  declare bands: readonly ChartBand[];
  declare marks: readonly ChartMark[];

  constructor() {
    super();
    this.label = '';
    this.xLabel = '';
    this.yLabel = '';
    this.xMin = 0;
    this.xMax = 1;
    this.yMin = 0;
    this.yMax = 1;
    this.series = [];
    this.lines = [];
    this.bands = [];
    this.marks = [];
  }

  override render() {
    const X = linearScale(this.xMin, this.xMax, ML, PW - MR);
    const Y = linearScale(this.yMin, this.yMax, PH - MB, MT);
    const clipX = (x: number) => Math.min(PW - MR, Math.max(ML, X(x)));
    const xt = niceTicks(this.xMin, this.xMax, 8);
    const yt = niceTicks(this.yMin, this.yMax, 5);
    const legend = this.series.filter((s) => s.label);
    return html`<svg viewBox="0 0 ${PW} ${PH}" role="img" aria-label=${this.label}>
      <text class="title" x=${ML} y="14">${this.label}</text>
      ${this.bands.map(
        (b) => svg`<rect class="band" data-key=${b.key ?? ''} x=${clipX(b.x0)} width=${Math.max(0, clipX(b.x1) - clipX(b.x0))} y=${MT} height=${PH - MT - MB}
          fill=${b.color} fill-opacity=${b.opacity}><title>${b.label}</title></rect>`,
      )}
      ${yt.map((t) => svg`<line x1=${ML} x2=${PW - MR} y1=${Y(t)} y2=${Y(t)} stroke="#e4e0d8"/>
        <text class="tick" x=${ML - 5} y=${Y(t) + 3} text-anchor="end">${formatNumber(t, 4)}</text>`)}
      ${xt.map((t) => svg`<text class="tick" x=${X(t)} y=${PH - MB + 13} text-anchor="middle">${formatNumber(t, 4)}</text>`)}
      <text class="tick" x=${PW - MR} y=${PH - 4} text-anchor="end">${this.xLabel}</text>
      <text class="tick" transform="rotate(-90)" x=${-(MT + (PH - MT - MB) / 2)} y="11" text-anchor="middle">${this.yLabel}</text>
      <line x1=${ML} x2=${PW - MR} y1=${PH - MB} y2=${PH - MB} stroke="#6b665e"/>
      <line x1=${ML} x2=${ML} y1=${MT} y2=${PH - MB} stroke="#6b665e"/>
      ${this.lines.map(
        (l) => svg`<g class="hline" data-key=${l.key ?? ''} data-y=${l.y}>
          <line x1=${ML} x2=${PW - MR} y1=${Y(l.y)} y2=${Y(l.y)} stroke=${l.color} stroke-width="1.4"/>
          <text class="lbl" x=${PW - MR - 2} y=${Y(l.y) - 3} text-anchor="end" fill=${l.color}>${l.label}</text>
        </g>`,
      )}
      ${this.series.map(
        (s) => svg`<polyline class="series" data-key=${s.key ?? ''} fill="none" stroke=${s.color} stroke-width=${s.width ?? 1.6}
          stroke-dasharray=${s.dash ?? 'none'} stroke-linejoin="round"
          points=${s.x.map((x, i) => `${X(x).toFixed(2)},${Y(s.y[i]).toFixed(2)}`).join(' ')}><title>${s.label}</title></polyline>`,
      )}
      ${this.marks.map((m) => {
        const x = X(m.x);
        const y = Y(m.y);
        const right = x < PW * 0.7;
        return svg`<g class="mark ${m.fail ? 'fail' : ''}" data-key=${m.key ?? ''} data-x=${m.x} data-y=${m.y}>
          ${m.fail
            ? svg`<path d="M${x} ${y - 6} l6 6 l-6 6 l-6 -6 Z" fill="#b3261e" stroke="#8c1d18" stroke-width="1.2"/>`
            : svg`<circle cx=${x} cy=${y} r="4" fill="#fff" stroke="#1d3a4a" stroke-width="1.6"/>`}
          ${m.label ? svg`<text class="lbl" x=${right ? x + 8 : x - 8} y=${y < MT + 12 ? y + 14 : y - 6} text-anchor=${right ? 'start' : 'end'}
            fill=${m.fail ? '#8c1d18' : '#1d3a4a'}>${m.label}</text>` : nothing}
        </g>`;
      })}
      ${legend.map(
        (s, i) => svg`<g class="legend-item"><line x1=${ML + 8 + i * 120} x2=${ML + 28 + i * 120} y1=${PH - 6} y2=${PH - 6} stroke=${s.color} stroke-width="2"
          stroke-dasharray=${s.dash ?? 'none'}/><text class="legend" x=${ML + 32 + i * 120} y=${PH - 2}>${s.label}</text></g>`,
      )}
    </svg>`;
  }
}

customElements.define('sn-dynamics-chart', SnDynamicsChart);

declare global {
  interface HTMLElementTagNameMap {
    'sn-dynamics-chart': SnDynamicsChart;
  }
}
