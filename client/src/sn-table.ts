import { LitElement, css, html, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import { type FieldKind, type ParsedInput, type UnitSystem, displayUnit, inputText, parseInput, parsePlainNumber, prettyUnit } from './units.js';
import { type SectionKind, isSectionKind, parseSectionInput, sectionInputText, sectionUnit } from './section-geometry.js';

/** What a quantity column holds: a kind of the presentation module, or a section property (m⁴, m³). */
export type ColumnKind = FieldKind | SectionKind;

function unitOf(kind: ColumnKind, system: UnitSystem): string {
  return isSectionKind(kind) ? sectionUnit(kind, system) : displayUnit(kind, system);
}

function textOf(value: unknown, kind: ColumnKind, system: UnitSystem): string {
  return isSectionKind(kind) ? sectionInputText(value, kind, system) : inputText(value, kind, system);
}

function parseOf(text: string, kind: ColumnKind, system: UnitSystem): ParsedInput {
  return isSectionKind(kind) ? parseSectionInput(text, kind, system) : parseInput(text, kind, system);
}

/** One column of an editable table. */
export interface Column {
  /** Path of the field inside a row, '/'-separated ("a/shaft"), or a virtual key starting with "@". */
  readonly key: string;
  readonly label: string;
  readonly type: 'text' | 'quantity' | 'number' | 'integer' | 'select';
  /** For quantities: what the field holds (sets the unit shown and how a plain number is read). */
  readonly kind?: ColumnKind;
  /** For selects: the values offered. */
  readonly options?: readonly string[];
  /** For selects of an optional field: the label of "none". */
  readonly blank?: string;
  /** Value of a virtual column. */
  readonly get?: (row: Record<string, unknown>) => unknown;
  /** When false the cell is shown greyed and cannot be edited (a field this row's form does not use). */
  readonly enabled?: (row: Record<string, unknown>) => boolean;
  /** Tooltip of the header. */
  readonly hint?: string;
  /** Input width, in characters. */
  readonly width?: number;
}

/** Detail of `sn-edit`. */
export interface EditDetail { pointer: string; value: unknown }
/** Detail of `sn-row-add` and `sn-row-remove`. */
export interface RowDetail { pointer: string; index: number }
/** Detail of `sn-select`. */
export interface SelectDetail { pointer: string }
/** Detail of `sn-draft`: what a cell holds while it is being typed in (not committed yet). */
export interface DraftDetail { pointer: string; value: unknown }

/** An id for the element that holds the message of a field, from its pointer. */
export function messageId(pointer: string): string {
  return `msg${pointer.replace(/[^A-Za-z0-9_-]/g, (c) => `_${c.charCodeAt(0).toString(16)}`)}`;
}

function valueAt(row: Record<string, unknown>, col: Column): unknown {
  if (col.get) return col.get(row);
  let cur: unknown = row;
  for (const k of col.key.split('/')) {
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<string, unknown>)[k];
  }
  return cur;
}

/**
 * An editable table of one list of the model (or of one object, with `single`).
 * Tab moves through the cells; Enter (or Tab, or leaving the cell) commits the
 * cell; a row is added only with the "+ Add" button. Each input carries
 * `data-pointer`, the JSON pointer of its field; a field the API names is marked
 * `aria-invalid` and described by its message. A wide table scrolls sideways
 * inside its panel with the first column (the id) kept in view.
 *
 * @fires sn-draft - {pointer, value}: a quantity or number is being typed (readable so far)
 * @fires sn-edit - {pointer, value}: a cell was committed (value undefined removes an optional field)
 * @fires sn-row-add - {pointer, index}: add a row to the list at pointer, at index
 * @fires sn-row-remove - {pointer, index}: remove a row
 * @fires sn-select - {pointer}: a row was focused or clicked
 */
export class SnTable extends LitElement {
  static override styles = css`
    :host { display: block; }
    /* A shadow at the right edge says there is more to scroll to (it is covered once the end is reached). */
    .wrap { overflow-x: auto; max-width: 100%;
      background: linear-gradient(to left, #fff 40%, rgba(255, 255, 255, 0)) right / 28px 100% no-repeat local,
        radial-gradient(farthest-side at 100% 50%, rgba(29, 58, 74, 0.28), rgba(29, 58, 74, 0)) right / 12px 100% no-repeat scroll; }
    table { border-collapse: separate; border-spacing: 0; font-size: 13px; }
    th:first-child, td:first-child { position: sticky; left: 0; z-index: 1; background: #fff; }
    tr.row.selected > td:first-child { background: #fbeed3; }
    th { text-align: left; font-weight: 600; color: #4a5258; padding: 2px 4px; white-space: nowrap; font-size: 12px; }
    td { padding: 1px 2px; vertical-align: top; }
    tr.row > td:first-child { border-left: 3px solid transparent; }
    tr.row.selected > td { background: #fbeed3; }
    tr.row.selected > td:first-child { border-left-color: #d48a1a; }
    tr.row.flagged > td:first-child { border-left-color: #b3261e; }
    input, select { font: inherit; font-size: 13px; padding: 2px 4px; border: 1px solid #c8c4bb; border-radius: 3px;
      background: #fff; box-sizing: border-box; }
    input:focus, select:focus { outline: 2px solid #2b6f8e; outline-offset: -1px; border-color: #2b6f8e; }
    input:disabled, select:disabled { background: #ece9e3; color: #9a968e; }
    .invalid { border-color: #b3261e; background: #fdf0ef; }
    .msg { color: #b3261e; font-size: 11px; max-width: 18em; line-height: 1.25; padding: 1px 2px; }
    .rowmsg td { color: #b3261e; font-size: 12px; padding: 0 6px 4px; }
    .rownote td { padding: 2px 0 4px; }
    .rownote .pinned { color: #1d3a4a; background: #eef5f8; font-size: 12px; padding: 3px 6px; border-left: 3px solid #2b6f8e; box-sizing: border-box; }
    .rowmsg td:first-child, .rownote td:first-child { position: static; }
    /* A row's message stays in view while a wide table scrolls sideways, wraps within the panel's width,
       and never widens the table (no intrinsic width of its own). */
    .pinned { position: sticky; left: 0; max-width: 34em; white-space: normal; contain: inline-size; }
    button { font: inherit; font-size: 12px; cursor: pointer; border: 1px solid #c8c4bb; background: #fff; border-radius: 3px; }
    button.remove { border: none; background: none; color: #8a857c; font-size: 15px; padding: 0 5px; }
    button.remove:hover { color: #b3261e; }
    button.add { margin-top: 4px; padding: 2px 8px; }
    .empty { color: #8a857c; font-style: italic; padding: 4px; font-size: 12px; }
    @media print { button { display: none; } }
  `;

  static override properties = {
    rows: { attribute: false },
    columns: { attribute: false },
    pointer: { type: String },
    system: { type: String },
    errors: { attribute: false },
    selected: { type: String },
    single: { type: Boolean },
    noun: { type: String },
    flagged: { attribute: false },
    notes: { attribute: false },
  };

  declare rows: ReadonlyArray<Record<string, unknown>>;
  declare columns: readonly Column[];
  /** JSON pointer of the list (or of the object, with `single`). */
  declare pointer: string;
  declare system: UnitSystem;
  /** Messages by JSON pointer. */
  declare errors: Readonly<Record<string, string>>;
  /** Pointer of the selected item (a row or a field inside it). */
  declare selected: string;
  /** One object, not a list: no add or remove. */
  declare single: boolean;
  /** What a row is called, for the add button ("support"). */
  declare noun: string;
  /** Row pointers to mark (shafts free to spin). */
  declare flagged: readonly string[];
  /** Notes (not errors) shown under a row, by row pointer. */
  declare notes: Readonly<Record<string, string>>;

  private focusRow = -1;
  /** Text typed but not committed yet, by field pointer: a re-render (a draft's results arriving) must not overwrite it. */
  private typing = new Map<string, string>();

  constructor() {
    super();
    this.rows = [];
    this.columns = [];
    this.pointer = '';
    this.system = 'si';
    this.errors = {};
    this.selected = '';
    this.single = false;
    this.noun = 'row';
    this.flagged = [];
    this.notes = {};
  }

  override render() {
    return html`<div class="wrap">
        ${this.rows.length === 0
          ? html`<div class="empty">None yet.</div>`
          : html`<table>
              <thead>
                <tr>
                  ${this.columns.map((c) => html`<th title=${c.hint ?? ''}>${this.header(c)}</th>`)}
                  ${this.single ? nothing : html`<th></th>`}
                </tr>
              </thead>
              <tbody>
                ${this.rows.map((row, i) => this.renderRow(row, i))}
              </tbody>
            </table>`}
      </div>
      ${this.single
        ? nothing
        : html`<button class="add" data-add=${this.pointer} @click=${() => this.add(this.rows.length)}>+ Add ${this.noun}</button>`}`;
  }

  override updated(): void {
    if (this.focusRow >= 0 && this.focusRow < this.rows.length) {
      const target = this.renderRoot.querySelector<HTMLElement>(`tr[data-index="${this.focusRow}"] input:not(:disabled), tr[data-index="${this.focusRow}"] select:not(:disabled)`);
      this.focusRow = -1;
      target?.focus();
      if (target instanceof HTMLInputElement) target.select();
    }
  }

  /** Scrolls the selected row into view unless focus is already inside this table. */
  revealSelected(): void {
    const row = this.renderRoot.querySelector<HTMLElement>('tr.selected');
    if (row && !this.matches(':focus-within')) row.scrollIntoView({ block: 'nearest' });
  }

  private header(c: Column) {
    if (c.type !== 'quantity' || !c.kind) return c.label;
    return html`${c.label} <span style="font-weight:400">[${prettyUnit(unitOf(c.kind, this.system))}]</span>`;
  }

  private rowPointer(i: number): string {
    return this.single ? this.pointer : `${this.pointer}/${i}`;
  }

  private renderRow(row: Record<string, unknown>, i: number) {
    const rp = this.rowPointer(i);
    const sel = this.selected !== '' && (this.selected === rp || this.selected.startsWith(rp + '/'));
    const rowMsg = this.errors[rp];
    return html`<tr
        class="row ${sel ? 'selected' : ''} ${this.flagged.includes(rp) ? 'flagged' : ''}"
        data-pointer=${rp}
        data-index=${i}
        @focusin=${() => this.select(rp)}
        @click=${() => this.select(rp)}
      >
        ${this.columns.map((c) => html`<td>${this.renderCell(row, i, c)}</td>`)}
        ${this.single
          ? nothing
          : html`<td><button class="remove" title="Remove this ${this.noun}" aria-label="Remove ${this.noun} ${i + 1}" @click=${() => this.removeAt(i)}>×</button></td>`}
      </tr>
      ${rowMsg ? html`<tr class="rowmsg"><td colspan=${this.columns.length + 1}><div class="pinned" id=${messageId(rp)}>${rowMsg}</div></td></tr>` : nothing}
      ${this.notes[rp] ? html`<tr class="rownote" data-note=${rp}><td colspan=${this.columns.length + 1}><div class="pinned" role="status">${this.notes[rp]}</div></td></tr>` : nothing}`;
  }

  private renderCell(row: Record<string, unknown>, i: number, c: Column) {
    const ptr = `${this.rowPointer(i)}/${c.key}`;
    const msg = this.errors[ptr];
    const value = valueAt(row, c);
    const disabled = c.enabled ? !c.enabled(row) : false;
    const label = `${c.label} of ${this.noun} ${i + 1}`;
    if (c.type === 'select') {
      const opts = c.options ?? [];
      const v = value === undefined ? '' : String(value);
      const all = v !== '' && !opts.includes(v) ? [...opts, v] : opts;
      return html`<select
          data-pointer=${ptr}
          aria-label=${label}
          aria-invalid=${msg ? 'true' : 'false'}
          aria-describedby=${msg ? messageId(ptr) : nothing}
          class=${msg ? 'invalid' : ''}
          ?disabled=${disabled}
          @change=${(e: Event) => this.commitSelect(e, ptr)}
        >
          ${c.blank !== undefined ? html`<option value="" ?selected=${v === ''}>${c.blank}</option>` : nothing}
          ${all.map((o) => html`<option value=${o} ?selected=${o === v}>${o}</option>`)}
        </select>
        ${msg ? html`<div class="msg" id=${messageId(ptr)}>${msg}</div>` : nothing}`;
    }
    let text: string;
    if (this.typing.has(ptr)) text = this.typing.get(ptr) as string;
    else if (c.type === 'quantity' && c.kind) text = textOf(value, c.kind, this.system);
    else text = value === undefined || value === null ? '' : String(value);
    const title = c.type === 'quantity' && typeof value === 'string' ? `stored as "${value}"` : '';
    return html`<input
        data-pointer=${ptr}
        aria-label=${label}
        aria-invalid=${msg ? 'true' : 'false'}
        aria-describedby=${msg ? messageId(ptr) : nothing}
        title=${title}
        class=${msg ? 'invalid' : ''}
        size=${c.width ?? (c.type === 'text' ? 10 : 8)}
        .value=${live(disabled ? '' : text)}
        ?disabled=${disabled}
        spellcheck="false"
        autocomplete="off"
        @change=${(e: Event) => this.commitInput(e.target as HTMLInputElement, c, ptr)}
        @input=${(e: Event) => this.draft(e.target as HTMLInputElement, c, ptr)}
        @blur=${() => this.typing.delete(ptr)}
        @keydown=${(e: KeyboardEvent) => this.onKey(e)}
      />
      ${msg ? html`<div class="msg" id=${messageId(ptr)}>${msg}</div>` : nothing}`;
  }

  private parse(text: string, c: Column): unknown {
    if (c.type === 'quantity' && c.kind) return parseOf(text, c.kind, this.system).value;
    if (c.type === 'number') return parsePlainNumber(text, false).value;
    if (c.type === 'integer') return parsePlainNumber(text, true).value;
    return text.trim() === '' && c.key !== 'id' ? undefined : text.trim();
  }

  private commitInput(input: HTMLInputElement, c: Column, ptr: string): void {
    this.typing.delete(ptr);
    this.emit<EditDetail>('sn-edit', { pointer: ptr, value: this.parse(input.value, c) });
  }

  private commitSelect(e: Event, ptr: string): void {
    const v = (e.target as HTMLSelectElement).value;
    this.emit<EditDetail>('sn-edit', { pointer: ptr, value: v === '' ? undefined : v });
  }

  /** While typing a quantity or a number: its value so far, when it reads (nothing else is sent). */
  private draft(input: HTMLInputElement, c: Column, ptr: string): void {
    this.typing.set(ptr, input.value);
    let parsed: { value: unknown; problem?: string } | null = null;
    if (c.type === 'quantity' && c.kind) parsed = parseOf(input.value, c.kind, this.system);
    else if (c.type === 'number' || c.type === 'integer') parsed = parsePlainNumber(input.value, c.type === 'integer');
    if (!parsed || parsed.problem || parsed.value === undefined) return;
    this.emit<DraftDetail>('sn-draft', { pointer: ptr, value: parsed.value });
  }

  /** Enter commits the cell (the input's "change" fires) and keeps the focus in it; it never adds a row. */
  private onKey(e: KeyboardEvent): void {
    if (e.key !== 'Enter' || e.isComposing) return;
    e.preventDefault();
    const input = e.target as HTMLInputElement;
    // Blurring fires "change" only when the text changed since the last commit: the one commit path.
    input.blur();
    input.focus();
  }

  private add(index: number): void {
    this.focusRow = index;
    this.emit<RowDetail>('sn-row-add', { pointer: this.pointer, index });
  }

  private removeAt(index: number): void {
    this.emit<RowDetail>('sn-row-remove', { pointer: this.pointer, index });
  }

  private select(pointer: string): void {
    if (this.selected === pointer || this.selected.startsWith(pointer + '/')) return;
    this.emit<SelectDetail>('sn-select', { pointer });
  }

  private emit<T>(type: string, detail: T): void {
    this.dispatchEvent(new CustomEvent<T>(type, { detail, bubbles: true, composed: true }));
  }
}

customElements.define('sn-table', SnTable);

declare global {
  interface HTMLElementTagNameMap {
    'sn-table': SnTable;
  }
}
