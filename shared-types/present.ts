/**
 * Presentation of models and solutions, shared by the command line and the
 * browser client: display unit systems, number formatting, the station table
 * as CSV, the cautions text, slugs for file names and readable JSON-pointer
 * paths. One copy of each, so the two faces of the program say the same thing.
 *
 * Pure and browser-safe: it imports only the contract (shared-types) and keeps
 * no mutable state.
 *
 * The API (stable; new kinds and functions may be added):
 * - `UnitSystem` ('si' | 'us'), `UNIT_SYSTEMS`, `isUnitSystem`, `UNIT_SYSTEM_LABELS`
 * - `FieldKind`, `DISPLAY_UNITS`, `displayUnit`, `unitFactor`, `prettyUnit`,
 *   `toDisplay`, `fromDisplay`, `LBF`
 * - `formatNumber`, `formatValue`, `formatQuantity`
 * - `CAUTIONS`
 * - `slug`, `fileName`
 * - `readablePointer`
 * - `StationColumns`, `stationColumns`, `STATION_CSV_HEADER`, `stationCsvHeader`,
 *   `writeStationCsv`, `stationCsv`
 */
import type { Solution } from './solution.js';
import { IN, LBF, SI_UNIT, UNITS, canonicalUnit, type QuantityKind } from './quantity.js';

export { IN, LBF } from './quantity.js';

// ---------------------------------------------------------------------------
// Unit systems and display units

/** The display unit systems a user may choose: SI (mm, N·m, MPa) or US customary (in, lbf·in, ksi). */
export type UnitSystem = 'si' | 'us';

/** Every unit system, in the order a chooser lists them. */
export const UNIT_SYSTEMS: readonly UnitSystem[] = ['si', 'us'];

/** True for one of the spellings of `UnitSystem`. */
export function isUnitSystem(x: unknown): x is UnitSystem {
  return x === 'si' || x === 'us';
}

/** A reader's label of each system, for a chooser or a usage text. */
export const UNIT_SYSTEM_LABELS: Readonly<Record<UnitSystem, string>> = {
  si: 'SI: mm, N·m, MPa',
  us: 'US: in, lbf·in, ksi',
};

/**
 * What a displayed number is. The quantity kinds of the model format, plus
 * kinds that only results have:
 * - `modulus`: a stress shown in larger units (G, E);
 * - `force`: a gear mesh's tangential force;
 * - `torsionConstant`: a section's J, m⁴;
 * - `torsionalRigidity`: Σ G·J of a segment, N·m²;
 * - `torsionalStiffness`: a segment's G·J/L, N·m/rad (a support spring is `rotationalStiffness`).
 */
export type FieldKind = QuantityKind | 'modulus' | 'force' | 'torsionConstant' | 'torsionalRigidity' | 'torsionalStiffness';

/** Display unit of each kind, per system (ASCII symbols: "N*m"; `prettyUnit` for the screen). */
export const DISPLAY_UNITS: Readonly<Record<UnitSystem, Readonly<Record<FieldKind, string>>>> = {
  si: {
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
    areaMoment: 'mm4',
    sectionModulus: 'mm3',
    power: 'kW',
    angularSpeed: 'rpm',
    force: 'N',
    torsionConstant: 'mm4',
    torsionalRigidity: 'N*m2',
    torsionalStiffness: 'N*m/rad',
  },
  us: {
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
    areaMoment: 'in4',
    sectionModulus: 'in3',
    power: 'hp',
    angularSpeed: 'rpm',
    force: 'lbf',
    torsionConstant: 'in4',
    torsionalRigidity: 'lbf*in2',
    torsionalStiffness: 'lbf*in/rad',
  },
};

/**
 * Units of results that the model format does not take as input, so they are
 * not in its catalogue: SI value of one unit. 1 lbf = 0.45359237 kg × 9.80665 m/s²
 * and 1 in = 0.0254 m exactly.
 */
const OUTPUT_UNITS: ReadonlyMap<string, number> = new Map([
  ['N', 1],
  ['lbf', LBF],
  ['m4', 1],
  ['mm4', 1e-12],
  ['in4', IN ** 4],
  ['N*m2', 1],
  ['lbf*in2', LBF * IN * IN],
]);

/** SI value of one of the named unit (catalogue or result-only); throws for a unit it does not know. */
export function unitFactor(symbol: string): number {
  const out = OUTPUT_UNITS.get(symbol);
  if (out !== undefined) return out;
  const def = UNITS.get(canonicalUnit(symbol));
  if (!def) throw new Error(`unknown unit ${symbol}`);
  return def.toSI;
}

/** SI unit of each kind, as the solution and the JSON output carry it. */
export function siUnit(kind: FieldKind): string {
  switch (kind) {
    case 'modulus':
      return 'Pa';
    case 'force':
      return 'N';
    case 'torsionConstant':
      return 'm4';
    case 'torsionalRigidity':
      return 'N*m2';
    case 'torsionalStiffness':
      return 'N*m/rad';
    default:
      return SI_UNIT[kind];
  }
}

/** Display unit symbol (ASCII, e.g. "N*m") of a kind in a system. */
export function displayUnit(kind: FieldKind, system: UnitSystem): string {
  return DISPLAY_UNITS[system][kind];
}

/** A unit symbol as a reader sees it: "N*m" → "N·m", "kg/m3" → "kg/m³", "mm4" → "mm⁴". */
export function prettyUnit(symbol: string): string {
  return symbol.replace(/\*/g, '·').replace(/2$/, '²').replace(/3$/, '³').replace(/4$/, '⁴');
}

/** An SI value in the display unit of a kind. */
export function toDisplay(si: number, kind: FieldKind, system: UnitSystem): number {
  return si / unitFactor(displayUnit(kind, system));
}

/** A value in the display unit of a kind, back to SI. */
export function fromDisplay(value: number, kind: FieldKind, system: UnitSystem): number {
  return value * unitFactor(displayUnit(kind, system));
}

// ---------------------------------------------------------------------------
// Numbers

/**
 * A number for reading: `sig` significant figures, no trailing zeros, plain
 * notation from 1e-4 up to 1e7, an exponent outside ("1.5e-6"); "0" for ±0;
 * "NaN", "Infinity" as they are.
 */
export function formatNumber(x: number, sig = 5): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  const abs = Math.abs(x);
  if (abs < 1e-4 || abs >= 1e7) {
    const text = x.toExponential(sig - 1);
    const e = text.indexOf('e');
    return `${String(Number(text.slice(0, e)))}e${Number(text.slice(e + 1))}`;
  }
  return String(Number(x.toPrecision(sig)));
}

/** An SI value as a bare number in the system's unit (for tables whose header names the unit); "—" for none. */
export function formatValue(si: number | null | undefined, kind: FieldKind, system: UnitSystem, sig = 5): string {
  if (si === null || si === undefined || !Number.isFinite(si)) return '—';
  return formatNumber(toDisplay(si, kind, system), sig);
}

/** An SI value in the system's unit, with the unit: "140.2 N·m"; "—" for none. */
export function formatQuantity(si: number | null | undefined, kind: FieldKind, system: UnitSystem, sig = 5): string {
  if (si === null || si === undefined || !Number.isFinite(si)) return '—';
  return `${formatNumber(toDisplay(si, kind, system), sig)} ${prettyUnit(displayUnit(kind, system))}`;
}

// ---------------------------------------------------------------------------
// Words

/** What the results are and are not: every report, printout and results view carries these. */
export const CAUTIONS: readonly string[] = [
  'Linear-elastic Saint-Venant torsion with free warping: no yielding, no buckling. Vibration only with the model\'s dynamics: linear, small vibration; the damping is an estimate you supply; no excitation is assumed unless you give it. Restrained warping of non-circular (above all open) sections is not modelled; tubes and open sections use thin-wall theory.',
  'Stress concentration only where you modelled it (stress raisers: shoulder fillets by a published fit, other features by your factor) and no fatigue: every other stress shown is nominal.',
  'Results must be checked by a qualified engineer against the codes and standards that apply where the machine is built and used.',
];

/**
 * A name made safe for a file name or a URL: ASCII letters and digits in
 * lower case, runs of anything else as one dash, at most `max` characters,
 * "model" when nothing is left. "Mixer drive (rev. B)" → "mixer-drive-rev-b".
 */
export function slug(name: string, max = 60): string {
  const s = name
    .normalize('NFKD')
    .replace(/[^\x20-\x7e]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, max)
    .replace(/-+$/, '');
  return s || 'model';
}

/** A file name from a model name and an extension: "mixer-drive.csv". */
export function fileName(name: string, ext: string): string {
  return `${slug(name)}.${ext}`;
}

/** A reader's word for an item of each list of the model. */
const ITEM_WORDS: Readonly<Record<string, string>> = {
  materials: 'material',
  sections: 'section',
  shafts: 'shaft',
  supports: 'support',
  torques: 'point torque',
  distributedTorques: 'distributed torque',
  gearMeshes: 'gear mesh',
  couplings: 'coupling',
  discs: 'disc',
  segments: 'segment',
  layers: 'layer',
};

/** Words for the two ends of a connection, by the list that holds it. */
const END_WORDS: Readonly<Record<string, string>> = { gearMeshes: 'gear', couplings: 'end' };

function unescapeToken(token: string): string {
  return token.replace(/~1/g, '/').replace(/~0/g, '~');
}

/**
 * A reader's path for a JSON pointer into a model:
 * "/shafts/0/segments/2/length" → `shaft "input", segment 3, length` when the
 * model is at hand (items with an id are named by it, others counted from 1),
 * `shaft 1, segment 3, length` without it; "" → "the model". Never throws.
 */
export function readablePointer(model: unknown, pointer: string): string {
  if (pointer === '') return 'the model';
  if (!pointer.startsWith('/')) return pointer;
  const keys = pointer.slice(1).split('/').map(unescapeToken);
  const parts: string[] = [];
  let cur: unknown = model;
  let list = '';
  const child = (v: unknown, k: string): unknown => (v !== null && typeof v === 'object' ? (v as Record<string, unknown>)[k] : undefined);
  for (let i = 0; i < keys.length; i++) {
    const k = keys[i];
    const next = keys[i + 1];
    const word = ITEM_WORDS[k];
    if (word !== undefined && next !== undefined && /^(0|[1-9]\d*)$/.test(next)) {
      const item = child(child(cur, k), next);
      const id = child(item, 'id');
      parts.push(typeof id === 'string' && id !== '' ? `${word} ${JSON.stringify(id)}` : `${word} ${Number(next) + 1}`);
      cur = item;
      list = k;
      i++;
    } else if ((k === 'a' || k === 'b') && END_WORDS[list] !== undefined && i === keys.length - 2) {
      parts.push(`${END_WORDS[list]} ${k}`);
      cur = child(cur, k);
    } else {
      parts.push(k);
      cur = child(cur, k);
      list = '';
    }
  }
  return parts.join(', ');
}

// ---------------------------------------------------------------------------
// The station table

/**
 * The stations of a solution in columns (any array-like: plain arrays or typed
 * arrays), all SI. Station d of shaft s is one of start[s] … start[s + 1] − 1.
 */
export interface StationColumns {
  /** Shaft ids, in the solution's order. */
  readonly shafts: readonly string[];
  /** First station of each shaft, and the station count at the end (length shafts + 1). */
  readonly start: ArrayLike<number>;
  /** m */
  readonly z: ArrayLike<number>;
  /** rad */
  readonly rotation: ArrayLike<number>;
  /** T(z−), N·m; NaN where there is none (the first station of a shaft). */
  readonly torqueLeft: ArrayLike<number>;
  /** T(z+), N·m; NaN where there is none (the last station of a shaft). */
  readonly torqueRight: ArrayLike<number>;
  /** Largest |τ| over the section's layers at the station, on either side of it, Pa. */
  readonly shear: ArrayLike<number>;
}

/** Significant figures of the numbers in the CSV (enough for any check against the solution's own 1e-8). */
export const CSV_DIGITS = 10;

/** The CSV's header row in a unit system (no line end). */
export function stationCsvHeader(system: UnitSystem): string {
  const u = DISPLAY_UNITS[system];
  return `shaft,z [${u.length}],rotation [${u.angle}],torque left [${u.torque}],torque right [${u.torque}],peak shear all layers [${u.stress}]`;
}

/** The header in SI display units, for documentation and tests. */
export const STATION_CSV_HEADER = stationCsvHeader('si');

function csvField(s: string): string {
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/**
 * A number of the CSV: `CSV_DIGITS` significant figures, no trailing zeros, an
 * exponent only below 1e-6 or from 1e10; empty for NaN (no value there). The
 * text of `String(Number(x.toPrecision(CSV_DIGITS)))`, without its second and
 * third conversion where the fixed notation only needs its zeros trimmed.
 */
export function csvNumber(x: number): string {
  if (x !== x) return '';
  if (x === 0) return '0';
  const s = x.toPrecision(CSV_DIGITS);
  if (s.indexOf('e') >= 0) return String(+s);
  if (s.indexOf('.') < 0) return s;
  let k = s.length;
  while (s.charCodeAt(k - 1) === 48) k--; // '0'
  if (s.charCodeAt(k - 1) === 46) k--; // '.'
  return k === s.length ? s : s.slice(0, k);
}

/**
 * Writes the station table as CSV to `sink`, in pieces of about `pieceChars`
 * characters (0: row by row; the last piece ends with a line end): one header
 * row, then one row per station, shaft by shaft, z ascending. Numbers in the
 * system's display units (`stationCsvHeader`); the shear column is the largest
 * |τ| over all the layers of the section, on whichever side of the station it
 * is larger.
 */
export function writeStationCsv(cols: StationColumns, system: UnitSystem, sink: (text: string) => void, pieceChars = 1 << 20): void {
  const u = DISPLAY_UNITS[system];
  const zf = unitFactor(u.length);
  const af = unitFactor(u.angle);
  const tf = unitFactor(u.torque);
  const sf = unitFactor(u.stress);
  const { start, z, rotation, torqueLeft, torqueRight, shear } = cols;
  let out = stationCsvHeader(system) + '\n';
  for (let s = 0; s < cols.shafts.length; s++) {
    const id = csvField(cols.shafts[s]) + ',';
    const end = start[s + 1];
    for (let d = start[s]; d < end; d++) {
      const tl = torqueLeft[d];
      const tr = torqueRight[d];
      const left = csvNumber(tl / tf);
      const right = tr === tl ? left : csvNumber(tr / tf); // equal but at a point load: written once
      out += id + csvNumber(z[d] / zf) + ',' + csvNumber(rotation[d] / af) + ',' + left + ',' + right + ',' + csvNumber(shear[d] / sf) + '\n';
      if (out.length >= pieceChars) {
        sink(out);
        out = '';
      }
    }
  }
  if (out.length > 0) sink(out);
}

/** The station table of a solution as one CSV text (see `writeStationCsv`). */
export function stationCsv(solution: Solution, system: UnitSystem): string {
  let text = '';
  writeStationCsv(stationColumns(solution), system, (piece) => (text += piece), Infinity);
  return text;
}

/**
 * The shear column of stations `from` … `to − 1` (z sorted) from their shaft's diagram
 * points `dFrom` … `dTo − 1` (z sorted, a point at every station, two where T or τ jumps):
 * the largest |τ| among the points at each station's z, written into `shear`. One rule for
 * the solution object and the engine's columns, so both CSVs agree to the digit.
 */
export function stationShear(
  z: ArrayLike<number>,
  from: number,
  to: number,
  dz: ArrayLike<number>,
  dtau: ArrayLike<number>,
  dFrom: number,
  dTo: number,
  shear: Float64Array,
): void {
  let p = dFrom;
  for (let d = from; d < to; d++) {
    while (p < dTo && dz[p] < z[d]) p++;
    let peak = 0;
    for (let q = p; q < dTo && dz[q] === z[d]; q++) peak = Math.max(peak, Math.abs(dtau[q]));
    shear[d] = peak;
  }
}

/**
 * The station columns of a solution object. The shear at a station is read from
 * the shaft's diagram, which has a point at every station (two where T or τ
 * jumps): the largest |τ| among the points at the station's z, so it is the
 * engine's own value on both sides, along tapers too.
 */
export function stationColumns(solution: Solution): StationColumns {
  let n = 0;
  for (const sh of solution.shafts) n += sh.stations.length;
  const start = new Int32Array(solution.shafts.length + 1);
  const z = new Float64Array(n);
  const rotation = new Float64Array(n);
  const torqueLeft = new Float64Array(n);
  const torqueRight = new Float64Array(n);
  const shear = new Float64Array(n);
  let d = 0;
  solution.shafts.forEach((sh, s) => {
    start[s] = d;
    for (const st of sh.stations) {
      z[d] = st.z;
      rotation[d] = st.rotation;
      torqueLeft[d] = st.torqueLeft ?? Number.NaN;
      torqueRight[d] = st.torqueRight ?? Number.NaN;
      d++;
    }
    stationShear(z, start[s], d, sh.diagram.z, sh.diagram.shear, 0, sh.diagram.z.length, shear);
  });
  start[solution.shafts.length] = d;
  return { shafts: solution.shafts.map((sh) => sh.id), start, z, rotation, torqueLeft, torqueRight, shear };
}
