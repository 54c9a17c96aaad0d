/**
 * Edits of a model, free of the DOM: JSON pointers, immutable edits, new rows
 * (with places that make sense), an undo/redo history, and a reader's name for a
 * pointer. Every edit returns a new model and leaves the old one untouched, so Lit
 * elements re-render and undo is a pointer move.
 */
import type { Model } from '../../shared-types/model.js';
import { isProblem, readQuantity } from '../../shared-types/quantity.js';
import { readablePointer } from '../../shared-types/present.js';
import { SHAPE_FIELDS } from './section-geometry.js';

/** A model as the editor holds it: the contract's shape, values as typed. */
export type EditModel = Model;

/** The lists of a model that the editor shows as tables. */
export type ListName =
  | 'materials'
  | 'sections'
  | 'shafts'
  | 'supports'
  | 'torques'
  | 'distributedTorques'
  | 'gearMeshes'
  | 'couplings'
  | 'discs'
  | 'stressRaisers'
  | 'loadCases'
  | 'combinations';

/** A stress raiser of the model format (issue 10): declared here until the shared model type has it. */
export interface StressRaiserRow {
  id: string;
  shaft: string;
  at: unknown;
  kind: 'shoulder' | 'factor';
  fillet?: unknown;
  factor?: number;
  note?: string;
}

/** The stress raisers of a model (none when it has no list). */
export function stressRaisersOf(model: EditModel): StressRaiserRow[] {
  return ((model as { stressRaisers?: StressRaiserRow[] }).stressRaisers ?? []) as StressRaiserRow[];
}

type Json = unknown;
type Key = string | number;

/** Splits a JSON pointer (RFC 6901) into keys; array indices become numbers. */
export function parsePointer(pointer: string): Key[] {
  if (pointer === '') return [];
  if (!pointer.startsWith('/')) throw new Error(`not a JSON pointer: ${pointer}`);
  return pointer
    .slice(1)
    .split('/')
    .map((k) => k.replace(/~1/g, '/').replace(/~0/g, '~'))
    .map((k) => (/^(0|[1-9]\d*)$/.test(k) ? Number(k) : k));
}

/** Joins keys into a JSON pointer. */
export function toPointer(keys: readonly Key[]): string {
  return keys.map((k) => '/' + String(k).replace(/~/g, '~0').replace(/\//g, '~1')).join('');
}

/** The value at a pointer, or undefined. */
export function getAt(doc: Json, pointer: string | Key[]): Json {
  const keys = typeof pointer === 'string' ? parsePointer(pointer) : pointer;
  let cur: Json = doc;
  for (const k of keys) {
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<Key, Json>)[k];
  }
  return cur;
}

/**
 * A copy of `doc` with the value at `keys` replaced; `undefined` deletes an
 * object key. Only the objects along the path are copied.
 */
export function setIn<T>(doc: T, keys: readonly Key[], value: Json): T {
  if (keys.length === 0) return value as T;
  const [head, ...rest] = keys;
  const container = (doc ?? (typeof head === 'number' ? [] : {})) as Json;
  const child = (container as Record<Key, Json>)[head];
  const next = setIn(child, rest, value);
  if (Array.isArray(container)) {
    const copy = container.slice();
    copy[head as number] = next;
    return copy as T;
  }
  const copy = { ...(container as Record<string, Json>) };
  if (next === undefined) delete copy[head as string];
  else copy[head as string] = next;
  return copy as T;
}

/** The ids already used in a list. */
function idsOf(list: unknown): string[] {
  return Array.isArray(list) ? list.map((r) => String((r as { id?: unknown }).id ?? '')) : [];
}

/** A fresh id: prefix + the smallest number not yet used ("S1", "S2", ...). */
export function nextId(prefix: string, used: readonly string[]): string {
  for (let i = 1; ; i++) {
    const id = `${prefix}${i}`;
    if (!used.includes(id)) return id;
  }
}

const ID_PREFIX: Record<ListName, string> = {
  materials: 'mat',
  sections: 'sec',
  shafts: 'shaft',
  supports: 'S',
  torques: 'T',
  distributedTorques: 'q',
  gearMeshes: 'G',
  couplings: 'C',
  discs: 'D',
  stressRaisers: 'K',
  loadCases: 'case',
  combinations: 'combo',
};

/** A new row for a list, with a fresh id and values that reference existing items. */
export function newRow(model: EditModel, list: ListName): Record<string, Json> {
  const id = nextId(ID_PREFIX[list], idsOf((model as Record<string, unknown>)[list]));
  const shaft = model.shafts[0]?.id ?? '';
  const shaft2 = model.shafts[1]?.id ?? shaft;
  switch (list) {
    case 'materials':
      return { id, G: '79.3 GPa', allowableShear: '55 MPa' };
    case 'sections':
      return { id, shape: 'solid', d: '40 mm' };
    case 'shafts':
      return { id, segments: [newSegment(model)] };
    case 'supports':
      return { id, ...newSupportPlace(model), kind: 'fixed' };
    case 'torques':
      return { id, shaft, at: 0, torque: '100 N*m' };
    case 'distributedTorques':
      return { id, shaft, from: 0, to: 0, start: '0 N*m/m', end: '0 N*m/m' };
    case 'gearMeshes':
      return { id, a: { shaft, at: 0, radius: '40 mm' }, b: { shaft: shaft2, at: 0, radius: '80 mm' }, sense: 'opposite' };
    case 'couplings':
      return { id, a: { shaft, at: 0 }, b: { shaft: shaft2, at: 0 } };
    case 'discs':
      return { id, shaft, at: 0, inertia: '0.1 kg*m2' };
    case 'stressRaisers':
      return { id, shaft, at: firstBoundary(model), kind: 'factor', factor: 2 };
    case 'loadCases':
      return { id };
    case 'combinations':
      // Every case at factor 1: the plain sum, to be edited in the factor grid.
      return { id, factors: Object.fromEntries(loadCasesOf(model).map((c) => [c.id, 1])) };
  }
}

/** A load case of the model format (issue 11): declared here until the shared model type has it. */
export interface LoadCaseRow { id: string; name?: string }
/** A combination of the model format (issue 11): factors by case id (a missing case counts 0). */
export interface CombinationRow { id: string; name?: string; factors: Record<string, number> }

/** The model's load cases (none: the model has one load state). */
export function loadCasesOf(model: EditModel): LoadCaseRow[] {
  return ((model as { loadCases?: LoadCaseRow[] }).loadCases ?? []) as LoadCaseRow[];
}

/** The model's combinations as given (without them each case is its own combination). */
export function combinationsOf(model: EditModel): CombinationRow[] {
  return ((model as { combinations?: CombinationRow[] }).combinations ?? []) as CombinationRow[];
}

/** The load lists that carry a `case` when the model has load cases. */
const CASED: readonly ListName[] = ['torques', 'distributedTorques'];

/** Sets (or with undefined removes) `case` on every point and distributed torque. */
function setCaseOnLoads(model: EditModel, pick: (current: Json | undefined) => Json | undefined): EditModel {
  let out = model;
  for (const list of CASED) {
    const rows = (out as Record<string, unknown>)[list] as Array<Record<string, Json>> | undefined;
    rows?.forEach((row, i) => {
      const next = pick(row.case);
      if (next !== row.case) out = setIn(out, [list, i, 'case'], next as Json);
    });
  }
  return out;
}

/** Where a new stress raiser goes: the first segment boundary of the first shaft (a shoulder's place), else z = 0. */
function firstBoundary(model: EditModel): string | number {
  const segs = model.shafts[0]?.segments ?? [];
  if (segs.length < 2) return 0;
  const z = readQuantity(segs[0].length, 'length');
  return isProblem(z) ? 0 : mmText(z);
}

/** A new wall of an open thin-walled section. */
export function newWall(): Record<string, Json> {
  return { length: '40 mm', thickness: '4 mm' };
}

/** The fields a section of each shape starts with (the first size of the model format's examples; invented). */
export function sectionDefaults(shape: string, firstMaterial: string): Record<string, Json> {
  switch (shape) {
    case 'solid':
      return { d: '40 mm' };
    case 'hollow':
      return { d: '50 mm', di: '30 mm' };
    case 'layered':
      return { layers: [{ d: '40 mm', material: firstMaterial }] };
    case 'rectangle':
      return { width: '60 mm', height: '20 mm' };
    case 'ellipse':
      return { width: '60 mm', height: '40 mm' };
    case 'rectangularTube':
      return { width: '80 mm', height: '60 mm', wall: '4 mm' };
    case 'thinOpen':
      return { walls: [{ length: '40 mm', thickness: '4 mm' }, { length: '80 mm', thickness: '5 mm' }, { length: '40 mm', thickness: '4 mm' }] };
    case 'custom':
      return { torsionConstant: '2.1e5 mm4', torsionalModulus: '1.1e4 mm3' };
    default:
      return {};
  }
}

/** Length of a shaft in m (sum of the segments that can be read), or null when none can. */
export function shaftLength(model: EditModel, shaftIndex: number): number | null {
  const shaft = model.shafts[shaftIndex];
  if (!shaft) return null;
  let total = 0;
  for (const seg of shaft.segments) {
    const len = readQuantity(seg.length, 'length');
    if (isProblem(len)) return null;
    total += len;
  }
  return total;
}

/** A length in m as the editor stores it: "650 mm" (6 significant figures). */
function mmText(m: number): string {
  return `${Number((m * 1000).toPrecision(6))} mm`;
}

/**
 * Where a new support goes: on the first shaft that has a free end (an end
 * without a support), at that end; z = 0 is taken only when nothing holds it.
 * When every end is held, the middle of the first shaft.
 */
export function newSupportPlace(model: EditModel): { shaft: string; at: string | number } {
  const held = (shaft: string, z: number) =>
    (model.supports ?? []).some((s) => {
      if (s.shaft !== shaft) return false;
      const at = readQuantity(s.at, 'length');
      return !isProblem(at) && Math.abs(at - z) <= 1e-9; // m: one nanometre, far below any drawn length
    });
  for (let i = 0; i < model.shafts.length; i++) {
    const id = model.shafts[i].id;
    const len = shaftLength(model, i);
    if (!held(id, 0)) return { shaft: id, at: 0 };
    if (len !== null && len > 0 && !held(id, len)) return { shaft: id, at: mmText(len) };
  }
  const first = model.shafts[0];
  const len = shaftLength(model, 0);
  return { shaft: first?.id ?? '', at: len ? mmText(len / 2) : 0 };
}

/** A new segment: the first section and material of the model. */
export function newSegment(model: EditModel): Record<string, Json> {
  const seg: Record<string, Json> = { length: '100 mm', section: model.sections[0]?.id ?? '' };
  const sec = model.sections[0];
  if (sec && sec.shape !== 'layered' && model.materials[0]) seg.material = model.materials[0].id;
  return seg;
}

/** A new layer of a layered section: a little larger than the last one. */
export function newLayer(model: EditModel, sectionIndex: number): Record<string, Json> {
  const layers = model.sections[sectionIndex]?.layers ?? [];
  return { d: layers.length ? `${10 * (layers.length + 3)} mm` : '30 mm', material: model.materials[0]?.id ?? '' };
}

/** Inserts a row into the array at `listPointer` (at `index`, default the end). */
export function insertRow(model: EditModel, listPointer: string, row: Json, index?: number): EditModel {
  const keys = parsePointer(listPointer);
  const list = (getAt(model, keys) as Json[] | undefined) ?? [];
  const at = index === undefined ? list.length : Math.max(0, Math.min(index, list.length));
  let out = setIn(model, keys, [...list.slice(0, at), row, ...list.slice(at)]);
  if (listPointer === '/loadCases' && list.length === 0) {
    // The first case: every load so far belongs to it (the contract wants a case on every load).
    const id = (row as { id: string }).id;
    out = setCaseOnLoads(out, () => id);
  }
  if (CASED.some((l) => listPointer === `/${l}`)) {
    const first = loadCasesOf(out)[0]?.id;
    const added = getAt(out, [...keys, at]) as Record<string, Json>;
    if (first !== undefined && added.case === undefined) out = setIn(out, [...keys, at, 'case'], first);
  }
  return out;
}

/** Removes the row at `index` of the array at `listPointer`; an emptied optional list is dropped. */
export function removeRow(model: EditModel, listPointer: string, index: number): EditModel {
  const keys = parsePointer(listPointer);
  const list = (getAt(model, keys) as Json[] | undefined) ?? [];
  const next = list.filter((_, i) => i !== index);
  // An emptied list of combinations goes: each case is then its own combination.
  const out = setIn(model, keys, listPointer === '/combinations' && next.length === 0 ? undefined : next);
  if (listPointer !== '/loadCases') return out;
  return withoutCase(out, (list[index] as { id?: string } | undefined)?.id ?? '');
}

/**
 * After a load case is removed: its factor leaves every combination; with no
 * case left the loads lose their `case` and the combinations go (one load state again).
 */
function withoutCase(model: EditModel, id: string): EditModel {
  if (loadCasesOf(model).length === 0) {
    const out = setCaseOnLoads(model, () => undefined);
    return setIn(setIn(out, ['loadCases'], undefined), ['combinations'], undefined);
  }
  let out = model;
  combinationsOf(model).forEach((c, i) => {
    if (c.factors && id in c.factors) out = setIn(out, ['combinations', i, 'factors', id], undefined);
  });
  return out;
}

/** The row to add for a list pointer: a top-level list, a shaft's segments, a section's layers. */
export function rowFor(model: EditModel, listPointer: string): Json {
  const keys = parsePointer(listPointer);
  if (keys.length === 1) return newRow(model, keys[0] as ListName);
  if (keys[0] === 'shafts' && keys[2] === 'segments') return newSegment(model);
  if (keys[0] === 'sections' && keys[2] === 'layers') return newLayer(model, keys[1] as number);
  if (keys[0] === 'sections' && keys[2] === 'walls') return newWall();
  throw new Error(`no rows at ${listPointer}`);
}

/** Lists whose items other fields refer to by id, and where those references live. */
const REFERENCES: Record<'shafts' | 'sections' | 'materials', Array<(m: EditModel, from: string, to: string) => EditModel>> = {
  shafts: [
    (m, a, b) => renameIn(m, 'supports', ['shaft'], a, b),
    (m, a, b) => renameIn(m, 'torques', ['shaft'], a, b),
    (m, a, b) => renameIn(m, 'distributedTorques', ['shaft'], a, b),
    (m, a, b) => renameIn(m, 'discs', ['shaft'], a, b),
    (m, a, b) => renameIn(m, 'gearMeshes', ['a', 'shaft'], a, b),
    (m, a, b) => renameIn(m, 'gearMeshes', ['b', 'shaft'], a, b),
    (m, a, b) => renameIn(m, 'couplings', ['a', 'shaft'], a, b),
    (m, a, b) => renameIn(m, 'couplings', ['b', 'shaft'], a, b),
    (m, a, b) => renameIn(m, 'stressRaisers', ['shaft'], a, b),
  ],
  sections: [
    (m, a, b) => mapSegments(m, (s) => (s.section === a ? { ...s, section: b } : s)),
    (m, a, b) => mapSegments(m, (s) => ((s as { sectionEnd?: string }).sectionEnd === a ? ({ ...s, sectionEnd: b } as typeof s) : s)),
  ],
  materials: [
    (m, a, b) => mapSegments(m, (s) => (s.material === a ? { ...s, material: b } : s)),
    (m, a, b) => ({
      ...m,
      sections: m.sections.map((sec) =>
        sec.layers && sec.layers.some((l) => l.material === a)
          ? { ...sec, layers: sec.layers.map((l) => (l.material === a ? { ...l, material: b } : l)) }
          : sec,
      ),
    }),
  ],
};

function renameIn(m: EditModel, list: ListName, path: string[], from: string, to: string): EditModel {
  const rows = (m as Record<string, unknown>)[list] as Json[] | undefined;
  if (!rows) return m;
  let out = m;
  rows.forEach((row, i) => {
    if (getAt(row, path) === from) out = setIn(out, [list, i, ...path], to);
  });
  return out;
}

function mapSegments(m: EditModel, f: (s: Model['shafts'][number]['segments'][number]) => Model['shafts'][number]['segments'][number]): EditModel {
  return { ...m, shafts: m.shafts.map((sh) => ({ ...sh, segments: sh.segments.map(f) })) };
}

/**
 * Applies one edit from the editor: sets the field at `pointer` to `value`
 * (undefined removes it), and keeps the model coherent where one field implies
 * others:
 * - renaming a shaft, section or material id renames the references to it;
 * - a section's shape brings the fields of the new shape and drops those of the old
 *   (between round shapes the outer diameter and bore are kept);
 * - a stress raiser's kind brings or drops its fillet and factor;
 * - a support's kind brings or drops its stiffness and rotation;
 * - the virtual fields `@form` (point torque: "torque" | "power"),
 *   `@elastic` (material: "G" | "E") and `@sizing` (gear mesh: "radius" | "teeth")
 *   switch between the alternative forms the contract allows.
 */
export function applyEdit(model: EditModel, pointer: string, value: Json): EditModel {
  const keys = parsePointer(pointer);
  const [list, index, field] = keys as [string, number, string];
  const row = typeof index === 'number' ? (getAt(model, [list, index]) as Record<string, Json> | undefined) : undefined;

  if (keys.length === 3 && field === '@form' && list === 'torques' && row) {
    const { torque: _t, power: _p, speed: _s, ...rest } = row;
    const next = value === 'power' ? { ...rest, power: row.power ?? '1 kW', speed: row.speed ?? '1000 rpm' } : { ...rest, torque: row.torque ?? '100 N*m' };
    return setIn(model, [list, index], next);
  }
  if (keys.length === 3 && field === '@elastic' && list === 'materials' && row) {
    const { G: _g, E: _e, nu: _n, ...rest } = row;
    const next = value === 'E' ? { ...rest, E: row.E ?? '206 GPa', nu: row.nu ?? 0.3 } : { ...rest, G: row.G ?? '79.3 GPa' };
    return setIn(model, [list, index], next);
  }
  if (keys.length === 3 && field === '@sizing' && list === 'gearMeshes' && row) {
    const a = row.a as Record<string, Json>;
    const b = row.b as Record<string, Json>;
    if (value === 'teeth') {
      const { radius: _ra, ...ra } = a;
      const { radius: _rb, ...rb } = b;
      return setIn(model, [list, index], { ...row, a: { ...ra, teeth: a.teeth ?? 20 }, b: { ...rb, teeth: b.teeth ?? 40 }, module: row.module ?? '2 mm' });
    }
    const { teeth: _ta, ...ra } = a;
    const { teeth: _tb, ...rb } = b;
    const { module: _m, ...rest } = row;
    return setIn(model, [list, index], { ...rest, a: { ...ra, radius: a.radius ?? '40 mm' }, b: { ...rb, radius: b.radius ?? '80 mm' } });
  }
  if (keys.length === 3 && field === 'kind' && list === 'stressRaisers' && row) {
    const { fillet, factor, ...rest } = row;
    if (value === 'shoulder') return setIn(model, [list, index], { ...rest, kind: 'shoulder', fillet: fillet ?? '1 mm' });
    return setIn(model, [list, index], { ...rest, kind: 'factor', factor: factor ?? 2 });
  }
  if (keys.length === 3 && field === 'shape' && list === 'sections' && row && !['solid', 'hollow', 'layered'].includes(value as string)) {
    const rest = Object.fromEntries(Object.entries(row).filter(([k]) => !(SHAPE_FIELDS as readonly string[]).includes(k)));
    return setIn(model, [list, index], { ...rest, shape: value, ...sectionDefaults(value as string, model.materials[0]?.id ?? '') });
  }
  if (keys.length === 3 && field === 'shape' && list === 'sections' && row) {
    const { d: d0, di: di0, layers, ...all } = row;
    const rest = Object.fromEntries(Object.entries(all).filter(([k]) => !(SHAPE_FIELDS as readonly string[]).includes(k)));
    // A size carries over only between round shapes.
    const round = ['solid', 'hollow', 'layered'].includes(row.shape as string);
    const d = round ? d0 : undefined;
    const di = round ? di0 : undefined;
    if (value === 'solid') return setIn(model, [list, index], { ...rest, shape: 'solid', d: d ?? '40 mm' });
    if (value === 'hollow') return setIn(model, [list, index], { ...rest, shape: 'hollow', d: d ?? '50 mm', di: di ?? '30 mm' });
    const firstMat = model.materials[0]?.id ?? '';
    const next: Record<string, Json> = { ...rest, shape: 'layered', layers: layers ?? [{ d: d ?? '40 mm', material: firstMat }] };
    if (di !== undefined) next.di = di;
    return setIn(model, [list, index], next);
  }
  if (keys.length === 3 && field === 'kind' && list === 'supports' && row) {
    const { rotation, stiffness, ...rest } = row;
    if (value === 'spring') return setIn(model, [list, index], { ...rest, kind: 'spring', stiffness: stiffness ?? '10 kN*m/rad' });
    const next: Record<string, Json> = { ...rest, kind: 'fixed' };
    if (rotation !== undefined) next.rotation = rotation;
    return setIn(model, [list, index], next);
  }
  if (keys.length === 3 && field === 'id' && row && (list === 'shafts' || list === 'sections' || list === 'materials')) {
    const from = row.id as string;
    let out = setIn(model, keys, value);
    if (typeof value === 'string' && value !== '' && from !== value) {
      for (const f of REFERENCES[list]) out = f(out, from, value);
    }
    return out;
  }
  if (keys.length === 3 && field === 'id' && row && list === 'loadCases') {
    const from = row.id as string;
    let out = setIn(model, keys, value);
    if (typeof value === 'string' && value !== '' && from !== value) {
      out = setCaseOnLoads(out, (c) => (c === from ? value : c));
      combinationsOf(out).forEach((c, i) => {
        if (c.factors && from in c.factors) {
          const factors = Object.fromEntries(Object.entries(c.factors).map(([k, f]) => [k === from ? value : k, f]));
          out = setIn(out, ['combinations', i, 'factors'], factors as Json);
        }
      });
    }
    return out;
  }
  if (keys.length === 2 && keys[0] === 'limits') {
    const out = setIn(model, keys, value);
    if (out.limits && Object.keys(out.limits).length === 0) return setIn(out, ['limits'], undefined);
    return out;
  }
  return setIn(model, keys, value);
}

/** Undo/redo over immutable snapshots. */
export class History<T> {
  private past: T[] = [];
  private future: T[] = [];
  private current: T;
  private readonly limit: number;

  /** `limit`: most undo steps kept. */
  constructor(initial: T, limit = 200) {
    this.current = initial;
    this.limit = limit;
  }

  /** The snapshot shown now. */
  get present(): T {
    return this.current;
  }

  get canUndo(): boolean {
    return this.past.length > 0;
  }

  get canRedo(): boolean {
    return this.future.length > 0;
  }

  /** Records a new snapshot; clears the redo list. A snapshot identical to the present is ignored. */
  commit(next: T): T {
    if (next === this.current) return next;
    this.past.push(this.current);
    if (this.past.length > this.limit) this.past.shift();
    this.future = [];
    this.current = next;
    return next;
  }

  /** Steps back; returns the new present (unchanged when there is nothing to undo). */
  undo(): T {
    const prev = this.past.pop();
    if (prev === undefined) return this.current;
    this.future.push(this.current);
    this.current = prev;
    return prev;
  }

  /** Steps forward; returns the new present. */
  redo(): T {
    const next = this.future.pop();
    if (next === undefined) return this.current;
    this.past.push(this.current);
    this.current = next;
    return next;
  }

  /** Starts over from a snapshot (a model opened or loaded): no undo across documents. */
  reset(value: T): T {
    this.past = [];
    this.future = [];
    this.current = value;
    return value;
  }
}

/** Issues from the API keyed by pointer, messages joined. */
export function issuesByPointer(issues: ReadonlyArray<{ pointer: string; message: string }>): Record<string, string> {
  const out: Record<string, string> = {};
  for (const i of issues) out[i.pointer] = out[i.pointer] ? `${out[i.pointer]}; ${i.message}` : i.message;
  return out;
}

/**
 * A reader's name for the place a pointer names: the presentation module's,
 * shared with the command line ("/shafts/0/segments/1/length" → `shaft "input", segment 2, length`).
 */
export function describePointer(model: EditModel | null, pointer: string): string {
  return readablePointer(model, pointer);
}

/** Structural equality of JSON values (for skipping edits that change nothing). */
export function sameJson(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (typeof a !== 'object' || typeof b !== 'object' || a === null || b === null) return false;
  if (Array.isArray(a) !== Array.isArray(b)) return false;
  const ka = Object.keys(a);
  const kb = Object.keys(b);
  if (ka.length !== kb.length) return false;
  return ka.every((k) => sameJson((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k]));
}

/** Pitch radius of one gear of a mesh in m: its radius, or teeth × module / 2; null when it cannot be read. */
export function pitchRadius(end: { radius?: unknown; teeth?: unknown }, module: unknown): number | null {
  if (end.radius !== undefined) {
    const r = readQuantity(end.radius, 'length');
    return isProblem(r) ? null : r;
  }
  const m = readQuantity(module, 'length');
  return typeof end.teeth === 'number' && !isProblem(m) ? (end.teeth * m) / 2 : null;
}

/**
 * What switching a gear mesh between pitch radius and teeth did, for a note
 * beside the mesh: the radii before and after. The tangential force is the
 * torque over the radius, so new radii change the force (and, with a ratio
 * that changes, the torques).
 */
export function sizingNote(before: EditModel, after: EditModel, index: number): string {
  const was = before.gearMeshes?.[index];
  const now = after.gearMeshes?.[index];
  if (!was || !now) return '';
  const mm = (r: number | null) => (r === null ? '?' : `${Number((r * 1000).toPrecision(4))} mm`);
  const rWas = [pitchRadius(was.a, was.module), pitchRadius(was.b, was.module)];
  const rNow = [pitchRadius(now.a, now.module), pitchRadius(now.b, now.module)];
  const how = now.module !== undefined ? 'sized by teeth (pitch radius = teeth × module / 2)' : 'sized by pitch radius';
  return `${now.id} is now ${how}: radii ${mm(rNow[0])} and ${mm(rNow[1])}, were ${mm(rWas[0])} and ${mm(rWas[1])}. The mesh force and torques change with them; check the teeth and module.`;
}

/** The model "New" starts from: one steel shaft of 500 mm held at z = 0 with a torque at its end (invented). */
export function blankModel(): EditModel {
  return {
    format: 'shaftnet/1',
    name: 'New shaft system',
    materials: [{ id: 'steel', name: 'Steel', G: '79.3 GPa', allowableShear: '55 MPa' }],
    sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
    shafts: [{ id: 'shaft1', segments: [{ length: '500 mm', section: 'd40', material: 'steel' }] }],
    supports: [{ id: 'A', shaft: 'shaft1', at: 0, kind: 'fixed' }],
    torques: [{ id: 'T1', shaft: 'shaft1', at: '500 mm', torque: '100 N*m' }],
  };
}

/**
 * The model in a file's text: a model, or a library export that wraps one in
 * `{ model }`. Throws an Error that says why when it is neither (the server
 * checks the rest when it is solved).
 */
export function modelFromFile(text: string): EditModel {
  const data = JSON.parse(text) as unknown;
  const model = (data && typeof data === 'object' && 'model' in data && !('format' in data) ? (data as { model: unknown }).model : data) as EditModel;
  if (!model || typeof model !== 'object' || !Array.isArray(model.shafts)) throw new Error('not a Shaftnet model (no "shafts")');
  return model;
}
