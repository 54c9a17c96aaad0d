/**
 * Torsional dynamics in the client, free of the DOM: the solution's additions
 * (model format: "Dynamics", "Readings that are binding", "Solution additions")
 * typed here until the shared solution type has them, rates (Hz, kHz, rpm,
 * rad/s) converted and read, and the readings the dynamics results draw: the
 * frequency table with its energy leaders, the crossings of modes with orders,
 * the speed–frequency interference diagram's geometry, mode shapes along each
 * shaft, and the peaks of a forced response.
 *
 * Units: a frequency in the solution is in Hz; a speed (crossings, the forced
 * response's speeds) in rad/s, SI, as the contract says.
 */
import type { Solution } from '../../shared-types/solution.js';

// ---------------------------------------------------------------------------
// Rates

/** The units a rate (a speed or a frequency) may be typed in. */
export type RateUnit = 'rpm' | 'Hz' | 'kHz' | 'rad/s';

/** The units offered for a speed, in the order a chooser lists them (rpm first: the usual unit of a shaft's speed). */
export const SPEED_UNITS: readonly RateUnit[] = ['rpm', 'Hz', 'rad/s'];
/** The units offered for a frequency. */
export const FREQUENCY_UNITS: readonly RateUnit[] = ['Hz', 'kHz', 'rpm', 'rad/s'];

/**
 * rad/s in one of each unit: one cycle is 2π rad, so 1 Hz = 2π rad/s, and 1 rpm
 * is one cycle a minute = 2π/60 rad/s (definitions, no source needed).
 */
const RAD_PER_S: Readonly<Record<RateUnit, number>> = {
  'rad/s': 1,
  Hz: 2 * Math.PI,
  kHz: 2000 * Math.PI,
  rpm: (2 * Math.PI) / 60,
};

/** Spellings read as each unit. */
const RATE_SPELLINGS: ReadonlyMap<string, RateUnit> = new Map([
  ['rpm', 'rpm'],
  ['r/min', 'rpm'],
  ['rev/min', 'rpm'],
  ['hz', 'Hz'],
  ['khz', 'kHz'],
  ['rad/s', 'rad/s'],
  ['rad/sec', 'rad/s'],
]);

/** A value in a rate unit as rad/s. */
export function toRadPerS(value: number, unit: RateUnit): number {
  return value * RAD_PER_S[unit];
}

/** rad/s in a rate unit. */
export function fromRadPerS(radPerS: number, unit: RateUnit): number {
  return radPerS / RAD_PER_S[unit];
}

/** Hz → rpm (one cycle a second is sixty a minute). */
export function hzToRpm(hz: number): number {
  return hz * 60;
}

/** The rate unit a text names, or null. */
export function rateUnitOf(text: string): RateUnit | null {
  return RATE_SPELLINGS.get(text.trim().replace(/\s+/g, '').toLowerCase()) ?? null;
}

const NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
const NUMBER_AND_UNIT = /^([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*)$/;

/** A stored rate read: its value in rad/s and the unit it was given in (a plain number is rad/s, SI). */
export interface StoredRate { radPerS: number; unit: RateUnit; value: number }

/** Reads a stored rate ("600 rpm", "12.5 Hz", or a number in rad/s); null when it cannot be read. */
export function readRate(stored: unknown): StoredRate | null {
  if (typeof stored === 'number') return Number.isFinite(stored) ? { radPerS: stored, unit: 'rad/s', value: stored } : null;
  if (typeof stored !== 'string') return null;
  const m = NUMBER_AND_UNIT.exec(stored.trim().replace(/\u2212/g, '-'));
  if (!m) return null;
  const value = Number(m[1]);
  if (!Number.isFinite(value)) return null;
  const unit = m[2] === '' ? 'rad/s' : rateUnitOf(m[2]);
  if (!unit) return null;
  return { radPerS: toRadPerS(value, unit), unit, value };
}

/** What a rate input's text becomes in the model, or why it cannot. */
export interface ParsedRate { value: string | undefined; problem?: string }

/**
 * A rate as typed: a plain number is in `unit` ("600" → "600 rpm"); a number
 * with a rate unit is kept as typed ("10 Hz"); empty text removes the field.
 */
export function parseRateInput(text: string, unit: RateUnit): ParsedRate {
  const t = text.trim().replace(/\u2212/g, '-');
  if (t === '') return { value: undefined };
  if (NUMBER.test(t)) return { value: `${t} ${unit}` };
  if (readRate(t) === null) return { value: t, problem: `"${t}" is not a rate: write e.g. "600 rpm", "10 Hz" or "62.8 rad/s"` };
  return { value: t };
}

/** A stored rate shown in a unit: "1800" for "30 Hz" in rpm; the raw text when it cannot be read. */
export function rateText(stored: unknown, unit: RateUnit): string {
  if (stored === undefined || stored === null) return '';
  const r = readRate(stored);
  if (!r) return String(stored);
  return String(Number(fromRadPerS(r.radPerS, unit).toPrecision(6)));
}

/** A stored rate rewritten in another unit ("30 Hz" → "1800 rpm"); as it is when it cannot be read. */
export function convertRate(stored: unknown, unit: RateUnit): unknown {
  const r = readRate(stored);
  if (!r) return stored;
  return `${Number(fromRadPerS(r.radPerS, unit).toPrecision(10))} ${unit}`;
}

// ---------------------------------------------------------------------------
// The solution's additions

/** One share of a mode's energy: an item ("input[0]" a segment, or a disc, spring, mesh or coupling id). */
export interface EnergyShare { item: string; share: number }

/** One natural mode: its frequency (Hz; 0 for a rigid-body mode), its shape and energy shares. */
export interface ModeResult {
  frequency: number;
  /** Rotation at each shaft's stations, in order, scaled so the largest |φ| is +1. */
  shafts: Array<{ id: string; rotation: number[]; z?: number[] }>;
  /** Strain shares are null for a rigid-body mode. */
  energy: { strain: EnergyShare[] | null; kinetic: EnergyShare[] };
}

/** A crossing of mode `mode` (1-based) with `order` at reference speed `speed` (rad/s). */
export interface CrossingResult { mode: number; order: number; speed: number; inRange: boolean }

/** One segment's vibratory response over the speeds (torque N·m, shear Pa amplitudes). */
export interface ForcedSegment {
  item: string;
  torque: number[];
  shear: number[];
  peakTorque: number;
  /** Reference speed of the peak, rad/s. */
  peakSpeed: number;
  peakShear?: number;
}

/** The forced response: the sum Σ|T_e| per segment, and (where given) each excitation's own. */
export interface ForcedResponse {
  /** Reference-shaft speeds, rad/s. */
  speeds: number[];
  segments: ForcedSegment[];
  excitations?: Array<{ id: string; segments: ForcedSegment[] }>;
  /** Per layer with an allowable, worst first: peak vibratory + peak static shear against it (Pa; speed rad/s). */
  checks?: ForcedCheck[];
}

/** One check of the forced response (shared-types/forced-response.ts ForcedCheck). */
export interface ForcedCheck {
  shaft: string;
  segment: number;
  material: string;
  vibratory: number;
  speed: number;
  /** null when the statics were not solved (a model free to spin). */
  static: number | null;
  value: number;
  limit: number;
  utilisation: number;
  pass: boolean;
}

/** A solution with the dynamics additions (each absent when the model has no `dynamics`). */
export type DynamicsSolution = Solution & {
  modes?: ModeResult[];
  crossings?: CrossingResult[];
  forcedResponse?: ForcedResponse;
};

// ---------------------------------------------------------------------------
// Frequencies and energy

/** The largest shares first, at most `count`; none for null (a rigid-body mode's strain). */
export function energyLeaders(shares: readonly EnergyShare[] | null, count = 3): EnergyShare[] {
  if (!shares) return [];
  return [...shares].sort((a, b) => b.share - a.share).slice(0, count);
}

/** A row of the frequency table. */
export interface FrequencyRow {
  /** 1-based, as crossings name modes. */
  mode: number;
  hz: number;
  rpm: number;
  rigid: boolean;
  /** Where the strain energy is: where stiffening moves this frequency most. */
  stiffen: EnergyShare[];
  /** Where the kinetic energy is: where added inertia moves it most. */
  inertia: EnergyShare[];
}

/** The frequency table: each mode in Hz and rpm with its leading strain and kinetic shares. */
export function frequencyRows(modes: readonly ModeResult[], leaders = 3): FrequencyRow[] {
  return modes.map((m, i) => ({
    mode: i + 1,
    hz: m.frequency,
    rpm: hzToRpm(m.frequency),
    rigid: m.frequency === 0,
    stiffen: energyLeaders(m.energy.strain, leaders),
    inertia: energyLeaders(m.energy.kinetic, leaders),
  }));
}

/** "input[0] 71 %, k1 20 %" */
export function sharesText(shares: readonly EnergyShare[]): string {
  return shares.map((s) => `${s.item} ${Number((s.share * 100).toPrecision(2))} %`).join(', ');
}

// ---------------------------------------------------------------------------
// Crossings

/** The operating range widened by the margin (rad/s): a crossing inside it fails (binding reading). */
export function rangeWithMargin(min: number, max: number, margin: number): { lo: number; hi: number } {
  return { lo: min * (1 - margin), hi: max * (1 + margin) };
}

/**
 * Every crossing of a non-zero frequency with an order: the reference speed at
 * which order × speed = frequency, s = 2π f / order (rad/s), and whether it lies
 * in `min·(1 − margin) ≤ s ≤ max·(1 + margin)` (the contract's binding reading).
 * The engine reports these as `crossings`; the client computes them only to draw
 * a diagram of a solution that has modes but no crossings.
 */
export function computeCrossings(
  frequencies: readonly number[],
  orders: readonly number[],
  range: { min: number; max: number; margin: number } | null,
): CrossingResult[] {
  const out: CrossingResult[] = [];
  frequencies.forEach((f, i) => {
    if (!(f > 0)) return;
    for (const order of orders) {
      if (!(order > 0)) continue;
      const speed = (2 * Math.PI * f) / order;
      const band = range ? rangeWithMargin(range.min, range.max, range.margin) : null;
      out.push({ mode: i + 1, order, speed, inRange: band !== null && band.lo <= speed && speed <= band.hi });
    }
  });
  return out;
}

/** A crossing as the table lists it: with its mode's frequency, the speed in rpm. */
export interface CrossingRow extends CrossingResult { hz: number; rpm: number }

/** The crossings in order of speed, failing ones marked by `inRange`, each with its frequency and speed in rpm. */
export function crossingRows(crossings: readonly CrossingResult[], modes: readonly ModeResult[]): CrossingRow[] {
  return crossings
    .map((c) => ({ ...c, hz: modes[c.mode - 1]?.frequency ?? (c.order * c.speed) / (2 * Math.PI), rpm: fromRadPerS(c.speed, 'rpm') }))
    .sort((a, b) => a.speed - b.speed || a.mode - b.mode || a.order - b.order);
}

// ---------------------------------------------------------------------------
// The interference diagram (its scales and ticks: chart-scale.ts)

/** What the speed–frequency diagram draws, in rpm (x) and Hz (y). */
export interface InterferenceDiagram {
  xMax: number;
  yMax: number;
  /** The operating range, rpm. */
  range: { lo: number; hi: number };
  /** The range widened by the margin, rpm. */
  band: { lo: number; hi: number };
  /** One line per order from the origin: f = order × speed/60, to the diagram's edge. */
  orders: Array<{ order: number; x1: number; y1: number }>;
  /** The natural frequencies that fit (1-based mode numbers); those above `yMax` are counted. */
  frequencies: Array<{ mode: number; hz: number }>;
  above: number;
  crossings: Array<CrossingRow & { x: number; y: number }>;
}

/**
 * The diagram's geometry: x from 0 to 1.25 × the widened range's top, y from
 * 0 to 1.1 × the highest order line at the right edge (or the lowest non-zero
 * frequency, when that is higher, so at least one frequency shows). Rigid-body
 * modes (0 Hz) are not drawn.
 */
export function interferenceDiagram(
  speed: { min: number; max: number },
  margin: number,
  orders: readonly number[],
  modes: readonly ModeResult[],
  crossings: readonly CrossingResult[],
): InterferenceDiagram {
  const rpm = (w: number) => fromRadPerS(w, 'rpm');
  const widened = rangeWithMargin(speed.min, speed.max, margin);
  const xMax = 1.25 * rpm(widened.hi);
  const maxOrder = Math.max(0, ...orders.filter((o) => o > 0));
  const lowest = modes.map((m) => m.frequency).filter((f) => f > 0);
  const yMax = 1.1 * Math.max((maxOrder * xMax) / 60, lowest.length ? Math.min(...lowest) : 0, 1e-9);
  const orderLines = orders
    .filter((o) => o > 0)
    .map((order) => {
      const yEdge = (order * xMax) / 60;
      return yEdge <= yMax ? { order, x1: xMax, y1: yEdge } : { order, x1: (yMax * 60) / order, y1: yMax };
    });
  const frequencies = modes.map((m, i) => ({ mode: i + 1, hz: m.frequency })).filter((f) => f.hz > 0 && f.hz <= yMax);
  const above = modes.filter((m) => m.frequency > yMax).length;
  const rows = crossingRows(crossings, modes)
    .filter((c) => c.rpm <= xMax && c.hz <= yMax)
    .map((c) => ({ ...c, x: c.rpm, y: c.hz }));
  return {
    xMax,
    yMax,
    range: { lo: rpm(speed.min), hi: rpm(speed.max) },
    band: { lo: rpm(widened.lo), hi: rpm(widened.hi) },
    orders: orderLines,
    frequencies,
    above,
    crossings: rows,
  };
}

// ---------------------------------------------------------------------------
// Mode shapes

/** A mode's shape along one shaft: z (m) and φ (largest |φ| of the mode = 1). */
export interface ShapeLine { shaft: string; z: number[]; phi: number[] }

/**
 * A mode's shape along each shaft of the solution: the rotations at the
 * shaft's stations (the contract's order). When the engine gives its own z
 * (samples inside elements), those; a shaft whose count matches neither is left out.
 */
export function modeShape(mode: ModeResult, solution: Solution): ShapeLine[] {
  const out: ShapeLine[] = [];
  for (const sh of mode.shafts) {
    const phi = sh.rotation;
    let z: number[] | undefined = sh.z && sh.z.length === phi.length ? sh.z : undefined;
    if (!z) {
      const st = solution.shafts.find((s) => s.id === sh.id)?.stations;
      if (st && st.length === phi.length) z = st.map((s) => s.z);
    }
    if (z) out.push({ shaft: sh.id, z, phi });
  }
  return out;
}

// ---------------------------------------------------------------------------
// Forced response

/** The indices of the local maxima of a sampled curve (an end counts when it is above its one neighbour). */
export function localPeaks(values: readonly number[]): number[] {
  const out: number[] = [];
  const n = values.length;
  for (let i = 0; i < n; i++) {
    const left = i === 0 ? -Infinity : values[i - 1];
    const right = i === n - 1 ? -Infinity : values[i + 1];
    if (values[i] > left && values[i] >= right) out.push(i);
  }
  return out;
}

/** The segments of a forced response in the order of their peak torque, largest first. */
export function worstSegments(fr: ForcedResponse): ForcedSegment[] {
  return [...fr.segments].sort((a, b) => b.peakTorque - a.peakTorque);
}
