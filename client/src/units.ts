/**
 * Display unit systems of the client, built on the model format's unit
 * catalogue (shared-types/quantity.ts).
 *
 * Every input and output names a field kind; the chosen system maps it to one
 * display unit. An input typed as a plain number is read in that unit; an input
 * typed with its own unit ("2 in") is kept as typed, whatever the system.
 */
import {
  type QuantityKind,
  canonicalUnit,
  fromSI,
  isProblem,
  readQuantity,
  UNITS,
} from '../../shared-types/quantity.js';

/** The two systems a user may choose. */
export type UnitSystem = 'SI' | 'US';

/**
 * What a field holds. The quantity kinds of the format, plus `modulus` (a stress
 * shown in larger units) and `force` (an output only: the format has no force input).
 */
export type FieldKind = QuantityKind | 'modulus' | 'force';

/** Display unit of each field kind, per system (canonical symbols of the catalogue). */
export const DISPLAY_UNITS: Readonly<Record<UnitSystem, Readonly<Record<FieldKind, string>>>> = {
  SI: {
    length: 'mm',
    torque: 'N*m',
    stress: 'MPa',
    modulus: 'GPa',
    angle: 'deg',
    rotationalStiffness: 'kN*m/rad',
    linearStiffness: 'N/mm',
    torquePerLength: 'N*m/m',
    twistRate: 'deg/m',
    density: 'kg/m3',
    massInertia: 'kg*m2',
    power: 'kW',
    angularSpeed: 'rpm',
    force: 'N',
  },
  US: {
    length: 'in',
    torque: 'lbf*in',
    stress: 'ksi',
    modulus: 'Msi',
    angle: 'deg',
    rotationalStiffness: 'kip*in/rad',
    linearStiffness: 'lbf/in',
    torquePerLength: 'lbf*in/in',
    twistRate: 'deg/ft',
    density: 'lb/in3',
    massInertia: 'lb*in2',
    power: 'hp',
    angularSpeed: 'rpm',
    force: 'lbf',
  },
};

// Force is not a quantity of the model format, so its units live here.
// 1 lbf = 0.45359237 kg × 9.80665 m/s² (exact, by definition of the pound-force).
const FORCE_UNITS: Readonly<Record<string, number>> = { N: 1, lbf: 0.45359237 * 9.80665 };

/** The quantity kind of the format that a field kind is read as. */
export function quantityKindOf(kind: FieldKind): QuantityKind {
  if (kind === 'modulus') return 'stress';
  if (kind === 'force') throw new Error('force is an output-only kind');
  return kind;
}

/** Display unit symbol (canonical, e.g. "N*m") of a field kind in a system. */
export function displayUnit(kind: FieldKind, system: UnitSystem): string {
  return DISPLAY_UNITS[system][kind];
}

/** A unit symbol as a reader sees it: "N*m" → "N·m", "kg/m3" → "kg/m³". */
export function prettyUnit(symbol: string): string {
  return symbol.replace(/\*/g, '·').replace(/2$/, '²').replace(/3$/, '³');
}

/** Converts an SI value to the display unit of a field kind. */
export function toDisplay(si: number, kind: FieldKind, system: UnitSystem): number {
  const unit = displayUnit(kind, system);
  if (kind === 'force') return si / FORCE_UNITS[unit];
  return fromSI(si, unit);
}

/** Converts a value in the display unit of a field kind back to SI. */
export function fromDisplay(value: number, kind: FieldKind, system: UnitSystem): number {
  const unit = displayUnit(kind, system);
  if (kind === 'force') return value * FORCE_UNITS[unit];
  const def = UNITS.get(canonicalUnit(unit));
  if (!def) throw new Error(`unknown unit ${unit}`);
  return value * def.toSI;
}

/**
 * A number for reading: `sig` significant figures, no trailing zeros, plain
 * notation between 1e-4 and 1e7, exponent outside. Always a "-" for negatives.
 */
export function formatNumber(x: number, sig = 5): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0 || Object.is(x, -0)) return '0';
  const abs = Math.abs(x);
  if (abs < 1e-4 || abs >= 1e7) {
    const [m, e] = x.toExponential(sig - 1).split('e');
    return `${String(Number(m))}e${Number(e)}`;
  }
  return String(Number(x.toPrecision(sig)));
}

/** An SI value shown in the system's unit, with the unit: "140.2 N·m". */
export function formatQuantity(si: number | null | undefined, kind: FieldKind, system: UnitSystem, sig = 5): string {
  if (si === null || si === undefined || !Number.isFinite(si)) return '—';
  return `${formatNumber(toDisplay(si, kind, system), sig)} ${prettyUnit(displayUnit(kind, system))}`;
}

/** An SI value as a bare number in the system's unit (for tables whose header carries the unit). */
export function formatValue(si: number | null | undefined, kind: FieldKind, system: UnitSystem, sig = 5): string {
  if (si === null || si === undefined || !Number.isFinite(si)) return '—';
  return formatNumber(toDisplay(si, kind, system), sig);
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
