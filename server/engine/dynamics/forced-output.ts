/**
 * Writing the forced response (forced.ts's columns) through output.ts's writer: one walk,
 * every field named once in the order of shared-types/forced-response.ts, for both of
 * output.ts's writers (the object and the JSON text), typed by its ValueWriter. output.ts keeps its record factory and
 * writer private; it hands them in: `forcedRecords(rec)` once at module level, then
 * `walkForcedResponse(fr, model, w, records)` at the `forcedResponse` field of the walk.
 */
import type { ForcedCheck, ForcedExcitation, ForcedResponse, ForcedSegment } from '../../../shared-types/forced-response.js';
import type { ResolvedModel } from '../normalise.js';
import type { ForcedSolved } from './forced.js';
import type { ValueWriter } from '../output.js';


// The key order of each object, typed against the schema (every field listed, none invented).
type Keys<T> = ReadonlyArray<keyof T & string>;
const RESPONSE_KEYS = ['speeds', 'segments', 'excitations', 'damping', 'checks', 'solves'] as const satisfies Keys<ForcedResponse>;
const SEGMENT_KEYS = ['item', 'torque', 'shear', 'peakTorque', 'peakSpeed', 'peakShear', 'peakShearSpeed'] as const satisfies Keys<ForcedSegment>;
const EXCITATION_KEYS = ['id', 'order', 'amplitude', 'segments'] as const satisfies Keys<ForcedExcitation>;
const CHECK_KEYS = ['kind', 'shaft', 'segment', 'layer', 'material', 'vibratory', 'speed', 'static', 'value', 'limit', 'utilisation', 'pass'] as const satisfies Keys<ForcedCheck>;
// A field of the schema missing from its list fails to compile here.
type Missing<T, K extends readonly string[]> = Exclude<keyof T, K[number]>;
const complete: [Missing<ForcedResponse, typeof RESPONSE_KEYS>, Missing<ForcedSegment, typeof SEGMENT_KEYS>, Missing<ForcedExcitation, typeof EXCITATION_KEYS>, Missing<ForcedCheck, typeof CHECK_KEYS>] extends [never, never, never, never] ? true : never = true;
void complete;

/** The records of the forced response, made by output.ts's record factory. */
export interface ForcedRecords<R> {
  readonly response: R;
  readonly segment: R;
  readonly excitation: R;
  readonly check: R;
}

/** The records, from a factory of records by key list (output.ts's `rec`). */
export function forcedRecords<R>(rec: (...keys: string[]) => R): ForcedRecords<R> {
  return { response: rec(...RESPONSE_KEYS), segment: rec(...SEGMENT_KEYS), excitation: rec(...EXCITATION_KEYS), check: rec(...CHECK_KEYS) };
}

/** The checks in the order written: worst utilisation first, then model order. */
export function forcedCheckOrder(fr: ForcedSolved): Int32Array {
  const c = fr.checks;
  const order = Int32Array.from({ length: c.count }, (_, k) => k);
  return order.sort((a, b) => c.value[b] / c.limit[b] - c.value[a] / c.limit[a] || a - b);
}

/** Writes `forcedResponse` (an object) as the next value of the walk. */
export function walkForcedResponse<R>(fr: ForcedSolved, model: ResolvedModel, w: ValueWriter<R>, records: ForcedRecords<R>): void {
  const nS = fr.speeds.length;
  const nSeg = fr.segments;
  const E = fr.excitations.length;
  const segments = (c: number) => {
    w.list();
    model.shafts.forEach((shaft, s) => {
      shaft.segments.forEach((_sg, k) => {
        const g = fr.segBase[s] + k;
        const q = c * nSeg + g;
        w.open(records.segment);
        w.str(`${shaft.id}[${k}]`);
        w.series(fr.torque, q * nS, (q + 1) * nS);
        w.series(fr.shear, q * nS, (q + 1) * nS);
        w.num(fr.peakTorque[q]);
        w.num(fr.peakSpeed[q]);
        w.num(fr.peakShear[q]);
        w.num(fr.peakShearSpeed[q]);
        w.close();
      });
    });
    w.close();
  };
  w.open(records.response);
  w.series(fr.speeds, 0, nS);
  segments(E);
  w.list();
  fr.excitations.forEach((e, c) => {
    w.open(records.excitation);
    w.str(e.id);
    w.num(e.order);
    w.num(e.amplitude);
    segments(c);
    w.close();
  });
  w.close();
  w.num(fr.damping);
  w.list();
  const ch = fr.checks;
  for (const k of forcedCheckOrder(fr)) {
    const shaft = model.shafts[ch.shaft[k]];
    w.open(records.check);
    w.str('vibratoryShear');
    w.str(shaft.id);
    w.num(ch.segment[k]);
    w.num(ch.layer[k]);
    w.str(shaft.segments[ch.segment[k]].layers[ch.layer[k]].materialId);
    w.num(ch.vibratory[k]);
    w.num(ch.speed[k]);
    w.optNum(Number.isNaN(ch.static[k]) ? null : ch.static[k]);
    w.num(ch.value[k]);
    w.num(ch.limit[k]);
    w.num(ch.value[k] / ch.limit[k]);
    w.bool(ch.value[k] <= ch.limit[k]);
    w.close();
  }
  w.close();
  w.num(fr.solves);
  w.close();
}
