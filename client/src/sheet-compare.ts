/**
 * What the compare views say: a comparison (shared-types/compare.ts, as the API answers it) as rows
 * of text for the two tables, inputs and results, in the user's unit system. Pure, tested in
 * tests/client/compare.test.ts.
 */
import type { InputChange, ResultChange } from '../../shared-types/compare.js';
import { type FieldKind, type UnitSystem, displayUnit, formatNumber, prettyUnit, toDisplay } from '../../shared-types/present.js';

/** One row of the inputs table. */
export interface InputRow {
  readonly change: InputChange['change'];
  /** "torques T", "sections d40", "model". */
  readonly item: string;
  readonly field: string;
  readonly from: string;
  readonly to: string;
}

/** One row of the results table. */
export interface ResultRow {
  readonly what: string;
  readonly item: string;
  /** The display unit ("N·m", "MPa"), "" for a ratio. */
  readonly unit: string;
  readonly from: string;
  readonly to: string;
  readonly delta: string;
  /** "+14.3 %", "—". */
  readonly relative: string;
}

/** A value as typed: strings as they are, numbers plainly, items as compact JSON; "—" when absent. */
export function typedText(v: unknown): string {
  if (v === null || v === undefined) return '—';
  if (typeof v === 'string') return v;
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  return JSON.stringify(v);
}

export function inputRows(changes: readonly InputChange[]): InputRow[] {
  return changes.map((c) => ({
    change: c.change,
    item: c.list === 'model' ? 'model' : `${c.list} ${c.item}`,
    field: c.field || '(whole item)',
    from: typedText(c.from),
    to: typedText(c.to),
  }));
}

const WORDS: Readonly<Record<string, string>> = {
  reaction: 'Reaction',
  peakTorque: 'Peak torque',
  peakShear: 'Peak shear stress',
  utilisation: 'Utilisation',
  twist: 'Twist',
  totalTwist: 'Total twist',
  meshForce: 'Mesh force',
  couplingTorque: 'Coupling torque',
  firstYieldFactor: 'First yield factor',
  collapseFactor: 'Collapse factor',
  frequency: 'Natural frequency',
};

const KINDS: Readonly<Record<string, FieldKind | undefined>> = { 'N·m': 'torque', N: 'force', Pa: 'stress', rad: 'angle' };

export function resultRows(changes: readonly ResultChange[], system: UnitSystem): ResultRow[] {
  return changes.map((c) => {
    const kind = KINDS[c.unit];
    const show = (x: number | null) => (x === null ? '—' : formatNumber(kind ? toDisplay(x, kind, system) : x));
    const unit = kind ? prettyUnit(displayUnit(kind, system)) : c.unit === '1' ? '' : c.unit;
    return {
      what: WORDS[c.quantity] ?? c.quantity,
      item: c.item,
      unit,
      from: show(c.from),
      to: show(c.to),
      delta: c.delta === null ? '—' : (c.delta > 0 ? '+' : '') + show(c.delta),
      relative: c.relative === null ? '—' : `${c.relative > 0 ? '+' : ''}${formatNumber(c.relative * 100, 3)} %`,
    };
  });
}
