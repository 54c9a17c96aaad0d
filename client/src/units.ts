/**
 * The client's units: what an input's text means and what it shows. Display
 * unit systems, conversions and number formatting are the presentation
 * module's (shared-types/present.ts, shared with the command line), re-exported
 * here; this file adds reading and writing the editor's inputs.
 *
 * An input typed as a plain number is read in the system's display unit; an
 * input typed with its own unit ("2 in") is kept as typed, whatever the system.
 */
import { type QuantityKind, isProblem, readQuantity } from '../../shared-types/quantity.js';
import { type FieldKind, type UnitSystem, displayUnit, formatNumber, toDisplay } from '../../shared-types/present.js';

export {
  type FieldKind,
  type UnitSystem,
  DISPLAY_UNITS,
  UNIT_SYSTEMS,
  UNIT_SYSTEM_LABELS,
  displayUnit,
  formatNumber,
  formatQuantity,
  formatValue,
  fromDisplay,
  isUnitSystem,
  prettyUnit,
  toDisplay,
} from '../../shared-types/present.js';

/** The quantity kind of the format that an input of a field kind is read as (results-only kinds have none). */
export function quantityKindOf(kind: FieldKind): QuantityKind {
  if (kind === 'modulus') return 'stress';
  if (kind === 'force' || kind === 'torsionConstant' || kind === 'torsionalRigidity' || kind === 'torsionalStiffness') {
    throw new Error(`${kind} is a result, not an input`);
  }
  return kind;
}

/** Reads a stored quantity (number in SI or "<n> <unit>") into SI, or null when it cannot be read. */
export function storedToSI(stored: unknown, kind: FieldKind): number | null {
  if (stored === undefined || stored === null || stored === '') return null;
  const r = readQuantity(stored, quantityKindOf(kind));
  return isProblem(r) ? null : r;
}

/**
 * The text an input shows for a stored quantity: the value in the system's
 * display unit when it can be read, the raw text when it cannot (so the user
 * sees and can fix what they typed), '' when absent.
 */
export function inputText(stored: unknown, kind: FieldKind, system: UnitSystem): string {
  if (stored === undefined || stored === null) return '';
  const si = storedToSI(stored, kind);
  if (si === null) return String(stored);
  return formatNumber(toDisplay(si, kind, system), 6);
}

/** What an input's text becomes in the model, or why it cannot. */
export interface ParsedInput {
  /** The value to store; undefined removes an optional field. */
  readonly value: string | number | undefined;
  /** A message when the text is not a quantity of this kind (the raw text is still stored, so the server names the field too). */
  readonly problem?: string;
}

const PLAIN_NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * Turns what a user typed into a stored quantity. A plain number is in the
 * display unit of the system ("41" in SI length → "41 mm"); a number with a
 * unit is kept as typed ("2 in"); empty text removes the field.
 */
export function parseInput(text: string, kind: FieldKind, system: UnitSystem): ParsedInput {
  const t = text.trim().replace(/\u2212/g, '-');
  if (t === '') return { value: undefined };
  if (PLAIN_NUMBER.test(t)) {
    const n = Number(t);
    if (!Number.isFinite(n)) return { value: t, problem: `"${t}" is not a finite number` };
    return { value: `${t} ${displayUnit(kind, system)}` };
  }
  const r = readQuantity(t, quantityKindOf(kind));
  if (isProblem(r)) return { value: t, problem: r.message };
  return { value: t };
}

/** Reads a plain number field (Poisson's ratio, teeth); undefined when empty. */
export function parsePlainNumber(text: string, integer: boolean): ParsedInput {
  const t = text.trim().replace(/\u2212/g, '-');
  if (t === '') return { value: undefined };
  if (!PLAIN_NUMBER.test(t)) return { value: t, problem: `"${t}" is not a number` };
  const n = Number(t);
  if (integer && !Number.isInteger(n)) return { value: t, problem: `"${t}" is not a whole number` };
  return { value: n };
}
