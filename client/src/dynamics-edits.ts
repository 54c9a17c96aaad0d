/**
 * The model's `dynamics` object in the editor (model format: "Dynamics"),
 * typed here until the shared model type has it: a new one with places that
 * make sense, a new excitation, the orders as a list typed in one field, the
 * margin as a percentage. Pure: every function returns new values; the panel
 * sends them up as `sn-edit` events, so undo works as for any other edit.
 */
import type { EditModel } from './model-edits.js';
import { nextId } from './model-edits.js';

/** An excitation: a harmonic torque of `order` × the reference speed at a point. */
export interface ExcitationRow { id: string; shaft: string; at: unknown; amplitude: unknown; order: number }

/** The `dynamics` object as the editor holds it (values as typed). */
export interface DynamicsInput {
  modes?: number;
  maxFrequency?: unknown;
  speed?: { shaft: string; min: unknown; max: unknown };
  orders?: number[];
  margin?: number;
  damping?: number;
  excitations?: ExcitationRow[];
}

/** The model's dynamics, or undefined when it has none. */
export function dynamicsOf(model: EditModel | null): DynamicsInput | undefined {
  return (model as { dynamics?: DynamicsInput } | null)?.dynamics;
}

/**
 * A new dynamics object: the six lowest modes (the contract's default), the
 * first shaft running 600 to 1800 rpm, orders 1 and 2, a ±10 % margin and a
 * damping ratio of 0.02 (common practice for steel drivetrains, no source:
 * the user must supply their own estimate). No excitation: none is assumed.
 */
export function newDynamics(model: EditModel): DynamicsInput {
  return {
    modes: 6,
    speed: { shaft: model.shafts[0]?.id ?? '', min: '600 rpm', max: '1800 rpm' },
    orders: [1, 2],
    margin: 0.1,
    damping: 0.02,
  };
}

/** A new excitation on the reference shaft (else the first), at z = 0, of order 1. */
export function newExcitation(model: EditModel, dyn: DynamicsInput): ExcitationRow {
  const used = (dyn.excitations ?? []).map((e) => e.id);
  return { id: nextId('E', used), shaft: dyn.speed?.shaft ?? model.shafts[0]?.id ?? '', at: 0, amplitude: '10 N*m', order: 1 };
}

/** The excitations with one added at `index` (default the end). */
export function withExcitation(model: EditModel, dyn: DynamicsInput, index?: number): ExcitationRow[] {
  const list = dyn.excitations ?? [];
  const at = index === undefined ? list.length : Math.max(0, Math.min(index, list.length));
  return [...list.slice(0, at), newExcitation(model, dyn), ...list.slice(at)];
}

/** The excitations without the one at `index`; undefined (the field goes) when none is left. */
export function withoutExcitation(dyn: DynamicsInput, index: number): ExcitationRow[] | undefined {
  const next = (dyn.excitations ?? []).filter((_, i) => i !== index);
  return next.length ? next : undefined;
}

/** The orders as one field shows them: "1, 2, 4". */
export function ordersText(orders: readonly number[] | undefined): string {
  return (orders ?? []).join(', ');
}

/**
 * Orders typed in one field ("1, 2, 4", spaces or commas between): each a
 * positive number (half orders are real: a four-stroke engine's), or a problem.
 */
export function parseOrders(text: string): { value: number[] | undefined; problem?: string } {
  const parts = text.split(/[\s,;]+/).filter((p) => p !== '');
  if (parts.length === 0) return { value: undefined };
  const out: number[] = [];
  for (const p of parts) {
    const n = Number(p);
    if (!/^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/.test(p) || !Number.isFinite(n) || n <= 0) {
      return { value: undefined, problem: `"${p}" is not an order: give positive numbers, e.g. "1, 2, 4"` };
    }
    out.push(n);
  }
  return { value: out };
}

/** The margin (a fraction) as a percentage to show: 0.1 → "10". */
export function marginText(margin: number | undefined): string {
  return margin === undefined ? '' : String(Number((margin * 100).toPrecision(10)));
}

/** A percentage typed → the margin fraction, or a problem; empty removes it. */
export function parseMargin(text: string): { value: number | undefined; problem?: string } {
  const t = text.trim().replace(/%$/, '').trim();
  if (t === '') return { value: undefined };
  const n = Number(t);
  if (!/^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/.test(t) || !Number.isFinite(n) || n < 0) {
    return { value: undefined, problem: `"${text.trim()}" is not a percentage (0 or more)` };
  }
  return { value: Number((n / 100).toPrecision(12)) };
}

/** Which way the number of modes is given: the lowest N, or every mode up to a frequency. */
export type ModesBy = 'count' | 'upTo';

export function modesBy(dyn: DynamicsInput): ModesBy {
  return dyn.maxFrequency !== undefined ? 'upTo' : 'count';
}

/** The dynamics switched to the other way of giving modes (the other field goes). */
export function switchModesBy(dyn: DynamicsInput, by: ModesBy): DynamicsInput {
  const { modes, maxFrequency, ...rest } = dyn;
  return by === 'upTo' ? { ...rest, maxFrequency: maxFrequency ?? '500 Hz' } : { ...rest, modes: modes ?? 6 };
}
