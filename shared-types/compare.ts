/**
 * Compare two revisions of a model (or the user's edit with the library's latest): what changed in
 * the inputs, as typed, and in the results, with absolute and relative deltas. Pure: the server's
 * compare route and the client's conflict dialog run this same code.
 *
 * Inputs. Lists whose items carry an `id` (materials, sections, shafts, supports, torques, …) are
 * matched by id, never by array index: moving an item in its list is no change. Inside a matched
 * item every field is compared as typed ("40 mm" → "45 mm" is a change even where "0.04" would be
 * equal in SI: the typed form is what the author wrote); nested objects are walked by field
 * (`a.radius`), arrays without ids by position (`segments[1].length`, `layers[0].d`). An item only
 * in the newer model is `added`, only in the older `removed`, with the whole item as typed. Fields
 * outside the lists (`name`, `notes`, `limits.twistRate`) belong to the item "model".
 *
 * Results. Matched by meaning: a reaction by support id, a segment by shaft id and index, a layer by
 * its material, a mode by its number. Reported: reactions, segments' peak torque, peak stress,
 * utilisation and twist, each shaft's total twist, mesh forces, coupling torques, the overload
 * factors (single state) and each combination's reactions, and natural frequencies where present.
 * Only results that changed are listed (see RESULT_NOISE); a result present on one side only is
 * listed with `null` on the other.
 */

/** One input that differs between the two models. */
export interface InputChange {
  readonly change: 'changed' | 'added' | 'removed';
  /** The list the item is in ("sections"), or "model" for top-level fields. */
  readonly list: string;
  /** The item's id; "" for the model's top-level fields. */
  readonly item: string;
  /** The field within the item, as a path ("d", "a.radius", "segments[1].length"); "" for a whole item. */
  readonly field: string;
  /** As typed in the older model; null when absent there. */
  readonly from: unknown;
  /** As typed in the newer model; null when absent there. */
  readonly to: unknown;
}

/** The unit of a compared result (SI, as the solution carries it). */
export type ResultUnit = 'N·m' | 'N' | 'Pa' | 'rad' | 'Hz' | '1';

/** One result that differs between the two solutions. */
export interface ResultChange {
  /** What it is: 'reaction', 'peakTorque', 'peakShear', 'utilisation', 'twist', 'totalTwist', 'meshForce', 'couplingTorque', 'firstYieldFactor', 'collapseFactor', 'frequency'. */
  readonly quantity: string;
  /** Which one: "A", "input[0]", "input[0] steel", "peak: A", "mode 2". */
  readonly item: string;
  readonly unit: ResultUnit;
  readonly from: number | null;
  readonly to: number | null;
  /** to − from; null when either is absent. */
  readonly delta: number | null;
  /** (to − from) / |from|; null when either is absent or from is 0. */
  readonly relative: number | null;
}

/** The answer of a comparison. */
export interface Comparison {
  readonly inputs: InputChange[];
  readonly results: ResultChange[];
}

/**
 * Two results closer than this, relative to the larger, dimensionless, count as unchanged: solves of
 * identical inputs agree bit for bit; this only hides round-off where one input moved in a list
 * (a different assembly order). Far below any printed digit.
 */
export const RESULT_NOISE = 1e-12;

/** The model's lists whose items carry an `id`, in the model format's order. */
export const ID_LISTS = [
  'materials',
  'sections',
  'shafts',
  'supports',
  'torques',
  'distributedTorques',
  'gearMeshes',
  'couplings',
  'discs',
  'stressRaisers',
  'loadCases',
  'combinations',
] as const;

type Json = unknown;

function isObject(x: Json): x is Record<string, Json> {
  return x !== null && typeof x === 'object' && !Array.isArray(x);
}

/** Every leaf of a value by its path under `prefix` (objects by field, arrays by position). */
function leaves(value: Json, prefix: string, out: Map<string, Json>): void {
  if (Array.isArray(value)) {
    if (value.length === 0) out.set(prefix, value);
    value.forEach((v, i) => leaves(v, `${prefix}[${i}]`, out));
  } else if (isObject(value)) {
    const keys = Object.keys(value);
    if (keys.length === 0) out.set(prefix, value);
    for (const k of keys) leaves(value[k], prefix === '' ? k : `${prefix}.${k}`, out);
  } else out.set(prefix, value);
}

/** Same JSON value (leaves are compared by this, so 40 and 40.0 are one, "40 mm" and 0.04 two). */
function sameLeaf(a: Json, b: Json): boolean {
  return JSON.stringify(a) === JSON.stringify(b);
}

function diffFields(list: string, item: string, from: Json, to: Json, out: InputChange[]): void {
  const a = new Map<string, Json>();
  const b = new Map<string, Json>();
  leaves(from, '', a);
  leaves(to, '', b);
  for (const [path, v] of a) {
    if (!b.has(path)) out.push({ change: 'removed', list, item, field: path, from: v, to: null });
    else if (!sameLeaf(v, b.get(path))) out.push({ change: 'changed', list, item, field: path, from: v, to: b.get(path) });
  }
  for (const [path, v] of b) if (!a.has(path)) out.push({ change: 'added', list, item, field: path, from: null, to: v });
}

/** Items of a list by id, in list order; an item without a string id is keyed "#<index>". A repeated id keeps its first item. */
function byId(list: Json): Map<string, Json> {
  const out = new Map<string, Json>();
  if (!Array.isArray(list)) return out;
  list.forEach((item, i) => {
    const id = isObject(item) && typeof item.id === 'string' ? item.id : `#${i}`;
    if (!out.has(id)) out.set(id, item);
  });
  return out;
}

/** The inputs that differ from `older` to `newer` (both models as typed), list by list in model order. */
export function compareInputs(older: Json, newer: Json): InputChange[] {
  const out: InputChange[] = [];
  const a = isObject(older) ? older : {};
  const b = isObject(newer) ? newer : {};
  // Top-level fields that are not id lists: the item "model".
  const lists = new Set<string>(ID_LISTS);
  const restA: Record<string, Json> = {};
  const restB: Record<string, Json> = {};
  for (const k of Object.keys(a)) if (!lists.has(k)) restA[k] = a[k];
  for (const k of Object.keys(b)) if (!lists.has(k)) restB[k] = b[k];
  diffFields('model', '', restA, restB, out);
  for (const list of ID_LISTS) {
    const ia = byId(a[list]);
    const ib = byId(b[list]);
    for (const [id, item] of ia) {
      if (!ib.has(id)) out.push({ change: 'removed', list, item: id, field: '', from: item, to: null });
      else diffFields(list, id, item, ib.get(id), out);
    }
    for (const [id, item] of ib) if (!ia.has(id)) out.push({ change: 'added', list, item: id, field: '', from: null, to: item });
  }
  return out;
}

// ---------------------------------------------------------------------------
// Results

/** The parts of a solution compared here, typed loosely: later features add fields, older servers lack them. */
export interface ComparableSolution {
  readonly reactions?: ReadonlyArray<{ support: string; torque: number }>;
  readonly shafts?: ReadonlyArray<{
    id: string;
    totalTwist?: number;
    segments?: ReadonlyArray<{ index: number; maxAbsTorque?: number; twist?: number; layers?: ReadonlyArray<{ material: string; maxShear?: number; utilisation?: number | null }> }>;
  }>;
  readonly gearMeshes?: ReadonlyArray<{ gearMesh: string; force: number }>;
  readonly couplings?: ReadonlyArray<{ coupling: string; torqueB: number }>;
  readonly overload?: { firstYieldFactor?: number | null; collapseFactor?: number | null } | null;
  readonly combinations?: ReadonlyArray<{ id: string; reactions?: ReadonlyArray<{ support: string; torque: number }> }>;
  readonly modes?: ReadonlyArray<{ frequency: number }>;
}

interface Keyed {
  quantity: string;
  item: string;
  unit: ResultUnit;
  value: number | null;
}

/** Every compared result of a solution under its key, in reading order. */
function resultEntries(s: ComparableSolution | null | undefined): Map<string, Keyed> {
  const out = new Map<string, Keyed>();
  if (!s) return out;
  const put = (quantity: string, item: string, unit: ResultUnit, value: number | null | undefined) => {
    const key = `${quantity}\u0000${item}`;
    if (!out.has(key)) out.set(key, { quantity, item, unit, value: typeof value === 'number' ? value : null });
  };
  for (const r of s.reactions ?? []) put('reaction', r.support, 'N·m', r.torque);
  for (const sh of s.shafts ?? []) {
    for (const seg of sh.segments ?? []) {
      const at = `${sh.id}[${seg.index}]`;
      put('peakTorque', at, 'N·m', seg.maxAbsTorque);
      put('twist', at, 'rad', seg.twist);
      for (const l of seg.layers ?? []) {
        put('peakShear', `${at} ${l.material}`, 'Pa', l.maxShear);
        if (l.utilisation !== null && l.utilisation !== undefined) put('utilisation', `${at} ${l.material}`, '1', l.utilisation);
      }
    }
    put('totalTwist', sh.id, 'rad', sh.totalTwist);
  }
  for (const g of s.gearMeshes ?? []) put('meshForce', g.gearMesh, 'N', g.force);
  for (const c of s.couplings ?? []) put('couplingTorque', c.coupling, 'N·m', c.torqueB);
  if (s.overload) {
    put('firstYieldFactor', 'loads', '1', s.overload.firstYieldFactor);
    put('collapseFactor', 'loads', '1', s.overload.collapseFactor);
  }
  for (const c of s.combinations ?? []) for (const r of c.reactions ?? []) put('reaction', `${c.id}: ${r.support}`, 'N·m', r.torque);
  (s.modes ?? []).forEach((m, i) => put('frequency', `mode ${i + 1}`, 'Hz', m.frequency));
  return out;
}

function differs(a: number | null, b: number | null): boolean {
  if (a === null || b === null) return a !== b;
  return Math.abs(b - a) > RESULT_NOISE * Math.max(Math.abs(a), Math.abs(b));
}

/** The results that differ from `older` to `newer`; either may be null (a model that does not solve). */
export function compareResults(older: ComparableSolution | null | undefined, newer: ComparableSolution | null | undefined): ResultChange[] {
  const a = resultEntries(older);
  const b = resultEntries(newer);
  const out: ResultChange[] = [];
  const keys = [...a.keys(), ...[...b.keys()].filter((k) => !a.has(k))];
  for (const key of keys) {
    const x = a.get(key);
    const y = b.get(key);
    const from = x?.value ?? null;
    const to = y?.value ?? null;
    if (!differs(from, to)) continue;
    const e = (x ?? y)!;
    const delta = from !== null && to !== null ? to - from : null;
    const relative = delta !== null && from !== 0 ? delta / Math.abs(from!) : null;
    out.push({ quantity: e.quantity, item: e.item, unit: e.unit, from, to, delta, relative });
  }
  return out;
}

/** The whole comparison: inputs of the two models, results of their two solutions. */
export function compareRevisions(
  older: { model: Json; solution: ComparableSolution | null },
  newer: { model: Json; solution: ComparableSolution | null },
): Comparison {
  return { inputs: compareInputs(older.model, newer.model), results: compareResults(older.solution, newer.solution) };
}
