/**
 * Quantities and units of the model format.
 *
 * A quantity field holds either a plain number in SI base units or a string
 * "<number> <unit>". This module knows the catalogue of units by kind and turns
 * either form into an SI number, or into a `QuantityProblem` that names what is
 * wrong. It is shared by the engine, the server and the browser client, so it
 * imports nothing.
 *
 * Torque and energy share the dimension N·m, and mass moment of inertia (kg·m²)
 * is not the polar second moment of area (m⁴): each gets its own kind here, so a
 * value of one can never be read as the other.
 */

/** The kinds of quantity that the model format uses. */
export type QuantityKind =
  | 'length'
  | 'torque'
  | 'stress'
  | 'angle'
  | 'rotationalStiffness'
  | 'linearStiffness'
  | 'torquePerLength'
  | 'twistRate'
  | 'density'
  | 'massInertia'
  | 'areaMoment'
  | 'sectionModulus'
  | 'power'
  | 'angularSpeed';

/** One unit: its symbol as written and the factor that turns it into SI. */
export interface UnitDef {
  readonly symbol: string;
  readonly kind: QuantityKind;
  /** SI value of one of this unit. */
  readonly toSI: number;
}

// Exact definitions: 1 in = 0.0254 m, 1 lbf = 0.45359237 kg × 9.80665 m/s².
export const IN = 0.0254; // m
const FT = 0.3048; // m
export const LBF = 0.45359237 * 9.80665; // N
const LB = 0.45359237; // kg
const PSI = LBF / (IN * IN); // Pa
const DEG = Math.PI / 180; // rad
const HP = 550 * FT * LBF; // W, mechanical horsepower (550 ft·lbf/s)

/** SI base unit of each kind, as the solution reports it. */
export const SI_UNIT: Readonly<Record<QuantityKind, string>> = {
  length: 'm',
  torque: 'N*m',
  stress: 'Pa',
  angle: 'rad',
  rotationalStiffness: 'N*m/rad',
  linearStiffness: 'N/m',
  torquePerLength: 'N*m/m',
  twistRate: 'rad/m',
  density: 'kg/m3',
  massInertia: 'kg*m2',
  areaMoment: 'm4',
  sectionModulus: 'm3',
  power: 'W',
  angularSpeed: 'rad/s',
};

/** The physical range of a kind: the size |x| that a nonzero quantity of it may have, in SI (bounds included). */
export interface QuantityRange {
  readonly min: number;
  readonly max: number;
}

/**
 * Physical range of every kind (common practice, no source: judgements, documented in README's
 * table). Each is wide enough for any real machine, from instrument mechanisms to ship and mill
 * drives, and narrow enough that no product the engine forms for a shaft from in-range inputs can
 * overflow or fall below the smallest normal double (2.2e-308): with lengths and diameters in 1e-7 … 1e5 m and
 * moduli in 1e3 … 1e13 Pa, G·J lies within about 1e-42 … 1e32 N·m² and G·J/h of an element within about
 * 1e-47 … 1e51 N·m/rad, and the rotations, torques and stresses of one shaft stay far inside double
 * range. What several items do together (a long train of rigid meshes) is caught after the solve, by
 * server/engine/finite-guard.ts. Zero passes here (a torque of 0 is a torque); a field that must be
 * positive says so itself.
 */
export const QUANTITY_RANGE: Readonly<Record<QuantityKind, QuantityRange>> = Object.freeze({
  length: Object.freeze({ min: 1e-7, max: 1e5 }),
  torque: Object.freeze({ min: 1e-12, max: 1e12 }),
  stress: Object.freeze({ min: 1e3, max: 1e13 }),
  angle: Object.freeze({ min: 1e-12, max: 1e4 }),
  rotationalStiffness: Object.freeze({ min: 1e-9, max: 1e15 }),
  linearStiffness: Object.freeze({ min: 1e-6, max: 1e15 }),
  torquePerLength: Object.freeze({ min: 1e-12, max: 1e12 }),
  twistRate: Object.freeze({ min: 1e-12, max: 1e6 }),
  density: Object.freeze({ min: 1e-2, max: 1e5 }),
  massInertia: Object.freeze({ min: 1e-20, max: 1e10 }),
  // Second moments and moduli of sections whose sizes lie in the length range (1e-7 … 1e5 m), widened.
  areaMoment: Object.freeze({ min: 1e-30, max: 1e22 }),
  sectionModulus: Object.freeze({ min: 1e-23, max: 1e17 }),
  power: Object.freeze({ min: 1e-9, max: 1e10 }),
  angularSpeed: Object.freeze({ min: 1e-6, max: 1e6 }),
});

/**
 * Relative slack at the bounds: a bound typed in another unit ("1e-4 mm" for 1e-7 m) may land an
 * ulp or two outside it after conversion. 1e-12 is many ulps (2.2e-16 each) and far below any
 * physical meaning.
 */
const RANGE_SLACK = 1e-12;

const table: Array<[QuantityKind, string, number]> = [
  ['length', 'm', 1],
  ['length', 'mm', 1e-3],
  ['length', 'cm', 1e-2],
  ['length', 'in', IN],
  ['length', 'ft', FT],
  ['torque', 'N*m', 1],
  ['torque', 'N*mm', 1e-3],
  ['torque', 'kN*m', 1e3],
  ['torque', 'lbf*in', LBF * IN],
  ['torque', 'lbf*ft', LBF * FT],
  ['torque', 'kip*in', 1e3 * LBF * IN],
  ['torque', 'kip*ft', 1e3 * LBF * FT],
  ['stress', 'Pa', 1],
  ['stress', 'kPa', 1e3],
  ['stress', 'MPa', 1e6],
  ['stress', 'GPa', 1e9],
  ['stress', 'N/mm2', 1e6],
  ['stress', 'psi', PSI],
  ['stress', 'ksi', 1e3 * PSI],
  ['stress', 'Msi', 1e6 * PSI],
  ['angle', 'rad', 1],
  ['angle', 'mrad', 1e-3],
  ['angle', 'deg', DEG],
  ['rotationalStiffness', 'N*m/rad', 1],
  ['rotationalStiffness', 'kN*m/rad', 1e3],
  ['rotationalStiffness', 'N*mm/rad', 1e-3],
  ['rotationalStiffness', 'N*m/deg', 1 / DEG],
  ['rotationalStiffness', 'lbf*in/rad', LBF * IN],
  ['rotationalStiffness', 'lbf*ft/rad', LBF * FT],
  ['rotationalStiffness', 'kip*in/rad', 1e3 * LBF * IN],
  ['linearStiffness', 'N/m', 1],
  ['linearStiffness', 'N/mm', 1e3],
  ['linearStiffness', 'kN/mm', 1e6],
  ['linearStiffness', 'N/um', 1e6],
  ['linearStiffness', 'lbf/in', LBF / IN],
  ['torquePerLength', 'N*m/m', 1],
  ['torquePerLength', 'N*mm/mm', 1],
  ['torquePerLength', 'kN*m/m', 1e3],
  ['torquePerLength', 'lbf*in/in', LBF],
  ['torquePerLength', 'lbf*ft/ft', LBF],
  ['twistRate', 'rad/m', 1],
  ['twistRate', 'deg/m', DEG],
  ['twistRate', 'deg/ft', DEG / FT],
  ['twistRate', 'deg/in', DEG / IN],
  ['density', 'kg/m3', 1],
  ['density', 'g/cm3', 1e3],
  ['density', 'lb/in3', LB / (IN * IN * IN)],
  ['density', 'lb/ft3', LB / (FT * FT * FT)],
  ['massInertia', 'kg*m2', 1],
  ['massInertia', 'kg*mm2', 1e-6],
  ['massInertia', 'lb*in2', LB * IN * IN],
  ['massInertia', 'lb*ft2', LB * FT * FT],
  // Second moment of area (m⁴) and section modulus (m³): never the kind of kg·m² (mass inertia).
  ['areaMoment', 'm4', 1],
  ['areaMoment', 'mm4', 1e-12],
  ['areaMoment', 'cm4', 1e-8],
  ['areaMoment', 'in4', IN ** 4],
  ['sectionModulus', 'm3', 1],
  ['sectionModulus', 'mm3', 1e-9],
  ['sectionModulus', 'cm3', 1e-6],
  ['sectionModulus', 'in3', IN ** 3],
  ['power', 'W', 1],
  ['power', 'kW', 1e3],
  ['power', 'MW', 1e6],
  ['power', 'hp', HP],
  ['angularSpeed', 'rad/s', 1],
  ['angularSpeed', 'rpm', (2 * Math.PI) / 60],
  // A frequency is a rate of the same kind (dynamics): one cycle per second is 2π rad/s.
  ['angularSpeed', 'Hz', 2 * Math.PI],
  ['angularSpeed', 'kHz', 2000 * Math.PI],
];

/** Every unit the format accepts, keyed by its canonical symbol. */
export const UNITS: ReadonlyMap<string, UnitDef> = new Map(
  table.map(([kind, symbol, toSI]) => [symbol, Object.freeze({ symbol, kind, toSI })]),
);

/** The accepted symbols of one kind, in catalogue order. */
export function unitsOfKind(kind: QuantityKind): string[] {
  return table.filter((row) => row[0] === kind).map((row) => row[1]);
}

/**
 * Spellings that mean the same symbol: `·`, `⋅`, `×` or a space for `*`, spaces around `*` and `/`,
 * `²`/`³`/`^2`/`^3` for 2/3, `µ`/`μ` for u. Pure: no cache. The usual spellings of every symbol are
 * looked up in `SPELLINGS`, built once below and frozen; anything else is spelt out by rule.
 */
export function canonicalUnit(text: string): string {
  return SPELLINGS[text] ?? spellCanonical(text);
}

function spellCanonical(text: string): string {
  return text
    .trim()
    .replace(/[·⋅×]/g, '*')
    .replace(/\s*\*\s*/g, '*')
    .replace(/\s*\/\s*/g, '/')
    .replace(/\s+/g, '*')
    .replace(/\^?²/g, '2')
    .replace(/\^?³/g, '3')
    .replace(/\^([23])/g, '$1')
    .replace(/[μµ]/g, 'u');
}

/** Every catalogue symbol in the spellings people type, each with the symbol it means. */
function buildSpellings(): Readonly<Record<string, string | undefined>> {
  const out: Record<string, string> = Object.create(null) as Record<string, string>;
  const stars = ['*', '·', '⋅', '×', ' ', ' * ', ' · '];
  const slashes = ['/', ' / '];
  const powers: Array<[string, string]> = [['2', '3'], ['²', '³'], ['^2', '^3']];
  const micros = ['u', 'µ', 'μ'];
  for (const symbol of UNITS.keys()) {
    for (const star of stars) {
      for (const slash of slashes) {
        for (const [two, three] of powers) {
          for (const micro of micros) {
            const spelt = symbol
              .replace(/(^|\/)u/, `$1${micro}`)
              .replace(/\*/g, star)
              .replace(/\//g, slash)
              .replace(/2$/, two)
              .replace(/3$/, three);
            out[spelt] = symbol;
          }
        }
      }
    }
  }
  return Object.freeze(out);
}

/**
 * The usual spellings of every unit, built once from the catalogue and frozen (so no state changes
 * after the module loads): a model repeats the same few units thousands of times, and a lookup here
 * is much cheaper than spelling a text out by rule. A test holds every entry to `canonicalUnit`'s rule.
 */
export const UNIT_SPELLINGS: Readonly<Record<string, string | undefined>> = buildSpellings();
const SPELLINGS = UNIT_SPELLINGS;

/** Why a value could not be read as a quantity; `code` is one of the error registry's. */
export interface QuantityProblem {
  readonly code: 'SN_NOT_FINITE' | 'SN_QUANTITY_SYNTAX' | 'SN_UNIT_UNKNOWN' | 'SN_UNIT_KIND' | 'SN_UNIT_MISSING' | 'SN_OUT_OF_RANGE';
  readonly message: string;
}

const NUMBER_AND_UNIT = /^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$/;

/**
 * Reads a quantity of the given kind into SI, or says why it cannot.
 * A plain number is already SI; a string needs a unit of the right kind.
 * Either must be finite and, unless zero, within the kind's physical range.
 */
export function readQuantity(value: unknown, kind: QuantityKind): number | QuantityProblem {
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) return { code: 'SN_NOT_FINITE', message: 'must be a finite number' };
    return rangeProblem(value, kind) ?? value;
  }
  if (typeof value !== 'string') {
    return { code: 'SN_QUANTITY_SYNTAX', message: `must be a number in ${SI_UNIT[kind]} or a string like "${example(kind)}"` };
  }
  if (/^\s*[+-]?(nan|inf(inity)?)\b/i.test(value)) {
    return { code: 'SN_NOT_FINITE', message: `"${value}" is not a finite number` };
  }
  const match = NUMBER_AND_UNIT.exec(value);
  if (!match) {
    return { code: 'SN_QUANTITY_SYNTAX', message: `"${value}" is not "<number> <unit>", e.g. "${example(kind)}"` };
  }
  const magnitude = Number(match[1]);
  if (!Number.isFinite(magnitude)) return { code: 'SN_NOT_FINITE', message: `"${value}" is not a finite number` };
  const unitText = match[2];
  if (unitText === '') {
    return {
      code: 'SN_UNIT_MISSING',
      message: `"${value}" has no unit: write e.g. "${example(kind)}", or a plain number for ${SI_UNIT[kind]}`,
    };
  }
  const unit = UNITS.get(canonicalUnit(unitText));
  if (!unit) {
    return {
      code: 'SN_UNIT_UNKNOWN',
      message: `unknown unit "${unitText}"; for ${describeKind(kind)} use one of ${unitsOfKind(kind).join(', ')}`,
    };
  }
  if (unit.kind !== kind) {
    return {
      code: 'SN_UNIT_KIND',
      message: `"${unitText}" is a unit of ${describeKind(unit.kind)}, but this field is ${describeKind(kind)} (${unitsOfKind(kind).join(', ')})`,
    };
  }
  const si = magnitude * unit.toSI;
  if (!Number.isFinite(si)) return { code: 'SN_NOT_FINITE', message: `"${value}" overflows` };
  return rangeProblem(si, kind, value) ?? si;
}

/**
 * Null when `si` (finite) is zero or its size lies within the physical range of `kind`; otherwise
 * the SN_OUT_OF_RANGE problem, naming the range and its unit. `typed` is what the user wrote, when it
 * was not the SI number itself; `what` says what the number is when it is derived ("the torque P/ω").
 */
export function rangeProblem(si: number, kind: QuantityKind, typed?: unknown, what?: string): QuantityProblem | null {
  const size = Math.abs(si);
  const { min, max } = QUANTITY_RANGE[kind];
  if (size === 0 || (size >= min * (1 - RANGE_SLACK) && size <= max * (1 + RANGE_SLACK))) return null;
  const unit = SI_UNIT[kind];
  const value = `${short(si)} ${unit}`;
  const shown = typed === undefined || typed === si ? value : `${JSON.stringify(typed)} (${value})`;
  return {
    code: 'SN_OUT_OF_RANGE',
    message: `${what === undefined ? '' : `${what} `}${shown} is outside the physical range for ${describeKind(kind)}: its size must lie from ${short(min)} to ${short(max)} ${unit}`,
  };
}

/** A number for messages: four figures at most, powers of ten written plainly ("1e-7", "2.5e12", "-1.798e308"). */
function short(x: number): string {
  if (x === 0) return '0';
  const [mantissa, exponent] = x.toExponential(3).split('e');
  const e = Number(exponent);
  if (e >= 3 || e < -2) return `${mantissa.replace(/\.?0+$/, '')}e${e}`;
  return String(Number(x.toPrecision(4)));
}

/** True when `readQuantity` answered a problem rather than a number. */
export function isProblem(x: number | QuantityProblem): x is QuantityProblem {
  return typeof x !== 'number';
}

/** Converts an SI number to the named unit (which must exist). */
export function fromSI(si: number, symbol: string): number {
  const unit = UNITS.get(canonicalUnit(symbol));
  if (!unit) throw new Error(`unknown unit ${symbol}`);
  return si / unit.toSI;
}

/** Converts a number in the named unit to SI (which must exist). */
export function toSI(value: number, symbol: string): number {
  const unit = UNITS.get(canonicalUnit(symbol));
  if (!unit) throw new Error(`unknown unit ${symbol}`);
  return value * unit.toSI;
}

const KIND_WORDS: Record<QuantityKind, string> = {
  length: 'length',
  torque: 'torque',
  stress: 'stress or modulus',
  angle: 'angle',
  rotationalStiffness: 'torsional stiffness',
  linearStiffness: 'linear stiffness',
  torquePerLength: 'torque per length',
  twistRate: 'twist per length',
  density: 'density',
  massInertia: 'mass moment of inertia',
  areaMoment: 'second moment of area',
  sectionModulus: 'section modulus',
  power: 'power',
  angularSpeed: 'rotational speed or frequency',
};

/** A reader's word for a kind, for messages. */
export function describeKind(kind: QuantityKind): string {
  return KIND_WORDS[kind];
}

const EXAMPLES: Record<QuantityKind, string> = {
  length: '40 mm',
  torque: '350 N*m',
  stress: '79.3 GPa',
  angle: '0.5 deg',
  rotationalStiffness: '12 kN*m/rad',
  linearStiffness: '400 N/mm',
  torquePerLength: '-40 N*m/m',
  twistRate: '0.25 deg/m',
  density: '7850 kg/m3',
  massInertia: '0.8 kg*m2',
  areaMoment: '2.1e5 mm4',
  sectionModulus: '1.1e4 mm3',
  power: '15 kW',
  angularSpeed: '1450 rpm',
};

/** A typical value of a kind, for messages and placeholders. */
export function example(kind: QuantityKind): string {
  return EXAMPLES[kind];
}
