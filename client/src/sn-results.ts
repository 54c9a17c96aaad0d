import { LitElement, css, html, nothing } from 'lit';
import type { Solution } from '../../shared-types/solution.js';
import type { EditModel } from './model-edits.js';
import type { SelectDetail } from './sn-table.js';
import { type FieldKind, type UnitSystem, displayUnit, formatNumber, formatQuantity, formatValue, prettyUnit } from './units.js';
import type { CursorDetail } from './sn-plot.js';
import type { SectionLike } from './section-geometry.js';
import { type AnyCheck, checkLabel, raisersOf, shaftPeaks } from './raiser-results.js';
import { valueAt } from './diagram-readout.js';
import { type CasesSolution, type OverloadResult, combinationLabel, combinationName, governingOf, overloadSentence, rotationBand, torqueBand } from './cases-results.js';
import './sn-plot.js';
import './sn-segment-table.js';
import './sn-station-table.js';
import './sn-dynamics-results.js';
import { resultTableStyles } from './shared-styles.js';

/** Where the results stand against the model on screen. */
export type ResultState = 'none' | 'fresh' | 'stale' | 'solving' | 'invalid' | 'failed';

const CHECK_KIND: Record<AnyCheck['kind'], { label: string; kind: FieldKind }> = {
  shear: { label: 'Shear stress', kind: 'stress' },
  twistRate: { label: 'Twist rate', kind: 'twistRate' },
  totalTwist: { label: 'Total twist', kind: 'angle' },
  localPeak: { label: 'Local peak', kind: 'stress' },
  crossing: { label: 'Resonance in running range', kind: 'angularSpeed' },
};

/** Checks listed before "Show all": the worst ones. */
const CHECKS_SHOWN = 12;

/** Index of the largest |value|. */
function peakIndex(values: readonly number[]): number {
  let best = -1;
  let bestAbs = -1;
  values.forEach((v, i) => {
    if (Math.abs(v) > bestAbs) {
      bestAbs = Math.abs(v);
      best = i;
    }
  });
  return best;
}

/**
 * The answer for a model: state banner, reactions, mesh and coupling results,
 * the equilibrium residual, warnings, the check table (worst first: "65.3 of
 * 55 MPa", an over-limit row marked by a sign, a word and a hatched bar, not by
 * colour alone) and, per shaft, its segments (J, G·J, k), diagrams of torque,
 * rotation and shear along z with a readout at the cursor's z, and its stations.
 *
 * @fires sn-select - {pointer}: a result row for a model item was clicked
 */
export class SnResults extends LitElement {
  static override styles = [resultTableStyles, css`
    .banner { padding: 6px 10px; border-radius: 4px; margin: 0 0 8px; font-size: 13px; display: flex; gap: 8px; align-items: center; }
    .banner.fresh { background: #e3f1e8; color: #1f5a3a; }
    .banner.stale, .banner.solving { background: #fdf1d8; color: #7a4f00; }
    .banner.invalid, .banner.failed { background: #fbe3e1; color: #8c1d18; }
    .spinner { width: 10px; height: 10px; border: 2px solid currentColor; border-right-color: transparent; border-radius: 50%; animation: spin 0.8s linear infinite; }
    @keyframes spin { to { transform: rotate(360deg); } }
    .body.dim { opacity: 0.45; filter: grayscale(0.6); }
    tr.click { cursor: pointer; }
    tr.click:hover td { background: #f3efe6; }
    tr.selected td { background: #fbeed3; }
    .bar { display: inline-block; height: 8px; background: #2b6f8e; vertical-align: middle; border-radius: 2px; }
    .bar.over { background: repeating-linear-gradient(135deg, #b3261e 0 4px, #f3c1bc 4px 7px); outline: 1px solid #8c1d18; }
    .status { white-space: nowrap; }
    .readout { font-size: 12.5px; color: #1d3a4a; background: #eef5f8; border-radius: 3px; padding: 3px 8px; margin: 2px 0 4px; min-height: 1.3em; font-variant-numeric: tabular-nums; }
    .readout.idle { color: #6b665e; background: none; }
    button.more { font: inherit; font-size: 12px; border: 1px solid #c8c4bb; background: #fff; border-radius: 3px; padding: 2px 8px; cursor: pointer; }
    .barbox { display: inline-block; width: 80px; background: #ece8e0; border-radius: 2px; margin-right: 4px; vertical-align: middle; text-align: left; line-height: 0; }
    .warn { background: #fdf1d8; color: #7a4f00; padding: 4px 8px; border-radius: 4px; margin: 4px 0; font-size: 13px; }
    .plots { display: grid; grid-template-columns: 1fr; gap: 2px; max-width: 760px; }
    .picker { display: flex; flex-wrap: wrap; gap: 4px 12px; align-items: center; font-size: 13px; margin: 0 0 8px; padding: 4px 8px; background: #eef5f8; border-radius: 4px; }
    .overload { border-left: 3px solid #1d3a4a; padding: 2px 8px; margin: 6px 0 8px; }
    .overload p { margin: 2px 0; }
    .overload-line { font-size: 13.5px; color: #1d3a4a; }
    td.governs { white-space: normal; min-width: 7em; max-width: 10em; }
    .shaft { break-inside: avoid; page-break-inside: avoid; }
    @media print { .banner.fresh, .readout.idle { display: none; } .body.dim { opacity: 1; filter: none; } }
  `];

  static override properties = {
    solution: { attribute: false },
    model: { attribute: false },
    system: { type: String },
    state: { type: String },
    message: { type: String },
    selected: { type: String },
    cursors: { state: true },
    allChecks: { state: true },
  };

  declare solution: Solution | null;
  declare model: EditModel | null;
  declare system: UnitSystem;
  declare state: ResultState;
  /** Why the results are not fresh (an API message), shown in the banner. */
  declare message: string;
  declare selected: string;
  /** The reading cursor's z (m) per shaft id. */
  declare private cursors: Readonly<Record<string, number>>;
  /** Show every check, not only the worst ones. */
  declare private allChecks: boolean;

  constructor() {
    super();
    this.solution = null;
    this.model = null;
    this.system = 'si';
    this.state = 'none';
    this.message = '';
    this.selected = '';
    this.cursors = {};
    this.allChecks = false;
  }

  override render() {
    const s = this.solution;
    return html`${this.banner()}
      ${s
        ? html`<div class="body ${this.state === 'fresh' ? '' : 'dim'}" data-state=${this.state}>
            ${this.picker(s)}
            ${s.warnings.map((w) => html`<div class="warn" data-warning=${w.code}>⚠ ${w.message}</div>`)} ${this.overload(s)} ${this.reactions(s)}
            ${this.reactionEnvelope(s)} ${this.connections(s)}
            <p class="muted" data-residual=${s.equilibrium.maxResidual}>
              Equilibrium: largest residual of Σ torques on a shaft = ${formatValue(s.equilibrium.maxResidual, 'torque', this.system, 3)}
              ${prettyUnit(displayUnit('torque', this.system))}.
            </p>
            ${this.checks(s)} ${this.raisers(s)} ${s.shafts.map((sh) => this.shaftPlots(sh))}
            <sn-dynamics-results .solution=${s} .model=${this.model} .system=${this.system}></sn-dynamics-results>
          </div>`
        : nothing}`;
  }

  private banner() {
    switch (this.state) {
      case 'fresh':
        return html`<div class="banner fresh" role="status" data-status="fresh">Results are up to date with the model.</div>`;
      case 'stale':
        return html`<div class="banner stale" role="status" data-status="stale">Results are out of date: the model changed; solving shortly…</div>`;
      case 'solving':
        return html`<div class="banner solving" role="status" data-status="solving"><span class="spinner"></span>Solving… results below are out of date.</div>`;
      case 'invalid':
        return html`<div class="banner invalid" role="alert" data-status="invalid">
          Not solved: ${this.message || 'the model has errors'}. ${this.solution ? 'Results below are for an earlier version.' : ''}
        </div>`;
      case 'failed':
        return html`<div class="banner failed" role="alert" data-status="failed">Solve failed: ${this.message}. ${this.solution ? 'Results below are for an earlier version.' : ''}</div>`;
      default:
        return html`<div class="banner stale" data-status="none">No results yet.</div>`;
    }
  }

  private unit(kind: FieldKind): string {
    return prettyUnit(displayUnit(kind, this.system));
  }

  private indexOf(list: 'supports' | 'gearMeshes' | 'couplings', id: string): number {
    return ((this.model?.[list] ?? []) as Array<{ id: string }>).findIndex((r) => r.id === id);
  }

  private rowClass(list: 'supports' | 'gearMeshes' | 'couplings', id: string): string {
    const i = this.indexOf(list, id);
    return i >= 0 && this.selected === `/${list}/${i}` ? 'click selected' : 'click';
  }

  private pickRow(list: 'supports' | 'gearMeshes' | 'couplings', id: string): void {
    const i = this.indexOf(list, id);
    if (i >= 0) this.dispatchEvent(new CustomEvent<SelectDetail>('sn-select', { detail: { pointer: `/${list}/${i}` }, bubbles: true, composed: true }));
  }

  /**
   * The combination picker: which combination's single state the tables and
   * lines show (the envelope bands cover them all). Picking one solves again.
   */
  private picker(s: CasesSolution) {
    const combos = s.combinations ?? [];
    if (combos.length === 0) return nothing;
    const shown = s.combination ?? combos[0].id;
    return html`<div class="picker">
      <label>Combination shown
        <select data-combination-picker .value=${shown}
          @change=${(e: Event) => this.dispatchEvent(new CustomEvent<{ id: string }>('sn-combination', { detail: { id: (e.target as HTMLSelectElement).value }, bubbles: true, composed: true }))}>
          ${combos.map((c) => html`<option value=${c.id} ?selected=${c.id === shown}>${combinationLabel(c)}</option>`)}
        </select>
      </label>
      <span class="muted">Tables and lines: this combination. Shaded bands and “worst in”: all ${combos.length} combinations.</span>
    </div>`;
  }

  /** The overload factors of the shown state in plain words, with the cautions they rest on. */
  private overload(s: CasesSolution) {
    const o: OverloadResult | undefined = s.overload;
    if (!o) return nothing;
    const who = s.combination !== undefined ? combinationName(s, s.combination) : null;
    const { line, where } = overloadSentence(o, who, this.system);
    return html`<div class="overload" data-first-yield=${o.firstYieldFactor ?? ''} data-collapse=${o.collapseFactor ?? ''}>
      <p class="overload-line"><strong>Overload.</strong> ${line}</p>
      ${where ? html`<p class="muted">${where}</p>` : nothing}
      <p class="muted">Taken with the material elastic–perfectly plastic; gear teeth, couplings and spring supports are taken as strong enough;
        prescribed rotations, misfits and offsets are held while the loads grow.</p>
    </div>`;
  }

  /** Per support the extreme reactions over all combinations, with the combination of each. */
  private reactionEnvelope(s: CasesSolution) {
    const rows = s.envelope?.reactions ?? [];
    if (rows.length === 0) return nothing;
    const t = this.unit('torque');
    return html`<h4>Reactions over all combinations</h4>
      <table class="reaction-envelope">
        <thead><tr><th>Support</th><th>Least [${t}]</th><th>in</th><th>Greatest [${t}]</th><th>in</th></tr></thead>
        <tbody>
          ${rows.map(
            (r) => html`<tr data-support=${r.support}>
              <td>${r.support}</td>
              <td class="num" data-min=${r.min}>${formatValue(r.min, 'torque', this.system)}</td><td data-min-combination=${r.minCombination}>${combinationName(s, r.minCombination)}</td>
              <td class="num" data-max=${r.max}>${formatValue(r.max, 'torque', this.system)}</td><td data-max-combination=${r.maxCombination}>${combinationName(s, r.maxCombination)}</td>
            </tr>`,
          )}
        </tbody>
      </table>`;
  }

  private reactions(s: Solution) {
    return html`<h3>Reactions at the supports</h3>
      <table class="reactions">
        <thead><tr><th>Support</th><th>Shaft</th><th>Kind</th><th>Torque [${this.unit('torque')}]</th><th>Rotation [${this.unit('angle')}]</th></tr></thead>
        <tbody>
          ${s.reactions.map(
            (r) => html`<tr class=${this.rowClass('supports', r.support)} data-support=${r.support} @click=${() => this.pickRow('supports', r.support)}>
              <td>${r.support}</td><td>${r.shaft}</td><td>${r.kind}</td>
              <td class="num torque" data-si=${r.torque}>${formatValue(r.torque, 'torque', this.system)}</td>
              <td class="num">${formatValue(r.rotation, 'angle', this.system)}</td>
            </tr>`,
          )}
        </tbody>
      </table>`;
  }

  private connections(s: Solution) {
    return html`${s.gearMeshes.length
      ? html`<h3>Gear meshes</h3>
          <table class="meshes">
            <thead><tr><th>Mesh</th><th>Tangential force [${this.unit('force')}]</th><th>Torque on A [${this.unit('torque')}]</th><th>Torque on B [${this.unit('torque')}]</th><th>Gap [${this.unit('length')}]</th></tr></thead>
            <tbody>
              ${s.gearMeshes.map(
                (g) => html`<tr class=${this.rowClass('gearMeshes', g.gearMesh)} data-mesh=${g.gearMesh} @click=${() => this.pickRow('gearMeshes', g.gearMesh)}>
                  <td>${g.gearMesh}</td><td class="num">${formatValue(g.force, 'force', this.system)}</td>
                  <td class="num">${formatValue(g.torqueA, 'torque', this.system)}</td><td class="num">${formatValue(g.torqueB, 'torque', this.system)}</td>
                  <td class="num">${formatValue(g.gap, 'length', this.system)}</td>
                </tr>`,
              )}
            </tbody>
          </table>`
      : nothing}
    ${s.couplings.length
      ? html`<h3>Couplings</h3>
          <table class="couplings">
            <thead><tr><th>Coupling</th><th>Torque on A [${this.unit('torque')}]</th><th>Torque on B [${this.unit('torque')}]</th><th>Twist across [${this.unit('angle')}]</th></tr></thead>
            <tbody>
              ${s.couplings.map(
                (c) => html`<tr class=${this.rowClass('couplings', c.coupling)} data-coupling=${c.coupling} @click=${() => this.pickRow('couplings', c.coupling)}>
                  <td>${c.coupling}</td><td class="num">${formatValue(c.torqueA, 'torque', this.system)}</td>
                  <td class="num">${formatValue(c.torqueB, 'torque', this.system)}</td><td class="num">${formatValue(c.twist, 'angle', this.system)}</td>
                </tr>`,
              )}
            </tbody>
          </table>`
      : nothing}`;
  }

  private checks(s: Solution) {
    const sorted = [...(s.checks as AnyCheck[])].sort((a, b) => b.utilisation - a.utilisation);
    // The worst ones first; the rest on request (a long shaft has a check per segment and layer).
    const rows = this.allChecks ? sorted : sorted.slice(0, CHECKS_SHOWN);
    if (rows.length === 0) return html`<h3>Checks</h3><p class="muted">No checks: give materials an allowable shear stress, or set limits.</p>`;
    const cs = s as CasesSolution;
    const combos = (cs.combinations ?? []).length > 0;
    const shownIn = combos && cs.combination !== undefined ? ` (${combinationName(cs, cs.combination)})` : '';
    return html`<h3>Checks, worst first${shownIn}</h3>
      <div class="wide"><table class="checks">
        <thead><tr><th>Shaft</th><th>Segment</th><th>Layer</th><th>Check</th><th>Value of allowed</th><th>Utilisation</th><th>Status</th>
          ${combos ? html`<th title="The combination where this check is worst, and its utilisation there">Worst in</th>` : nothing}</tr></thead>
        <tbody>
          ${rows.map((c) => {
            const k = CHECK_KIND[c.kind] ?? { label: c.kind, kind: 'stress' };
            const u = c.utilisation;
            const over = !c.pass;
            return html`<tr data-check=${c.kind} class=${over ? 'over' : ''} data-pass=${c.pass ? 'true' : 'false'} data-shaft=${c.shaft} data-segment=${c.segment ?? ''}>
              <td>${c.shaft}</td><td>${c.segment === undefined ? '—' : c.segment + 1}</td>
              <td>${c.layer === undefined ? '—' : `${c.layer + 1}${c.material ? ` (${c.material})` : ''}`}</td>
              <td>${checkLabel(c, k.label)}</td>
              <td class="num value-of">${formatValue(c.value, k.kind, this.system, 3)} of ${formatValue(c.limit, k.kind, this.system, 3)} ${this.unit(k.kind)}</td>
              <td class="num"><span class="barbox" aria-hidden="true"><span class="bar ${over ? 'over' : ''}" style="width:${Math.min(100, u * 100).toFixed(1)}%"></span></span>${formatNumber(u * 100, 3)} %</td>
              <td class="status ${over ? 'fail' : 'ok'}">${over ? html`<span aria-hidden="true">⚠ </span>EXCEEDS by ${formatNumber((u - 1) * 100, 3)} %` : 'ok'}</td>
              ${combos ? this.worstIn(cs, c) : nothing}
            </tr>`;
          })}
        </tbody>
      </table></div>
      ${sorted.length > rows.length
        ? html`<button class="more" @click=${() => (this.allChecks = true)}>Show all ${sorted.length} checks</button>`
        : nothing}`;
  }

  /** The governing combination of a check and its utilisation there (over-limit marked by a sign and a word). */
  private worstIn(s: CasesSolution, c: AnyCheck) {
    const g = governingOf(s, c);
    if (!g) return html`<td class="muted">—</td>`;
    const over = g.utilisation !== null && g.utilisation > 1;
    return html`<td class="governs ${over ? 'fail' : ''}" data-governing=${g.combination} data-utilisation=${g.utilisation ?? ''}>
      ${over ? html`<span aria-hidden="true">⚠ </span>` : nothing}${combinationName(s, g.combination)}${g.utilisation === null ? '' : html`: <span class="nowrap">${formatNumber(g.utilisation * 100, 3)} %</span>`}${over ? ' EXCEEDS' : ''}
    </td>`;
  }

  /** The stress raisers: factor, nominal and local peak stress, and the check against the allowable. */
  private raisers(s: Solution) {
    const rows = raisersOf(s);
    if (rows.length === 0) return nothing;
    const st = this.unit('stress');
    return html`<h3>Stress raisers: local peaks</h3>
      <table class="raisers">
        <thead><tr><th>Raiser</th><th>Shaft</th><th>At z [${this.unit('length')}]</th><th>Kind</th><th title="Stress concentration factor in torsion">Kts</th>
          <th>Nominal τ [${st}]</th><th>Local peak of allowed [${st}]</th><th>Utilisation</th></tr></thead>
        <tbody>
          ${rows.map((r) => {
            const over = r.utilisation !== null && r.utilisation > 1;
            return html`<tr data-raiser=${r.id} class=${over ? 'over' : ''}>
              <td>${r.id}</td><td>${r.shaft}</td><td class="num">${formatValue(r.z, 'length', this.system, 4)}</td>
              <td>${r.kind}${r.note ? html` <span class="muted">(${r.note})</span>` : nothing}</td>
              <td class="num" data-factor=${r.factor}>${formatNumber(r.factor, 3)}</td>
              <td class="num">${formatValue(Math.abs(r.nominalShear), 'stress', this.system, 4)}</td>
              <td class="num" data-local=${r.localPeak}>${formatValue(r.localPeak, 'stress', this.system, 4)}${r.allowableShear === null ? '' : ` of ${formatValue(r.allowableShear, 'stress', this.system, 3)}`}</td>
              <td class="num ${over ? 'fail' : ''}">${r.utilisation === null ? '—' : html`${over ? html`<span aria-hidden="true">⚠ </span>` : nothing}${formatNumber(r.utilisation * 100, 3)} %`}</td>
            </tr>`;
          })}
        </tbody>
      </table>`;
  }

  private shaftPlots(sh: Solution['shafts'][number]) {
    const d = sh.diagram;
    const breaks = sh.segments.slice(1).map((g) => g.from);
    const cz = this.cursors[sh.id] ?? null;
    const env = (this.solution as CasesSolution | null)?.envelope?.shafts.find((e) => e.id === sh.id) ?? null;
    const tBand = env ? torqueBand(env.stations) : null;
    const rBand = env ? rotationBand(env.stations) : null;
    const cs = this.solution as CasesSolution | null;
    const of = env && cs?.combination !== undefined ? ` — ${combinationName(cs, cs.combination)}; band: all combinations` : '';
    const onCursor = (e: CustomEvent<CursorDetail>) => {
      const { [sh.id]: _drop, ...rest } = this.cursors;
      this.cursors = e.detail.z === null ? rest : { ...rest, [sh.id]: e.detail.z };
    };
    return html`<div class="shaft" data-shaft=${sh.id}>
      <h4>${sh.name ? `${sh.name} (${sh.id})` : sh.id}
        <span class="muted">— length ${formatValue(sh.length, 'length', this.system)} ${this.unit('length')}, largest relative twist
        ${formatValue(sh.totalTwist, 'angle', this.system, 4)} ${this.unit('angle')}</span></h4>
      <sn-segment-table .shaft=${sh} .system=${this.system} .sections=${(this.model?.sections ?? []) as unknown as SectionLike[]}
        .envelope=${env} .names=${this.combinationNames(cs)}></sn-segment-table>
      ${this.readout(sh, cz)}
      <div class="plots" @sn-cursor=${onCursor}>
        <sn-plot .z=${d.z} .values=${d.torque} kind="torque" .system=${this.system} label=${`Internal torque T${of}`} color="#2b6f8e" .markIndex=${peakIndex(d.torque)} .breaks=${breaks} .cursor=${cz} .band=${tBand}></sn-plot>
        <sn-plot .z=${d.z} .values=${d.rotation} kind="angle" .system=${this.system} label=${`Rotation φ${of}`} color="#2f7d5b" .markIndex=${peakIndex(d.rotation)} .breaks=${breaks} .cursor=${cz} .band=${rBand}></sn-plot>
        <sn-plot .z=${d.z} .values=${d.shear} kind="stress" .system=${this.system} label="Peak shear τ" color="#b3261e" .markIndex=${peakIndex(d.shear)} .breaks=${breaks} .cursor=${cz}
          .peaks=${shaftPeaks(this.solution, sh.id)}></sn-plot>
      </div>
      <sn-station-table .shaft=${sh} .system=${this.system}></sn-station-table>
    </div>`;
  }

  private namesCache: { s: CasesSolution | null; names: Readonly<Record<string, string>> } = { s: null, names: {} };

  /** Combination names by id (the same object for the same solution, so the segment tables do not re-render for it). */
  private combinationNames(s: CasesSolution | null): Readonly<Record<string, string>> {
    if (this.namesCache.s !== s) this.namesCache = { s, names: Object.fromEntries((s?.combinations ?? []).map((c) => [c.id, c.name ?? c.id])) };
    return this.namesCache.names;
  }

  /** T, φ and τ of a shaft at the cursor's z, or how to get a reading. */
  private readout(sh: Solution['shafts'][number], z: number | null) {
    const d = sh.diagram;
    if (z === null) {
      return html`<p class="readout idle" aria-live="polite" data-readout="">Point at a diagram (or focus it and press ← →) to read T, φ and τ at any z.</p>`;
    }
    const q = (values: readonly number[], kind: FieldKind) => formatQuantity(valueAt(d.z, values, z), kind, this.system, 4);
    return html`<p class="readout" aria-live="polite" data-readout=${z}>
      At z = ${formatQuantity(z, 'length', this.system, 4)}: T = ${q(d.torque, 'torque')}, φ = ${q(d.rotation, 'angle')}, τ = ${q(d.shear, 'stress')}
    </p>`;
  }
}

customElements.define('sn-results', SnResults);

declare global {
  interface HTMLElementTagNameMap {
    'sn-results': SnResults;
  }
}
