import { LitElement, css, html, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { Solution } from '../../shared-types/solution.js';
import { type EditModel, combinationsOf, loadCasesOf, stressRaisersOf } from './model-edits.js';
import { SECTION_SHAPES, type SectionLike, type SectionProperties, sectionPropertiesById } from './section-geometry.js';
import { type Column, type EditDetail, messageId } from './sn-table.js';
import type { UnitSystem } from './units.js';
import { editorPartStyles } from './shared-styles.js';
import './sn-table.js';
import './sn-section-view.js';
import './sn-dynamics-panel.js';

type Row = Record<string, unknown>;

/**
 * The model editor: a table per list of the contract, sub-tables for the
 * segments of each shaft, and the model's name, notes and limits. Each section
 * has a card: the fields of its shape (with the layers or walls it lists), its
 * drawing to scale and its properties from the solution. Edits go up as events; the model comes down.
 * `focusPointer` shows and focuses the field a problem names.
 *
 * @fires sn-edit - bubbled from the tables, and for the name and notes
 * @fires sn-row-add - bubbled from the tables
 * @fires sn-row-remove - bubbled from the tables
 * @fires sn-select - bubbled from the tables
 * @fires sn-draft - bubbled from the tables
 */
export class SnEditor extends LitElement {
  static override styles = [editorPartStyles, css`
    summary .count { color: #8a857c; font-weight: 400; margin-left: 4px; }
    .sub { margin: 8px 0 4px 14px; }
    .sub h4 { margin: 0 0 2px; font-size: 12px; font-weight: 600; color: #4a5258; }
    .cards { display: flex; flex-direction: column; gap: 6px; margin: 8px 0 4px; }
    .card { display: flex; flex-wrap: wrap; gap: 8px; align-items: flex-start; border-left: 3px solid #dcd7cd; padding-left: 6px; }
    .card .fields { min-width: 0; max-width: 100%; }
    .card h4 { margin: 0 0 2px; font-size: 12px; font-weight: 600; color: #4a5258; }
    label.field { display: grid; grid-template-columns: 4.5em 1fr; gap: 6px; align-items: start; margin: 4px 0; font-size: 13px; }
    input.name, textarea { font: inherit; font-size: 13px; padding: 3px 5px; border: 1px solid #c8c4bb; border-radius: 3px; width: 100%; box-sizing: border-box; }
    textarea { min-height: 3.2em; resize: vertical; }
    .msg { color: #b3261e; font-size: 12px; }
  `];

  static override properties = {
    model: { attribute: false },
    system: { type: String },
    errors: { attribute: false },
    selected: { type: String },
    flagged: { attribute: false },
    notes: { attribute: false },
    solution: { attribute: false },
  };

  declare model: EditModel | null;
  declare system: UnitSystem;
  declare errors: Readonly<Record<string, string>>;
  declare selected: string;
  /** Pointers of rows to mark as in trouble (shafts free to spin). */
  declare flagged: readonly string[];
  /** Notes shown under rows, by row pointer (e.g. what a gear mesh's new sizing did). */
  declare notes: Readonly<Record<string, string>>;
  /** The latest solution, for the section properties (J, Ip, Wt) beside each section's drawing. */
  declare solution: Solution | null;

  constructor() {
    super();
    this.model = null;
    this.system = 'si';
    this.errors = {};
    this.selected = '';
    this.flagged = [];
    this.notes = {};
    this.solution = null;
  }

  override render() {
    const m = this.model;
    if (!m) return html`<p class="hint">No model loaded.</p>`;
    const shafts = m.shafts.map((s) => s.id);
    const sections = m.sections.map((s) => s.id);
    const materials = m.materials.map((s) => s.id);
    const cases = loadCasesOf(m).map((c) => c.id);
    return html`
      <details open>
        <summary>Model</summary>
        <label class="field"
          >Name
          <span>
            <input class="name ${this.errors['/name'] ? 'invalid' : ''}" data-pointer="/name" .value=${live(m.name)}
              aria-invalid=${this.errors['/name'] ? 'true' : 'false'} aria-describedby=${this.errors['/name'] ? messageId('/name') : nothing}
              @change=${(e: Event) => this.edit('/name', (e.target as HTMLInputElement).value)}
              @keydown=${commitOnEnter} />
            ${this.errors['/name'] ? html`<div class="msg" id=${messageId('/name')}>${this.errors['/name']}</div>` : nothing}
          </span>
        </label>
        <label class="field"
          >Notes
          <textarea data-pointer="/notes" .value=${live(m.notes ?? '')}
            @change=${(e: Event) => this.edit('/notes', (e.target as HTMLTextAreaElement).value || undefined)}></textarea>
        </label>
      </details>
      ${this.section('Materials', 'materials', 'material', m.materials as Row[], materialColumns(), 'G directly, or E with Poisson’s ratio ν. Allowable shear drives the checks.')}
      ${this.section('Sections', 'sections', 'section', m.sections as Row[], sectionColumns(), 'Each section’s card below holds the sizes of its shape, its drawing to scale and its properties. Layered sections list bonded layers inside out; open sections their walls.', html`
        <div class="cards">${this.sectionCards(m.sections as unknown as SectionLike[], materials)}</div>`)}
      ${this.section('Shafts', 'shafts', 'shaft', m.shafts.map((s) => ({ id: s.id, name: s.name })), shaftColumns(), 'Each shaft runs along its own z from 0; segments follow one another.', html`
        ${m.shafts.map(
          (s, i) => html`<div class="sub">
            <h4>Segments of ${s.id}</h4>
            ${this.table(`/shafts/${i}/segments`, 'segment', s.segments as Row[], segmentColumns(sections, materials))}
          </div>`,
        )}`)}
      ${this.section('Supports', 'supports', 'support', (m.supports ?? []) as Row[], supportColumns(shafts), 'Fixed: rotation held (0 unless given). Spring: torque −kφ.')}
      ${this.loadCases(m)}
      ${this.section('Point torques', 'torques', 'torque', (m.torques ?? []) as Row[], torqueColumns(shafts, cases), 'A torque, or a power with a speed (torque = power / speed). Right-hand rule about +z.')}
      ${this.section('Distributed torques', 'distributedTorques', 'distributed torque', (m.distributedTorques ?? []) as Row[], distributedColumns(shafts, cases), 'Linear from start (at "from") to end (at "to").')}
      ${this.section('Gear meshes', 'gearMeshes', 'gear mesh', (m.gearMeshes ?? []) as Row[], gearColumns(shafts), 'Pitch radius, or teeth with the mesh module. Blank stiffness = rigid. Opposite: external pair; same: internal, belt or chain.')}
      ${this.section('Couplings', 'couplings', 'coupling', (m.couplings ?? []) as Row[], couplingColumns(shafts), 'Blank stiffness = rigid. Misfit: angular mismatch at assembly.')}
      ${this.section('Discs', 'discs', 'disc', (m.discs ?? []) as Row[], discColumns(shafts), 'Mass inertia, drawn on the schematic; it counts in the dynamics (natural frequencies, forced response).')}
      ${this.section('Stress raisers', 'stressRaisers', 'stress raiser', stressRaisersOf(m) as unknown as Row[], raiserColumns(shafts), 'A shoulder (at a diameter step: its factor from the fillet radius) or a factor you give (keyseat, cross hole). The local peak is checked beside the nominal stress.')}
      <sn-dynamics-panel .model=${m} .system=${this.system} .errors=${this.errors} .selected=${this.selected}></sn-dynamics-panel>
      <details open>
        <summary>Limits</summary>
        <p class="hint">Optional: twist per length and total twist, checked on every shaft.</p>
        <sn-table .rows=${[(m.limits ?? {}) as Row]} .columns=${limitColumns()} pointer="/limits" single noun="limits"
          .system=${this.system} .errors=${this.errors} .selected=${this.selected}></sn-table>
      </details>
    `;
  }

  /**
   * Shows and focuses the field a pointer names: its input, else the first
   * field of the row, else the list's "+ Add" button, going up the pointer until
   * something on screen matches; opens the section that holds it. False when
   * nothing matches.
   */
  focusPointer(pointer: string): boolean {
    if (pointer.startsWith('/dynamics')) return this.renderRoot.querySelector('sn-dynamics-panel')?.focusPointer(pointer) ?? false;
    const tables = [...this.renderRoot.querySelectorAll('sn-table')];
    const fields = 'input:not(:disabled), select:not(:disabled), textarea';
    for (let p = pointer; ; p = p.slice(0, p.lastIndexOf('/'))) {
      const sel = `[data-pointer="${CSS.escape(p)}"]`;
      let target: HTMLElement | null = this.renderRoot.querySelector<HTMLElement>(sel);
      let holder: Element | null = target;
      for (const t of tables) {
        if (target) break;
        const hit = t.renderRoot.querySelector<HTMLElement>(sel);
        if (hit) target = hit.matches(fields) ? hit : hit.querySelector<HTMLElement>(fields);
        else if (t.pointer === p) target = t.renderRoot.querySelector<HTMLElement>('button.add');
        if (target) holder = t;
      }
      if (target && holder) {
        const details = holder.closest('details');
        if (details && !details.open) details.open = true;
        target.scrollIntoView({ block: 'center' });
        target.focus({ preventScroll: true });
        return true;
      }
      if (p === '') return false;
    }
  }

  /** Scrolls the selected row into view in whichever table holds it. */
  revealSelected(): void {
    for (const t of this.renderRoot.querySelectorAll('sn-table')) t.revealSelected();
  }

  private sectionCards(sections: SectionLike[], materials: string[]) {
    const props = sectionPropertiesById(this.solution, sections);
    return sections.map((s, i) => this.sectionCard(s, i, props.get(String(s.id ?? '')) ?? null, materials));
  }

  /** A section's card: the fields of its shape, its layers or walls, and its drawing with properties. */
  private sectionCard(s: SectionLike, i: number, props: SectionProperties | null, materials: string[]) {
    const cols = shapeColumns(String(s.shape ?? ''));
    return html`<div class="card" data-section-card=${s.id ?? ''}>
      <div class="fields">
        <h4>${s.id} (${s.shape})</h4>
        ${cols.length
          ? html`<sn-table .rows=${[s as Row]} .columns=${cols} pointer=${`/sections/${i}`} single noun="section ${s.id ?? i + 1}"
              .system=${this.system} .errors=${this.errors} .selected=${this.selected}></sn-table>`
          : nothing}
        ${s.shape === 'layered' ? html`<div class="sub"><h4>Layers of ${s.id}</h4>${this.table(`/sections/${i}/layers`, 'layer', (s.layers ?? []) as Row[], layerColumns(materials))}</div>` : nothing}
        ${s.shape === 'thinOpen' ? html`<div class="sub"><h4>Walls of ${s.id}</h4>${this.table(`/sections/${i}/walls`, 'wall', (s.walls ?? []) as Row[], wallColumns())}</div>` : nothing}
      </div>
      <sn-section-view .section=${s} .properties=${props} .system=${this.system} ?solved=${this.solution !== null}></sn-section-view>
    </div>`;
  }

  /**
   * Load cases (id, name) and, once there are cases, the combinations: a grid
   * of combinations × cases whose cells are the factors (blank = 0).
   */
  private loadCases(m: EditModel) {
    const cases = loadCasesOf(m);
    const combos = combinationsOf(m);
    return html`${this.section('Load cases', 'loadCases', 'load case', cases as unknown as Row[], caseColumns(),
      'Name the load states (running, start-up, jam…); each torque then belongs to one case. Supports’ rotations, misfits and offsets act in every combination.')}
      ${cases.length
        ? this.section('Combinations', 'combinations', 'combination', combos as unknown as Row[], combinationColumns(cases.map((c) => c.id)),
            combos.length
              ? 'Each row sums the cases times its factors (blank = 0).'
              : 'None given: each case is solved as its own combination (factor 1). Add one to factor and sum the cases.')
        : nothing}`;
  }

  private section(title: string, list: string, noun: string, rows: Row[], columns: Column[], hint: string, extra: unknown = nothing) {
    return html`<details open data-list=${list}>
      <summary>${title}<span class="count">(${rows.length})</span></summary>
      <p class="hint">${hint}</p>
      ${this.table(`/${list}`, noun, rows, columns)} ${extra}
    </details>`;
  }

  private table(pointer: string, noun: string, rows: Row[], columns: Column[]) {
    return html`<sn-table .rows=${rows} .columns=${columns} pointer=${pointer} noun=${noun} .system=${this.system}
      .errors=${this.errors} .selected=${this.selected} .flagged=${this.flagged} .notes=${this.notes}></sn-table>`;
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

const has = (k: string) => (r: Row) => r[k] !== undefined;

function materialColumns(): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 7 },
    { key: 'name', label: 'Name', type: 'text', width: 12 },
    { key: '@elastic', label: 'Elastic', type: 'select', options: ['G', 'E'], get: (r) => (r.E !== undefined && r.G === undefined ? 'E' : 'G'), hint: 'Give G, or E with ν' },
    { key: 'G', label: 'G', type: 'quantity', kind: 'modulus', enabled: (r) => !(r.E !== undefined && r.G === undefined), width: 6 },
    { key: 'E', label: 'E', type: 'quantity', kind: 'modulus', enabled: has('E'), width: 6 },
    { key: 'nu', label: 'ν', type: 'number', enabled: has('E'), width: 5 },
    { key: 'allowableShear', label: 'τ allow', type: 'quantity', kind: 'stress', width: 6, hint: 'Allowable shear stress (for checks)' },
    { key: 'shearYield', label: 'τ yield', type: 'quantity', kind: 'stress', width: 6 },
    { key: 'density', label: 'Density', type: 'quantity', kind: 'density', width: 6 },
  ];
}

function sectionColumns(): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 7 },
    { key: 'shape', label: 'Shape', type: 'select', options: SECTION_SHAPES, hint: 'Its sizes are in the section’s card below' },
    { key: 'name', label: 'Name', type: 'text', width: 14 },
  ];
}

/** The fields of each section shape (the model format's "More section shapes"). */
export function shapeColumns(shape: string): Column[] {
  const q = (key: string, label: string, hint?: string): Column => ({ key, label, type: 'quantity', kind: 'length', width: 6, hint });
  const am = (key: string, label: string, hint: string): Column => ({ key, label, type: 'quantity', kind: 'areaMoment', width: 8, hint });
  const sm = (key: string, label: string, hint: string): Column => ({ key, label, type: 'quantity', kind: 'sectionModulus', width: 8, hint });
  switch (shape) {
    case 'solid':
      return [q('d', 'Outer d')];
    case 'hollow':
      return [q('d', 'Outer d'), q('di', 'Bore di')];
    case 'layered':
      return [q('di', 'Bore di', 'Optional: a bore inside the first layer')];
    case 'rectangle':
      return [q('width', 'Width'), q('height', 'Height')];
    case 'ellipse':
      return [q('width', 'Width', 'Full axis'), q('height', 'Height', 'Full axis')];
    case 'rectangularTube':
      return [q('width', 'Width', 'Outside'), q('height', 'Height', 'Outside'), q('wall', 'Wall')];
    case 'thinOpen':
      return [am('polarMoment', 'Ip', 'Polar moment of area: needed only for rotary inertia')];
    case 'custom':
      return [
        am('torsionConstant', 'J', 'Torsion constant: sets the stiffness'),
        sm('torsionalModulus', 'Wt', 'Torsional modulus: τmax = T / Wt'),
        am('polarMoment', 'Ip', 'Optional polar moment of area (rotary inertia)'),
        sm('plasticTorqueModulus', 'Plastic', 'Optional: fully plastic torque = τ yield × this'),
      ];
    default:
      return [];
  }
}

function wallColumns(): Column[] {
  return [
    { key: 'length', label: 'Length', type: 'quantity', kind: 'length', width: 6, hint: 'Along the wall’s centre line' },
    { key: 'thickness', label: 'Thickness', type: 'quantity', kind: 'length', width: 6 },
  ];
}

function raiserColumns(shafts: string[]): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 5 },
    { key: 'shaft', label: 'Shaft', type: 'select', options: shafts },
    { key: 'at', label: 'At z', type: 'quantity', kind: 'length', width: 6 },
    { key: 'kind', label: 'Kind', type: 'select', options: ['shoulder', 'factor'] },
    { key: 'fillet', label: 'Fillet r', type: 'quantity', kind: 'length', enabled: (r) => r.kind === 'shoulder', width: 5, hint: 'Fillet radius of the shoulder' },
    { key: 'factor', label: 'Kts', type: 'number', enabled: (r) => r.kind === 'factor', width: 4, hint: 'Stress concentration factor in torsion' },
    { key: 'note', label: 'Note', type: 'text', width: 12 },
  ];
}

function layerColumns(materials: string[]): Column[] {
  return [
    { key: 'd', label: 'Outer d', type: 'quantity', kind: 'length' },
    { key: 'material', label: 'Material', type: 'select', options: materials },
  ];
}

function shaftColumns(): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 9 },
    { key: 'name', label: 'Name', type: 'text', width: 18 },
  ];
}

function segmentColumns(sections: string[], materials: string[]): Column[] {
  return [
    { key: 'length', label: 'Length', type: 'quantity', kind: 'length' },
    { key: 'section', label: 'Section', type: 'select', options: sections },
    { key: 'sectionEnd', label: 'End section', type: 'select', options: sections, blank: '(uniform)', hint: 'Give one to taper the segment linearly to it' },
    { key: 'material', label: 'Material', type: 'select', options: materials, blank: '(per layer)' },
  ];
}

function supportColumns(shafts: string[]): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 6 },
    { key: 'shaft', label: 'Shaft', type: 'select', options: shafts },
    { key: 'at', label: 'At z', type: 'quantity', kind: 'length' },
    { key: 'kind', label: 'Kind', type: 'select', options: ['fixed', 'spring'] },
    { key: 'rotation', label: 'Rotation', type: 'quantity', kind: 'angle', enabled: (r) => r.kind === 'fixed', width: 6 },
    { key: 'stiffness', label: 'Stiffness', type: 'quantity', kind: 'rotationalStiffness', enabled: (r) => r.kind === 'spring' },
  ];
}

function caseColumns(): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 8 },
    { key: 'name', label: 'Name', type: 'text', width: 16 },
  ];
}

/** The factor grid: one number column per load case, keyed into the combination's factors. */
function combinationColumns(cases: string[]): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 8 },
    { key: 'name', label: 'Name', type: 'text', width: 12 },
    ...cases.map((c): Column => ({ key: `factors/${c}`, label: `× ${c}`, type: 'number', width: 5, hint: `Factor on case ${c} (blank = 0)` })),
  ];
}

/** The case column of a load list, present only when the model has load cases. */
function caseColumn(cases: string[]): Column[] {
  return cases.length ? [{ key: 'case', label: 'Case', type: 'select', options: cases, hint: 'The load case this torque belongs to' }] : [];
}

function torqueColumns(shafts: string[], cases: string[]): Column[] {
  const isPower = (r: Row) => r.power !== undefined || r.speed !== undefined;
  return [
    { key: 'id', label: 'Id', type: 'text', width: 7 },
    ...caseColumn(cases),
    { key: 'shaft', label: 'Shaft', type: 'select', options: shafts },
    { key: 'at', label: 'At z', type: 'quantity', kind: 'length' },
    { key: '@form', label: 'Given as', type: 'select', options: ['torque', 'power'], get: (r) => (isPower(r) ? 'power' : 'torque') },
    { key: 'torque', label: 'Torque', type: 'quantity', kind: 'torque', enabled: (r) => !isPower(r) },
    { key: 'power', label: 'Power', type: 'quantity', kind: 'power', enabled: isPower, width: 6 },
    { key: 'speed', label: 'Speed', type: 'quantity', kind: 'angularSpeed', enabled: isPower, width: 6 },
  ];
}

function distributedColumns(shafts: string[], cases: string[]): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 7 },
    ...caseColumn(cases),
    { key: 'shaft', label: 'Shaft', type: 'select', options: shafts },
    { key: 'from', label: 'From z', type: 'quantity', kind: 'length' },
    { key: 'to', label: 'To z', type: 'quantity', kind: 'length' },
    { key: 'start', label: 'Start', type: 'quantity', kind: 'torquePerLength' },
    { key: 'end', label: 'End', type: 'quantity', kind: 'torquePerLength' },
  ];
}

function gearColumns(shafts: string[]): Column[] {
  const teeth = (r: Row) => r.module !== undefined || (r.a as Row | undefined)?.teeth !== undefined;
  return [
    { key: 'id', label: 'Id', type: 'text', width: 5 },
    { key: '@sizing', label: 'Size by', type: 'select', options: ['radius', 'teeth'], get: (r) => (teeth(r) ? 'teeth' : 'radius') },
    { key: 'a/shaft', label: 'A shaft', type: 'select', options: shafts },
    { key: 'a/at', label: 'A at z', type: 'quantity', kind: 'length', width: 6 },
    { key: 'a/radius', label: 'A radius', type: 'quantity', kind: 'length', enabled: (r) => !teeth(r), width: 6 },
    { key: 'a/teeth', label: 'A teeth', type: 'integer', enabled: teeth, width: 4 },
    { key: 'b/shaft', label: 'B shaft', type: 'select', options: shafts },
    { key: 'b/at', label: 'B at z', type: 'quantity', kind: 'length', width: 6 },
    { key: 'b/radius', label: 'B radius', type: 'quantity', kind: 'length', enabled: (r) => !teeth(r), width: 6 },
    { key: 'b/teeth', label: 'B teeth', type: 'integer', enabled: teeth, width: 4 },
    { key: 'module', label: 'Module', type: 'quantity', kind: 'length', enabled: teeth, width: 5 },
    { key: 'sense', label: 'Sense', type: 'select', options: ['opposite', 'same'] },
    { key: 'stiffness', label: 'Stiffness', type: 'quantity', kind: 'linearStiffness', width: 6, hint: 'Tangential mesh stiffness; blank = rigid' },
    { key: 'offset', label: 'Offset', type: 'quantity', kind: 'length', width: 6, hint: 'Tangential gap or timing error' },
  ];
}

function couplingColumns(shafts: string[]): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 5 },
    { key: 'a/shaft', label: 'A shaft', type: 'select', options: shafts },
    { key: 'a/at', label: 'A at z', type: 'quantity', kind: 'length' },
    { key: 'b/shaft', label: 'B shaft', type: 'select', options: shafts },
    { key: 'b/at', label: 'B at z', type: 'quantity', kind: 'length' },
    { key: 'stiffness', label: 'Stiffness', type: 'quantity', kind: 'rotationalStiffness', hint: 'Blank = rigid' },
    { key: 'misfit', label: 'Misfit', type: 'quantity', kind: 'angle', width: 6 },
  ];
}

function discColumns(shafts: string[]): Column[] {
  return [
    { key: 'id', label: 'Id', type: 'text', width: 7 },
    { key: 'shaft', label: 'Shaft', type: 'select', options: shafts },
    { key: 'at', label: 'At z', type: 'quantity', kind: 'length' },
    { key: 'inertia', label: 'Inertia', type: 'quantity', kind: 'massInertia' },
  ];
}

function limitColumns(): Column[] {
  return [
    { key: 'twistRate', label: 'Twist rate', type: 'quantity', kind: 'twistRate' },
    { key: 'totalTwist', label: 'Total twist', type: 'quantity', kind: 'angle' },
  ];
}

customElements.define('sn-editor', SnEditor);

declare global {
  interface HTMLElementTagNameMap {
    'sn-editor': SnEditor;
  }
}
