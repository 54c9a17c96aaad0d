/**
 * What the results say about stress raisers and checks, free of the DOM: the
 * solution's `stressRaisers` (issue 10; read with care, older solutions lack
 * them), the label of a check row ("Local peak at F1"), and the local peaks to
 * mark on a shaft's shear diagram.
 */
import type { CheckResult, Solution } from '../../shared-types/solution.js';
import type { PlotPeak } from './sn-plot.js';
import { valueAt } from './diagram-readout.js';

/** A check as issue 10 widens it: kind `localPeak` names the stress raiser (until the shared type has it). */
export type AnyCheck = Omit<CheckResult, 'kind'> & { kind: CheckResult['kind'] | 'localPeak'; raiser?: string };

/** A stress raiser's result (solution `stressRaisers`, issue 10), SI. */
export interface RaiserResult {
  id: string;
  shaft: string;
  z: number;
  kind: 'shoulder' | 'factor';
  factor: number;
  nominalShear: number;
  localPeak: number;
  material: string;
  allowableShear: number | null;
  utilisation: number | null;
  note?: string;
}

/** How a check names itself in the table, from its kind's label: "Local peak at F1" for a stress raiser's. */
export function checkLabel(c: { kind: string; raiser?: string }, label: string): string {
  return c.kind === 'localPeak' && c.raiser ? `${label} at ${c.raiser}` : label;
}

/** The stress raisers' results of a solution (none before issue 10's engine or without raisers). */
export function raisersOf(s: Solution | null): RaiserResult[] {
  return ((s as { stressRaisers?: RaiserResult[] } | null)?.stressRaisers ?? []) as RaiserResult[];
}

/** The local peaks on one shaft, for its shear diagram. */
export function shaftPeaks(s: Solution | null, shaft: string): PlotPeak[] {
  const d = s?.shafts.find((sh) => sh.id === shaft)?.diagram;
  return raisersOf(s)
    .filter((r) => r.shaft === shaft)
    .map((r) => {
      // On the side of the signed nominal curve at z (localPeak is a magnitude).
      const nominal = d ? valueAt(d.z, d.shear, r.z) : null;
      return { z: r.z, value: (nominal !== null && nominal < 0 ? -1 : 1) * Math.abs(r.localPeak), label: `local peak ${r.id}` };
    });
}

