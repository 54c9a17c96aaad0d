import { LitElement, css, html, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import { type EditModel, getAt } from './model-edits.js';
import { type Column, type EditDetail, type RowDetail, messageId } from './sn-table.js';
import type { UnitSystem } from './units.js';
import { editorPartStyles } from './shared-styles.js';
import {
  type DynamicsInput,
  type ModesBy,
  dynamicsOf,
  marginText,
  modesBy,
  newDynamics,
  ordersText,
  parseMargin,
  parseOrders,
  switchModesBy,
  withExcitation,
  withoutExcitation,
} from './dynamics-edits.js';
import { FREQUENCY_UNITS, type RateUnit, SPEED_UNITS, convertRate, parseRateInput, rateText, readRate } from './dynamics-results.js';
import './sn-table.js';

type Row = Record<string, unknown>;

/** The fields of /dynamics that hold a rate (a speed or a frequency). */
const RATE_FIELDS: ReadonlySet<string> = new Set(['/dynamics/speed/min', '/dynamics/speed/max', '/dynamics/maxFrequency']);

/**
 * The editor's dynamics panel: adds or removes the model's `dynamics` and edits
 * it: the modes (the lowest N, or all up to a frequency), the reference shaft
 * and its operating range in rpm, Hz or rad/s, the excitation orders, the
 * margin around each crossing (%), the damping ratio ζ and the excitations
 * (a table like the other lists). Every change goes up as `sn-edit`, so the
 * app's history records it (undo works); a field the server names is marked
 * with its message. `focusPointer` shows and focuses a field under /dynamics.
 *
 * @fires sn-edit - {pointer, value}: a field of /dynamics changed (value undefined removes it)
 */
export class SnDynamicsPanel extends LitElement {
  static override styles = [editorPartStyles, css`
    .grid { display: grid; grid-template-columns: max-content 1fr; gap: 4px 8px; align-items: start; font-size: 13px; margin: 4px 0; }
    .grid > label { padding-top: 3px; color: #4a5258; }
    .row { display: flex; flex-wrap: wrap; gap: 4px; align-items: center; }
    input, select { font: inherit; font-size: 13px; padding: 2px 4px; border: 1px solid #c8c4bb; border-radius: 3px; background: #fff; box-sizing: border-box; }
    input:focus, select:focus { outline: 2px solid #2b6f8e; outline-offset: -1px; border-color: #2b6f8e; }
    .msg { color: #b3261e; font-size: 11px; max-width: 26em; line-height: 1.25; }
    button { font: inherit; font-size: 12px; cursor: pointer; border: 1px solid #c8c4bb; background: #fff; border-radius: 3px; padding: 2px 8px; }
    button.remove-dyn { color: #8c1d18; margin-left: 6px; }
    h4 { margin: 8px 0 2px; font-size: 12px; font-weight: 600; color: #4a5258; }
    .unit { color: #6b665e; font-size: 12px; }
    @media print { button { display: none; } }
  `];

  static override properties = {
    model: { attribute: false },
    system: { type: String },
    errors: { attribute: false },
    selected: { type: String },
    problems: { state: true },
  };

  declare model: EditModel | null;
  declare system: UnitSystem;
  /** Messages by JSON pointer (the server's, keyed by the field they name). */
  declare errors: Readonly<Record<string, string>>;
  declare selected: string;
  /** What this panel could not read, by pointer: the message and the text as typed (kept in the field until it reads). */
  declare private problems: Readonly<Record<string, { message: string; text: string }>>;

  constructor() {
    super();
    this.model = null;
    this.system = 'si';
    this.errors = {};
    this.selected = '';
    this.problems = {};
  }

  override willUpdate(changed: Map<string, unknown>): void {
    // Another edit (or undo) shows the model's values again: a text that did not read is dropped with its message.
    if (changed.has('model') && changed.get('model') !== undefined && Object.keys(this.problems).length) this.problems = {};
  }

  override render() {
    const m = this.model;
    if (!m) return nothing;
    const dyn = dynamicsOf(m);
    return html`<details open data-list="dynamics">
      <summary data-pointer="/dynamics">Dynamics</summary>
      ${dyn
        ? this.fields(m, dyn)
        : html`<p class="hint">No dynamics: natural frequencies, speeds to avoid and the forced response are not computed.
            Discs, and shafts whose material has a density, carry the inertia.</p>
            <button data-dynamics-add @click=${() => this.edit('/dynamics', newDynamics(m))}>+ Add dynamics</button>`}
    </details>`;
  }

  /**
   * Shows and focuses the field a pointer under /dynamics names, going up the
   * pointer until something matches; false when nothing does.
   */
  focusPointer(pointer: string): boolean {
    if (!pointer.startsWith('/dynamics')) return false;
    const fields = 'input:not(:disabled), select:not(:disabled), summary';
    const tables = [...this.renderRoot.querySelectorAll('sn-table')];
    for (let p = pointer; p.startsWith('/dynamics'); p = p.slice(0, p.lastIndexOf('/'))) {
      const sel = `[data-pointer="${CSS.escape(p)}"]`;
      let target = this.renderRoot.querySelector<HTMLElement>(sel);
      for (const t of tables) {
        if (target) break;
        const hit = t.renderRoot.querySelector<HTMLElement>(sel);
        if (hit) target = hit.matches(fields) ? hit : hit.querySelector<HTMLElement>(fields);
        else if (t.pointer === p) target = t.renderRoot.querySelector<HTMLElement>('button.add');
      }
      if (target) {
        const details = this.renderRoot.querySelector('details');
        if (details && !details.open) details.open = true;
        target.scrollIntoView({ block: 'center' });
        target.focus({ preventScroll: true });
        return true;
      }
    }
    return false;
  }

  private fields(m: EditModel, dyn: DynamicsInput) {
    const shafts = m.shafts.map((s) => s.id);
    const by = modesBy(dyn);
    const speed = dyn.speed;
    const speedUnit: RateUnit = readRate(speed?.min)?.unit ?? 'rpm';
    const shownSpeedUnit = (SPEED_UNITS as readonly string[]).includes(speedUnit) ? speedUnit : 'rpm';
    const freqUnit: RateUnit = readRate(dyn.maxFrequency)?.unit ?? 'Hz';
    return html`
      <p class="hint">Natural frequencies, the speeds where an order of the reference shaft meets one, and the vibratory torque from the
        excitations. Linear, small vibration; the damping ratio is your estimate; no excitation is assumed unless you list it.
        <button class="remove-dyn" data-dynamics-remove @click=${() => this.edit('/dynamics', undefined)}>Remove dynamics</button></p>
      ${this.exact('/dynamics')}
      <div class="grid">
        <label for="modes-by">Modes</label>
        <div>
          <div class="row">
            <select id="modes-by" aria-label="How many modes" @change=${(e: Event) => this.edit('/dynamics', switchModesBy(dyn, (e.target as HTMLSelectElement).value as ModesBy))}>
              <option value="count" ?selected=${by === 'count'}>the lowest</option>
              <option value="upTo" ?selected=${by === 'upTo'}>every mode up to</option>
            </select>
            ${by === 'count'
              ? html`${this.input('/dynamics/modes', String(dyn.modes ?? ''), 'Number of modes', 4, (t) => this.integer(t))}
                  <span class="unit">modes (rigid-body modes count)</span>`
              : html`${this.input('/dynamics/maxFrequency', rateText(dyn.maxFrequency, freqUnit), 'Highest frequency', 7, (t) => this.rate(t, freqUnit))}
                  ${this.unitSelect('Unit of the highest frequency', FREQUENCY_UNITS, freqUnit, (u) => this.edit('/dynamics/maxFrequency', convertRate(dyn.maxFrequency, u)))}`}
          </div>
          ${this.message('/dynamics/modes')} ${this.message('/dynamics/maxFrequency')}
        </div>

        <label for="ref-shaft">Reference shaft</label>
        <div>
          <select id="ref-shaft" data-pointer="/dynamics/speed/shaft" class=${this.bad('/dynamics/speed/shaft') ? 'invalid' : ''}
            aria-invalid=${this.bad('/dynamics/speed/shaft') ? 'true' : 'false'}
            @change=${(e: Event) => this.editSpeed(dyn, 'shaft', (e.target as HTMLSelectElement).value)}>
            ${speed?.shaft && !shafts.includes(speed.shaft) ? html`<option value=${speed.shaft} selected>${speed.shaft}</option>` : nothing}
            ${shafts.map((s) => html`<option value=${s} ?selected=${s === speed?.shaft}>${s}</option>`)}
          </select>
          <span class="unit">orders and speeds are per revolution of this shaft</span>
          ${this.message('/dynamics/speed/shaft')} ${this.exact('/dynamics/speed')}
        </div>

        <label>Running speed</label>
        <div>
          <div class="row">
            from ${this.input('/dynamics/speed/min', rateText(speed?.min, shownSpeedUnit), 'Lowest running speed', 7, (t) => this.rate(t, shownSpeedUnit), (v) => this.editSpeed(dyn, 'min', v))}
            to ${this.input('/dynamics/speed/max', rateText(speed?.max, shownSpeedUnit), 'Highest running speed', 7, (t) => this.rate(t, shownSpeedUnit), (v) => this.editSpeed(dyn, 'max', v))}
            ${this.unitSelect('Unit of the running speed', SPEED_UNITS, shownSpeedUnit, (u) =>
              this.edit('/dynamics/speed', { ...(speed ?? { shaft: shafts[0] ?? '' }), min: convertRate(speed?.min, u) ?? `0 ${u}`, max: convertRate(speed?.max, u) ?? `0 ${u}` }))}
          </div>
          ${this.message('/dynamics/speed/min')} ${this.message('/dynamics/speed/max')}
        </div>

        <label for="orders">Orders</label>
        <div>
          ${this.input('/dynamics/orders', ordersText(dyn.orders), 'Excitation orders', 12, (t) => parseOrders(t), undefined, 'orders')}
          <span class="unit">per revolution, e.g. 1, 2, 4</span>
          ${this.message('/dynamics/orders')}
        </div>

        <label for="margin">Margin</label>
        <div>
          ${this.input('/dynamics/margin', marginText(dyn.margin), 'Margin around each crossing, percent', 5, (t) => parseMargin(t), undefined, 'margin')}
          <span class="unit">% wider than the running range on each side</span>
          ${this.message('/dynamics/margin')}
        </div>

        <label for="damping">Damping ζ</label>
        <div>
          ${this.input('/dynamics/damping', dyn.damping === undefined ? '' : String(dyn.damping), 'Damping ratio', 5, (t) => this.plain(t), undefined, 'damping')}
          <span class="unit">ratio of critical, on every elastic part (an estimate you supply)</span>
          ${this.message('/dynamics/damping')}
        </div>
      </div>
      <h4>Excitations</h4>
      <p class="hint">A harmonic torque of the given order at a point; the forced response sums their amplitudes. None: no forced response.</p>
      <sn-table .rows=${(dyn.excitations ?? []) as unknown as Row[]} .columns=${excitationColumns(shafts)} pointer="/dynamics/excitations"
        noun="excitation" .system=${this.system} .errors=${this.errors} .selected=${this.selected}
        @sn-row-add=${(e: CustomEvent<RowDetail>) => this.onAdd(e, m, dyn)} @sn-row-remove=${(e: CustomEvent<RowDetail>) => this.onRemove(e, dyn)}></sn-table>
      ${this.exact('/dynamics/excitations')}
    `;
  }

  /** A one-line field: commits on change (and on Enter) what `read` makes of the text, or shows why it cannot. */
  private input(
    pointer: string,
    text: string,
    label: string,
    size: number,
    read: (text: string) => { value: unknown; problem?: string },
    commit: (value: unknown) => void = (v) => this.edit(pointer, v),
    id?: string,
  ) {
    const bad = this.bad(pointer);
    return html`<input id=${id ?? nothing} data-pointer=${pointer} aria-label=${label} size=${size} spellcheck="false" autocomplete="off"
      class=${bad ? 'invalid' : ''} aria-invalid=${bad ? 'true' : 'false'} aria-describedby=${bad ? messageId(pointer) : nothing}
      .value=${live(this.problems[pointer]?.text ?? text)}
      @change=${(e: Event) => {
        const typed = (e.target as HTMLInputElement).value;
        const r = read(typed);
        const { [pointer]: _gone, ...rest } = this.problems;
        // A rate that cannot be read is stored as typed (its message is read off the model, and the server names
        // the field too); any other problem stays here, with the text, until the field reads or the model changes.
        const kept = r.problem !== undefined && typeof r.value !== 'string';
        this.problems = kept ? { ...rest, [pointer]: { message: r.problem as string, text: typed } } : rest;
        if (!kept) commit(r.value);
      }}
      @keydown=${commitOnEnter} />`;
  }

  private unitSelect(label: string, units: readonly RateUnit[], unit: RateUnit, pick: (u: RateUnit) => void) {
    return html`<select aria-label=${label} data-unit=${label} @change=${(e: Event) => pick((e.target as HTMLSelectElement).value as RateUnit)}>
      ${units.map((u) => html`<option value=${u} ?selected=${u === unit}>${u}</option>`)}
    </select>`;
  }

  /** The server's messages for a field and anything inside it ("/dynamics/orders/1" belongs to the orders field). */
  private serverMessages(pointer: string): string[] {
    return Object.entries(this.errors)
      .filter(([p]) => p === pointer || p.startsWith(`${pointer}/`))
      .map(([, m]) => m);
  }

  private bad(pointer: string): boolean {
    return Boolean(this.problems[pointer] ?? this.rateProblem(pointer)) || this.serverMessages(pointer).length > 0;
  }

  /** A stored rate that does not read ("fast"), said beside its field (rate fields only: a shaft id or the orders are no rate). */
  private rateProblem(pointer: string): string | undefined {
    if (!RATE_FIELDS.has(pointer)) return undefined;
    const stored = getAt(this.model, pointer);
    if (stored === undefined || readRate(stored) !== null) return undefined;
    return parseRateInput(String(stored), 'rpm').problem;
  }

  private message(pointer: string) {
    const msg = this.problems[pointer]?.message ?? this.rateProblem(pointer) ?? this.serverMessages(pointer).join('; ');
    return msg ? html`<div class="msg" id=${messageId(pointer)}>${msg}</div>` : nothing;
  }

  /** The server's message for exactly this pointer (its children have fields of their own). */
  private exact(pointer: string) {
    const msg = this.errors[pointer];
    return msg ? html`<div class="msg" id=${messageId(pointer)}>${msg}</div>` : nothing;
  }

  private rate(text: string, unit: RateUnit): { value: unknown; problem?: string } {
    return parseRateInput(text, unit);
  }

  private integer(text: string): { value: unknown; problem?: string } {
    const t = text.trim();
    if (t === '') return { value: undefined };
    const n = Number(t);
    return /^\d+$/.test(t) && n > 0 ? { value: n } : { value: undefined, problem: `"${t}" is not a whole number of modes (1 or more)` };
  }

  private plain(text: string): { value: unknown; problem?: string } {
    const t = text.trim();
    if (t === '') return { value: undefined };
    const n = Number(t);
    return /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/.test(t) && Number.isFinite(n) ? { value: n } : { value: undefined, problem: `"${t}" is not a number` };
  }

  /** A field of the operating range: the field alone when the range exists, else the whole range with it. */
  private editSpeed(dyn: DynamicsInput, field: 'shaft' | 'min' | 'max', value: unknown): void {
    if (dyn.speed) this.edit(`/dynamics/speed/${field}`, value);
    else this.edit('/dynamics/speed', { shaft: this.model?.shafts[0]?.id ?? '', min: '0 rpm', max: '0 rpm', [field]: value });
  }

  private onAdd(e: CustomEvent<RowDetail>, m: EditModel, dyn: DynamicsInput): void {
    e.stopPropagation();
    this.edit('/dynamics/excitations', withExcitation(m, dyn, e.detail.index));
  }

  private onRemove(e: CustomEvent<RowDetail>, dyn: DynamicsInput): void {
    e.stopPropagation();
    this.edit('/dynamics/excitations', withoutExcitation(dyn, e.detail.index));
  }

  private edit(pointer: string, value: unknown): void {
    this.dispatchEvent(new CustomEvent<EditDetail>('sn-edit', { detail: { pointer, value }, bubbles: true, composed: true }));
  }
}

/** Enter commits a one-line field as Tab would ("change" fires on blur), and the cursor stays in it. */
function commitOnEnter(e: KeyboardEvent): void {
  if (e.key !== 'Enter' || e.isComposing) return;
  e.preventDefault();
  const input = e.target as HTMLInputElement;
  input.blur();
  input.focus();
}

function excitationColumns(shafts: string[]): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 5 },
    { key: 'shaft', label: 'Shaft', type: 'select', options: shafts },
    { key: 'at', label: 'At z', type: 'quantity', kind: 'length', width: 6 },
    { key: 'amplitude', label: 'Amplitude', type: 'quantity', kind: 'torque', width: 7, hint: 'Torque amplitude of the harmonic excitation' },
    { key: 'order', label: 'Order', type: 'number', width: 4, hint: 'Cycles per revolution of the reference shaft' },
  ];
}

customElements.define('sn-dynamics-panel', SnDynamicsPanel);

declare global {
  interface HTMLElementTagNameMap {
    'sn-dynamics-panel': SnDynamicsPanel;
  }
}
