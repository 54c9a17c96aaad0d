import { LitElement, css, html, nothing } from 'lit';
import type { EditModel } from './model-edits.js';
import { type UnitSystem, displayUnit, formatNumber, formatValue, prettyUnit, toDisplay } from './units.js';
import { dynamicsOf } from './dynamics-edits.js';
import {
  type CrossingResult,
  type DynamicsSolution,
  type EnergyShare,
  type ForcedCheck,
  type ForcedResponse,
  computeCrossings,
  crossingRows,
  fromRadPerS,
  frequencyRows,
  interferenceDiagram,
  localPeaks,
  modeShape,
  readRate,
  sharesText,
  worstSegments,
} from './dynamics-results.js';
import type { ChartBand, ChartLine, ChartMark, ChartSeries } from './sn-dynamics-chart.js';
import './sn-dynamics-chart.js';
import { resultTableStyles } from './shared-styles.js';

/** Colours of the order lines, in turn. */
const ORDER_COLOURS = ['#2b6f8e', '#2f7d5b', '#8a5a00', '#6a3d9a', '#b15928', '#1f78b4'];
const EXCITATION_COLOURS = ['#2f7d5b', '#8a5a00', '#6a3d9a', '#b15928'];

/** What the dynamics results rest on (shown beside them). */
export const DYNAMICS_CAUTIONS: readonly string[] = [
  'Linear and small vibration about the static state: no backlash, no friction, no loss of gear contact.',
  'Damping is your estimate (one ratio ζ on every elastic part): the forced response near a resonance scales with 1/ζ.',
  'No excitation is assumed: only the orders and excitations you list are checked and applied.',
];

/**
 * The dynamics results of a solution: the natural frequencies in Hz and rpm
 * with where each mode's strain and kinetic energy lie (where to stiffen, where
 * inertia moves it most); a mode's shape along each shaft; the speed–frequency
 * interference diagram (running range shaded, its margin lighter, a line per
 * order, the natural frequencies, the crossings marked) with the crossings
 * listed, one inside the widened range a failing check; and the forced
 * response of a chosen segment against speed with its peaks. Nothing when the
 * solution has no modes.
 */
export class SnDynamicsResults extends LitElement {
  static override styles = [resultTableStyles, css`
    td.where { white-space: normal; min-width: 10em; }
    .picker { display: flex; flex-wrap: wrap; gap: 4px 12px; align-items: center; font-size: 13px; margin: 4px 0; }
    .charts { max-width: 760px; }
    aside { border-left: 4px solid #d48a1a; background: #fbf5e8; padding: 4px 12px; font-size: 12.5px; color: #4a4030; margin: 4px 0 8px; }
    aside ul { margin: 2px 0; padding-left: 18px; }
    .summary { font-size: 13.5px; margin: 4px 0; }
    @media print { select { display: none; } }
  `];

  static override properties = {
    solution: { attribute: false },
    model: { attribute: false },
    system: { type: String },
    mode: { state: true },
    segment: { state: true },
    quantity: { state: true },
  };

  declare solution: DynamicsSolution | null;
  declare model: EditModel | null;
  declare system: UnitSystem;
  /** The mode whose shape is drawn (1-based; 0: the first with a frequency above zero). */
  declare private mode: number;
  /** The segment whose forced response is drawn ('' : the one of largest peak). */
  declare private segment: string;
  declare private quantity: 'torque' | 'shear';

  constructor() {
    super();
    this.solution = null;
    this.model = null;
    this.system = 'si';
    this.mode = 0;
    this.segment = '';
    this.quantity = 'torque';
  }

  override render() {
    const s = this.solution;
    const modes = s?.modes;
    if (!s || !modes) return nothing;
    return html`<section class="dynamics" data-dynamics>
      <h3>Dynamics: natural frequencies and speeds to avoid</h3>
      <aside class="dyn-cautions" aria-label="Cautions of the dynamics"><ul>${DYNAMICS_CAUTIONS.map((c) => html`<li>${c}</li>`)}</ul></aside>
      ${this.frequencies(s)} ${this.shapes(s)} ${this.interference(s)} ${this.forced(s.forcedResponse)}
    </section>`;
  }

  private frequencies(s: DynamicsSolution) {
    const rows = frequencyRows(s.modes ?? []);
    if (rows.length === 0) return html`<p class="muted">No natural frequency in the range asked for.</p>`;
    return html`<h4>Natural frequencies</h4>
      <div class="wide"><table class="frequencies">
        <thead><tr><th>Mode</th><th>Frequency [Hz]</th><th>[rpm]</th>
          <th title="Share of the strain energy: stiffening here raises this frequency most">Stiffen here (strain energy)</th>
          <th title="Share of the kinetic energy: inertia added here lowers this frequency most">Inertia acts here (kinetic energy)</th></tr></thead>
        <tbody>
          ${rows.map(
            (r) => html`<tr data-mode=${r.mode} data-hz=${r.hz}>
              <td>${r.mode}</td>
              <td class="num">${r.rigid ? html`0 <span class="muted">(rigid-body)</span>` : formatNumber(r.hz, 6)}</td>
              <td class="num">${formatNumber(r.rpm, 6)}</td>
              <td class="where">${r.rigid ? html`<span class="muted">— (turns as a whole)</span>` : this.shares(r.stiffen)}</td>
              <td class="where">${this.shares(r.inertia)}</td>
            </tr>`,
          )}
        </tbody>
      </table></div>`;
  }

  /** Shares as "k1 71 %, input[0] 20 %", each kept on one line. */
  private shares(list: readonly EnergyShare[]) {
    return list.map((x, i) => html`${i ? ', ' : ''}<span class="nowrap" data-item=${x.item} data-share=${x.share}>${sharesText([x])}</span>`);
  }

  private shapes(s: DynamicsSolution) {
    const modes = s.modes ?? [];
    if (modes.length === 0) return nothing;
    const firstElastic = modes.findIndex((m) => m.frequency > 0) + 1 || 1;
    const pick = this.mode >= 1 && this.mode <= modes.length ? this.mode : firstElastic;
    const mode = modes[pick - 1];
    const lines = modeShape(mode, s);
    const lu = prettyUnit(displayUnit('length', this.system));
    return html`<h4>Mode shape</h4>
      <div class="picker"><label>Mode
        <select data-mode-picker @change=${(e: Event) => (this.mode = Number((e.target as HTMLSelectElement).value))}>
          ${modes.map((m, i) => html`<option value=${i + 1} ?selected=${i + 1 === pick}>${i + 1}: ${formatNumber(m.frequency, 5)} Hz</option>`)}
        </select></label>
        <span class="muted">Rotation along each shaft, scaled so the largest is 1; a sign change is a node (a point that stays still).</span>
      </div>
      <div class="charts">
        ${lines.map((l) => {
          const x = l.z.map((z) => toDisplay(z, 'length', this.system));
          return html`<sn-dynamics-chart data-shape=${l.shaft} label=${`Mode ${pick} (${formatNumber(mode.frequency, 5)} Hz) along ${l.shaft}`}
            xLabel=${`z [${lu}]`} yLabel="φ (relative)" .xMin=${Math.min(...x)} .xMax=${Math.max(...x, Math.min(...x) + 1e-9)} .yMin=${-1.1} .yMax=${1.1}
            .series=${[{ x, y: l.phi, color: '#2b6f8e', label: '', key: l.shaft, width: 2 } satisfies ChartSeries]}
            .lines=${[{ y: 0, label: '', color: '#6b665e' } satisfies ChartLine]}></sn-dynamics-chart>`;
        })}
      </div>`;
  }

  private interference(s: DynamicsSolution) {
    const dyn = dynamicsOf(this.model);
    const modes = s.modes ?? [];
    const min = readRate(dyn?.speed?.min)?.radPerS;
    const max = readRate(dyn?.speed?.max)?.radPerS;
    const orders = dyn?.orders ?? [];
    const margin = dyn?.margin ?? 0;
    if (min === undefined || max === undefined || !(max >= min) || orders.length === 0) {
      return html`<p class="muted">Give the running speed and the orders in the editor’s Dynamics to see the speeds to avoid.</p>`;
    }
    const crossings: readonly CrossingResult[] = s.crossings ?? computeCrossings(modes.map((m) => m.frequency), orders, { min, max, margin });
    const d = interferenceDiagram({ min, max }, margin, orders, modes, crossings);
    const failing = crossings.filter((c) => c.inRange).length;
    const bands: ChartBand[] = [
      { x0: d.band.lo, x1: d.band.hi, color: '#d48a1a', opacity: 0.14, label: `Running range widened by the margin: ${formatNumber(d.band.lo, 5)} to ${formatNumber(d.band.hi, 5)} rpm`, key: 'margin' },
      { x0: d.range.lo, x1: d.range.hi, color: '#d48a1a', opacity: 0.32, label: `Running range: ${formatNumber(d.range.lo, 5)} to ${formatNumber(d.range.hi, 5)} rpm`, key: 'range' },
    ];
    const series: ChartSeries[] = d.orders.map((o, i) => ({ x: [0, o.x1], y: [0, o.y1], color: ORDER_COLOURS[i % ORDER_COLOURS.length], label: `order ${o.order}`, key: `order-${o.order}`, dash: '5 3' }));
    const lines: ChartLine[] = d.frequencies.map((f) => ({ y: f.hz, label: `mode ${f.mode}: ${formatNumber(f.hz, 4)} Hz`, color: '#4a5258', key: `mode-${f.mode}` }));
    const marks: ChartMark[] = d.crossings.map((c) => ({ x: c.x, y: c.y, label: c.inRange ? `${formatNumber(c.rpm, 4)} rpm` : '', fail: c.inRange, key: `m${c.mode}o${c.order}` }));
    const rows = crossingRows(crossings, modes);
    return html`<h4>Speeds to avoid</h4>
      <p class="summary ${failing ? 'fail' : 'ok'}" data-failing-crossings=${failing}>
        ${failing
          ? html`<span aria-hidden="true">⚠ </span>${failing} crossing${failing === 1 ? '' : 's'} inside the running range ± ${formatNumber(margin * 100, 3)} %: resonance possible.`
          : html`No crossing inside the running range ± ${formatNumber(margin * 100, 3)} %.`}
      </p>
      <div class="charts">
        <sn-dynamics-chart data-interference label="Speed–frequency interference" xLabel="speed of the reference shaft [rpm]" yLabel="frequency [Hz]"
          .xMin=${0} .xMax=${d.xMax} .yMin=${0} .yMax=${d.yMax} .bands=${bands} .series=${series} .lines=${lines} .marks=${marks}></sn-dynamics-chart>
      </div>
      <p class="muted">Shaded: the running range (darker) and the margin either side (lighter). A dashed line per order: frequency = order × speed.
        A solid line per natural frequency. ◆ a crossing inside the shaded band (a failing check); ○ one outside.</p>
      ${d.above ? html`<p class="muted">${d.above} higher mode${d.above === 1 ? '' : 's'} above the diagram: no order reaches ${d.above === 1 ? 'it' : 'them'} below ${formatNumber(d.xMax, 4)} rpm.</p>` : nothing}
      <div class="wide"><table class="crossings">
        <thead><tr><th>Mode</th><th>Order</th><th>Frequency [Hz]</th><th>At speed [rpm]</th><th>Check</th></tr></thead>
        <tbody>
          ${rows.map(
            (c) => html`<tr data-crossing data-mode=${c.mode} data-order=${c.order} data-speed=${c.speed} data-in-range=${c.inRange ? 'true' : 'false'}
                data-pass=${c.inRange ? 'false' : 'true'} class=${c.inRange ? 'over' : ''}>
              <td>${c.mode}</td><td>${formatNumber(c.order, 4)}</td><td class="num">${formatNumber(c.hz, 6)}</td><td class="num">${formatNumber(c.rpm, 6)}</td>
              <td class=${c.inRange ? 'fail' : 'ok'}>${c.inRange ? html`<span aria-hidden="true">⚠ </span>IN RUNNING RANGE: avoid` : 'clear of the range'}</td>
            </tr>`,
          )}
        </tbody>
      </table></div>`;
  }

  private forced(fr: ForcedResponse | undefined) {
    if (!fr) {
      const n = dynamicsOf(this.model)?.excitations?.length ?? 0;
      return n ? nothing : html`<p class="muted">No excitation listed: no forced response.</p>`;
    }
    if (fr.segments.length === 0 || fr.speeds.length === 0) return nothing;
    const worst = worstSegments(fr);
    const seg = fr.segments.find((g) => g.item === this.segment) ?? worst[0];
    const kind = this.quantity === 'shear' ? 'stress' : 'torque';
    const unit = prettyUnit(displayUnit(kind, this.system));
    const x = fr.speeds.map((w) => fromRadPerS(w, 'rpm'));
    const ys = (g: { torque: number[]; shear: number[] }) => (this.quantity === 'shear' ? g.shear : g.torque).map((v) => toDisplay(v, kind, this.system));
    const sum = ys(seg);
    const series: ChartSeries[] = [];
    const own = (fr.excitations ?? [])
      .map((e) => ({ id: e.id, g: e.segments.find((g) => g.item === seg.item) }))
      .filter((e): e is { id: string; g: NonNullable<typeof e.g> } => e.g !== undefined);
    own.forEach((e, i) => series.push({ x, y: ys(e.g), color: EXCITATION_COLOURS[i % EXCITATION_COLOURS.length], label: e.id, dash: '4 3', key: `exc-${e.id}` }));
    series.push({ x, y: sum, color: '#b3261e', label: own.length ? 'sum of amplitudes' : 'amplitude', width: 2, key: 'sum' });
    const peakValue = this.quantity === 'shear' ? seg.peakShear : seg.peakTorque;
    // Every resonance the sampled sum shows (inside the range: an end is no resonance), and the engine's resolved peak.
    const marks: ChartMark[] = localPeaks(sum)
      .filter((i) => i > 0 && i < sum.length - 1)
      .map((i) => ({ x: x[i], y: sum[i], label: '', key: `grid-${i}` }));
    if (this.quantity === 'torque' || peakValue !== undefined) {
      const py = toDisplay(peakValue ?? seg.peakTorque, kind, this.system);
      marks.push({ x: fromRadPerS(seg.peakSpeed, 'rpm'), y: py, label: `peak ${formatNumber(py, 4)} ${unit} at ${formatNumber(fromRadPerS(seg.peakSpeed, 'rpm'), 5)} rpm`, fail: false, key: 'peak' });
    }
    const yMax = 1.1 * Math.max(...marks.map((m) => m.y), ...series.flatMap((s) => s.y), 1e-12);
    const tu = prettyUnit(displayUnit('torque', this.system));
    const su = prettyUnit(displayUnit('stress', this.system));
    return html`<h4>Forced response</h4>
      <div class="picker">
        <label>Segment
          <select data-forced-segment @change=${(e: Event) => (this.segment = (e.target as HTMLSelectElement).value)}>
            ${worst.map((g) => html`<option value=${g.item} ?selected=${g.item === seg.item}>${g.item}</option>`)}
          </select></label>
        <label>Show
          <select data-forced-quantity @change=${(e: Event) => (this.quantity = (e.target as HTMLSelectElement).value as 'torque' | 'shear')}>
            <option value="torque" ?selected=${this.quantity === 'torque'}>vibratory torque</option>
            <option value="shear" ?selected=${this.quantity === 'shear'}>vibratory shear stress</option>
          </select></label>
      </div>
      <div class="charts">
        <sn-dynamics-chart data-forced=${seg.item} label=${`Vibratory ${this.quantity === 'shear' ? 'shear stress' : 'torque'} amplitude in ${seg.item}`}
          xLabel="speed of the reference shaft [rpm]" yLabel=${`[${unit}]`} .xMin=${Math.min(...x)} .xMax=${Math.max(...x, Math.min(...x) + 1e-9)}
          .yMin=${0} .yMax=${yMax} .series=${series} .marks=${marks}></sn-dynamics-chart>
      </div>
      <div class="wide"><table class="forced">
        <thead><tr><th>Segment</th><th>Peak torque [${tu}]</th><th>Peak shear [${su}]</th><th>At speed [rpm]</th></tr></thead>
        <tbody>
          ${worst.map(
            (g) => html`<tr data-forced-row=${g.item} data-peak-torque=${g.peakTorque} data-peak-speed=${g.peakSpeed}>
              <td>${g.item}</td><td class="num">${formatValue(g.peakTorque, 'torque', this.system, 4)}</td>
              <td class="num">${g.peakShear === undefined ? formatValue(Math.max(0, ...g.shear), 'stress', this.system, 4) : formatValue(g.peakShear, 'stress', this.system, 4)}</td>
              <td class="num">${formatNumber(fromRadPerS(g.peakSpeed, 'rpm'), 5)}</td>
            </tr>`,
          )}
        </tbody>
      </table></div>
      ${this.forcedChecks(fr.checks ?? [])}`;
  }

  /** The check of each layer: peak vibratory plus peak static shear against the allowable, worst first. */
  private forcedChecks(checks: readonly ForcedCheck[]) {
    if (checks.length === 0) return nothing;
    const su = prettyUnit(displayUnit('stress', this.system));
    const S = (x: number) => formatValue(x, 'stress', this.system, 4);
    return html`<h4>Vibratory + static shear against the allowable</h4>
      <div class="wide"><table class="forced-checks">
        <thead><tr><th>Segment</th><th>Layer</th><th>Vibratory [${su}]</th><th>At [rpm]</th><th>Static [${su}]</th><th>Sum [${su}]</th><th>Allowable [${su}]</th><th>Utilisation</th><th>Result</th></tr></thead>
        <tbody>
          ${checks.map(
            (c) => html`<tr data-forced-check=${`${c.shaft}[${c.segment}]`} data-utilisation=${c.utilisation} class=${c.pass ? '' : 'over'}>
              <td>${c.shaft}[${c.segment}]</td><td>${c.material}</td><td class="num">${S(c.vibratory)}</td>
              <td class="num">${formatNumber(fromRadPerS(c.speed, 'rpm'), 5)}</td><td class="num">${c.static === null ? '—' : S(c.static)}</td>
              <td class="num">${S(c.value)}</td><td class="num">${S(c.limit)}</td><td class="num">${formatNumber(c.utilisation, 3)}</td>
              <td class=${c.pass ? 'ok' : 'fail'}>${c.pass ? 'ok' : 'FAILS'}</td>
            </tr>`,
          )}
        </tbody>
      </table></div>`;
  }
}

customElements.define('sn-dynamics-results', SnDynamicsResults);

declare global {
  interface HTMLElementTagNameMap {
    'sn-dynamics-results': SnDynamicsResults;
  }
}
