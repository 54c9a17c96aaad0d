/**
 * The solution's additions for load cases and combinations, and for overload
 * (model format: "Load cases and combinations", "Overload", "Solution
 * additions"), typed here until the shared solution type has them, and the
 * pure readings the results panel draws from them: the combinations to pick
 * from, the envelope band of a shaft, the governing combination of a check,
 * the extreme reactions and the overload sentence.
 */
import type { Solution } from '../../shared-types/solution.js';
import type { AnyCheck } from './raiser-results.js';
import { type EditModel, combinationsOf, loadCasesOf } from './model-edits.js';
import { type UnitSystem, formatNumber, formatQuantity } from './units.js';

export interface OverloadResult {
  firstYieldFactor: number | null;
  firstYield: { shaft: string; z: number | null; layer: string } | null;
  collapseFactor: number | null;
  plasticAt: Array<{ shaft: string; z: number }>;
  collapse?: 'mechanism' | 'none' | 'omitted';
}

export interface EnvelopeLayer { material: string; maxShear: number; utilisation: number | null; combination: string }
export interface EnvelopeSegment { index: number; maxAbsTorque: number; combination: string; layers: EnvelopeLayer[] }
export interface EnvelopeStations {
  z: number[];
  torqueLeftMin: Array<number | null>;
  torqueLeftMax: Array<number | null>;
  torqueRightMin: Array<number | null>;
  torqueRightMax: Array<number | null>;
  rotationMin: number[];
  rotationMax: number[];
}
export interface EnvelopeShaft { id: string; stations: EnvelopeStations; segments: EnvelopeSegment[] }
export interface Envelope {
  reactions: Array<{ support: string; min: number; max: number; minCombination: string; maxCombination: string }>;
  shafts: EnvelopeShaft[];
}

export interface CombinationResult {
  id: string;
  name?: string;
  reactions: Array<{ support: string; torque: number }>;
  checks: AnyCheck[];
  equilibrium: { maxResidual: number };
  overload?: OverloadResult;
}

/** A solution with the additions of load cases and overload (each absent when it does not apply). */
export type CasesSolution = Solution & {
  combination?: string;
  combinations?: CombinationResult[];
  envelope?: Envelope;
  overload?: OverloadResult;
};

/** The combinations a model will be solved for: its own, else one per load case; none without cases. */
export function modelCombinations(model: EditModel | null): Array<{ id: string; name?: string }> {
  if (!model) return [];
  const cases = loadCasesOf(model);
  if (cases.length === 0) return [];
  const combos = combinationsOf(model);
  return (combos.length ? combos : cases).map((c) => ({ id: c.id, name: c.name }));
}

/** "Peak (peak)" or the id alone. */
export function combinationLabel(c: { id: string; name?: string }): string {
  return c.name ? `${c.name} (${c.id})` : c.id;
}

/** The name of a combination of the solution (its id when it has none). */
export function combinationName(s: CasesSolution, id: string): string {
  return s.combinations?.find((c) => c.id === id)?.name ?? id;
}

/** A band: lower and upper values over z (a jump is two points at one z). */
export interface Band { z: number[]; lo: number[]; hi: number[] }

/**
 * The envelope band of T along a shaft: at each station its min/max of T(z−)
 * then of T(z+), where the side exists (a shaft's ends have one side), so a jump
 * at a station is drawn as one.
 */
export function torqueBand(st: EnvelopeStations): Band {
  const out: Band = { z: [], lo: [], hi: [] };
  st.z.forEach((z, i) => {
    const sides: Array<[number | null, number | null]> = [
      [st.torqueLeftMin[i], st.torqueLeftMax[i]],
      [st.torqueRightMin[i], st.torqueRightMax[i]],
    ];
    for (const [lo, hi] of sides) {
      if (lo === null || hi === null || lo === undefined || hi === undefined) continue;
      out.z.push(z);
      out.lo.push(lo);
      out.hi.push(hi);
    }
  });
  return out;
}

/** The envelope band of the rotation along a shaft, at its stations. */
export function rotationBand(st: EnvelopeStations): Band {
  return { z: [...st.z], lo: [...st.rotationMin], hi: [...st.rotationMax] };
}

/** The worst of one check over the combinations: which combination and its utilisation. */
export interface Governing { combination: string; utilisation: number | null }

/**
 * The combination that governs a check. A shear check reads the envelope's layer
 * (its layer index, else its material, else the segment's worst layer); any other
 * check is the same check (kind, shaft, segment, layer) of largest utilisation
 * over the combinations. Null when the solution has no combinations or no match.
 */
export function governingOf(s: CasesSolution, c: AnyCheck): Governing | null {
  if (c.kind === 'shear' && s.envelope && c.segment !== undefined) {
    const seg = s.envelope.shafts.find((sh) => sh.id === c.shaft)?.segments.find((g) => g.index === c.segment);
    if (seg && seg.layers.length) {
      let layer: EnvelopeLayer | undefined =
        c.layer !== undefined ? seg.layers[c.layer] : c.material ? seg.layers.find((l) => l.material === c.material) : undefined;
      layer ??= seg.layers.reduce((a, b) => ((b.utilisation ?? -1) > (a.utilisation ?? -1) ? b : a));
      if (layer) return { combination: layer.combination, utilisation: layer.utilisation };
    }
  }
  let best: Governing | null = null;
  for (const combo of s.combinations ?? []) {
    for (const k of combo.checks) {
      if (k.kind !== c.kind || k.shaft !== c.shaft || k.segment !== c.segment || k.layer !== c.layer) continue;
      if ((k as { raiser?: string }).raiser !== (c as { raiser?: string }).raiser) continue;
      if (best === null || (best.utilisation ?? -1) < k.utilisation) best = { combination: combo.id, utilisation: k.utilisation };
    }
  }
  return best;
}

function placeText(shaft: string, z: number | null, system: UnitSystem): string {
  return z === null ? `all along shaft ${shaft}` : `shaft ${shaft} at z = ${formatQuantity(z, 'length', system, 4)}`;
}

/**
 * The overload in plain words: "The loads of Peak can grow 1.84× before the
 * first fibre yields, 2.61× before the shafts collapse." (or "… and no
 * collapse mechanism exists"), with where each happens.
 */
export function overloadSentence(o: OverloadResult, combination: string | null, system: UnitSystem): { line: string; where: string } {
  const whose = combination ? `The loads of ${combination}` : 'The loads';
  const f = (x: number) => `${formatNumber(x, 3)}×`;
  const noMechanism = o.collapse === 'none' || (o.collapse === undefined && o.collapseFactor === null && o.firstYieldFactor !== null);
  let line: string;
  if (o.firstYieldFactor === null && o.collapseFactor === null) {
    line = noMechanism
      ? `${whose} have no factor to first yield, and no collapse mechanism exists.`
      : `${whose} have no overload factors: a material on a loaded path has no shear yield stress (see the warning).`;
  } else {
    const first = o.firstYieldFactor === null ? 'cannot be given a factor to first yield' : `can grow ${f(o.firstYieldFactor)} before the first fibre yields`;
    const last = o.collapseFactor !== null
      ? `${o.firstYieldFactor === null ? 'and ' : ''}${f(o.collapseFactor)} before the shafts collapse`
      : noMechanism
        ? 'and no collapse mechanism exists'
        : 'and the collapse factor cannot be given';
    line = `${whose} ${first}, ${last}.`;
  }
  const parts: string[] = [];
  if (o.firstYield) parts.push(`First yield: ${placeText(o.firstYield.shaft, o.firstYield.z, system)}, layer ${o.firstYield.layer}.`);
  if (o.collapseFactor !== null && o.plasticAt.length) {
    parts.push(`Fully plastic at collapse: ${o.plasticAt.map((p) => placeText(p.shaft, p.z, system)).join('; ')}.`);
  }
  return { line, where: parts.join(' ') };
}
