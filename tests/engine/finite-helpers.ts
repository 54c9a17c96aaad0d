/**
 * Shared by the finite-answer tests (tests/engine/finite.test.ts,
 * tests/http/robustness.test.ts) and the fuzz run (tests/bench/fuzz.ts):
 * models with extreme quantities, seeded, and walks of a solution that find
 * a number that is not finite, or a null where the contract wants a number.
 */
import { readFileSync } from 'node:fs';
import type { Model } from '../../shared-types/model.js';
import { QUANTITY_RANGE, UNITS, unitsOfKind, type QuantityKind } from '../../shared-types/quantity.js';
import { forEachQuantity, randomModel, Rng } from './random-models.js';

/** The shipped demo models (invented), parsed. */
export const DEMOS: readonly Model[] = ['mixer-drive', 'gear-train-branches', 'stepped-two-material', 'tapered-bar-shoulder', 'geared-drive-vibration'].map(
  (id) => JSON.parse(readFileSync(new URL(`../../server/demos/${id}.json`, import.meta.url), 'utf8')) as Model,
);

/** Paths of every number in `value` that is NaN or ±Infinity. */
export function nonFiniteNumbers(value: unknown, path = ''): string[] {
  const out: string[] = [];
  const walk = (v: unknown, p: string) => {
    if (typeof v === 'number') {
      if (!Number.isFinite(v)) out.push(`${p} = ${v}`);
    } else if (Array.isArray(v)) v.forEach((x, i) => walk(x, `${p}/${i}`));
    else if (v !== null && typeof v === 'object') for (const [k, x] of Object.entries(v)) walk(x, `${p}/${k}`);
  };
  walk(value, path);
  return out;
}

/**
 * Paths of every null in a parsed solution (shaftnet-solution/1) where the
 * contract wants a number. Null belongs only in: the torque beyond a shaft's
 * ends (torqueLeft of its first station, torqueRight of its last), and a
 * layer's allowableShear and shearYield when its material gives none, with
 * utilisation then null too; the overload's documented nulls; a rigid-body mode's strain shares;
 * a forced-response check's static shear where the statics were omitted. JSON writes NaN and ±Infinity as null, so any
 * other null is a non-finite number that escaped.
 */
export function misplacedNulls(solution: unknown): string[] {
  const out: string[] = [];
  const walk = (v: unknown, p: string[]) => {
    if (v === null) {
      if (!nullAllowed(solution, p)) out.push('/' + p.join('/'));
    } else if (Array.isArray(v)) v.forEach((x, i) => walk(x, [...p, String(i)]));
    else if (typeof v === 'object') for (const [k, x] of Object.entries(v as Record<string, unknown>)) walk(x, [...p, k]);
  };
  walk(solution, []);
  return out;
}

function nullAllowed(root: unknown, p: string[]): boolean {
  const at = (path: string[]) => path.reduce<unknown>((v, k) => (v as Record<string, unknown>)[k], root);
  const key = p[p.length - 1];
  // shafts/s/stations/k/torqueLeft|torqueRight
  if (p.length === 5 && p[0] === 'shafts' && p[2] === 'stations') {
    const count = (at(p.slice(0, 3)) as unknown[]).length;
    if (key === 'torqueLeft') return p[3] === '0';
    if (key === 'torqueRight') return p[3] === String(count - 1);
    return false;
  }
  // shafts/s/segments/g/layers/j/allowableShear|shearYield|utilisation
  if (p.length === 7 && p[0] === 'shafts' && p[2] === 'segments' && p[4] === 'layers') {
    if (key === 'allowableShear' || key === 'shearYield') return true;
    if (key === 'utilisation') return (at(p.slice(0, 6)) as { allowableShear: unknown }).allowableShear === null;
  }
  // overload (README, "Overload"): z of a whole segment yielding at once; a collapse factor only
  // with collapse "mechanism"; first yield only together with no collapse, or factors omitted.
  if (p[0] === 'overload') {
    const o = at(['overload']) as { firstYieldFactor: unknown; firstYield: unknown; collapseFactor: unknown; collapse: string };
    const warned = (at(['warnings']) as Array<{ code: string }>).some((w) => w.code === 'SN_NO_YIELD' || w.code === 'SN_OVERLOAD_NUMERICS');
    if (p.length === 3 && p[1] === 'firstYield' && key === 'z') return true;
    if (p.length === 2 && key === 'collapseFactor') return o.collapse === 'none';
    if (p.length === 2 && (key === 'firstYieldFactor' || key === 'firstYield')) {
      return o.firstYieldFactor === null && o.firstYield === null && (o.collapseFactor === null || warned);
    }
  }
  // modes/k/energy/strain: a rigid-body mode has no strain shares (contract, binding reading).
  if (p.length === 4 && p[0] === 'modes' && p[2] === 'energy' && key === 'strain') return (at(p.slice(0, 2)) as { rigidBody: boolean }).rigidBody === true;
  // forcedResponse/checks/k/static: no static shear where the statics were omitted (a model free to spin).
  if (p.length === 4 && p[0] === 'forcedResponse' && p[1] === 'checks' && key === 'static') {
    return (at(['warnings']) as Array<{ code: string }>).some((w) => w.code === 'SN_STATICS_OMITTED');
  }
  return false;
}

/** Doubles at the edges of the format: the largest, the smallest normal and subnormal, their negatives. */
const SPECIAL = [Number.MAX_VALUE, -Number.MAX_VALUE, Number.MIN_VALUE, -Number.MIN_VALUE, 2.2250738585072014e-308, 1e308, -1e308, 1e-300, 1e300, -0];

/**
 * An extreme value for a quantity of `kind` (the field now holds `current`):
 * mostly inside the kind's physical range but at its ends, some exactly at a
 * bound, some just or far outside, some special doubles; a quarter written
 * as "<number> <unit>" in a random unit of the kind.
 */
export function extremeValue(rng: Rng, kind: QuantityKind, current: unknown): number | string {
  const { min, max } = QUANTITY_RANGE[kind];
  const sign = typeof current === 'number' && current < 0 ? -1 : typeof current === 'string' && current.trim().startsWith('-') ? -1 : 1;
  const flip = rng.chance(0.1) ? -sign : sign;
  const lmin = Math.log10(min);
  const lmax = Math.log10(max);
  let si: number;
  const r = rng.float();
  if (r < 0.4) {
    // inside, within two decades of an end
    si = flip * 10 ** (rng.chance(0.5) ? rng.range(lmin, lmin + 2) : rng.range(lmax - 2, lmax));
  } else if (r < 0.55) si = flip * (rng.chance(0.5) ? min : max);
  else if (r < 0.7) si = flip * (rng.chance(0.5) ? min * (1 - 1e-3) : max * (1 + 1e-3));
  else if (r < 0.8) si = flip * 10 ** rng.range(-330, 330);
  else if (r < 0.9) si = rng.pick(SPECIAL);
  else si = flip * 10 ** rng.range(lmin, lmax);
  if (!rng.chance(0.25) || !Number.isFinite(si)) return si;
  const symbol = rng.pick(unitsOfKind(kind));
  return `${String(si / (UNITS.get(symbol)?.toSI ?? 1))} ${symbol}`;
}

/** A copy of `model` with `count` of its quantity fields (picked at random) made extreme. */
export function withExtremes(model: Model, rng: Rng, count: number): Model {
  const copy = structuredClone(model);
  const slots: Array<[Record<string, unknown>, string, QuantityKind]> = [];
  forEachQuantity(copy, (holder, key, kind) => slots.push([holder, key, kind]));
  for (let n = 0; n < count && slots.length > 0; n++) {
    const [holder, key, kind] = rng.pick(slots);
    holder[key] = extremeValue(rng, kind, holder[key]);
  }
  return copy;
}

/**
 * The model of fuzz case `seed`: a demo or a random valid system (random-models.ts), left
 * valid one time in five, otherwise with one to three quantities made extreme.
 */
export function extremeCase(seed: number): Model {
  const rng = new Rng(seed);
  let base: Model | undefined;
  if (rng.chance(0.6)) {
    try {
      base = randomModel(seed ^ 0x5eed, { shafts: [1, 4], maxSegments: 4 });
    } catch {
      base = undefined; // the generator finds no room for a station on a few seeds: a demo instead
    }
  }
  base ??= rng.pick(DEMOS);
  return rng.chance(0.2) ? structuredClone(base) : withExtremes(base, rng, rng.int(1, 3));
}
