/**
 * Writing a solve out: as the solution object of the contract, or straight
 * to its JSON text. Both read the same recovered columns; the JSON text is
 * byte for byte `JSON.stringify(toSolution(solved))` (a test holds them to
 * it), but is written without making the millions of small objects a large
 * model would need, and in pieces, since a million-station answer is longer
 * than the longest string a JavaScript engine can hold.
 *
 * Both must run inside the solve's session (`withSolved`): the columns are work arrays.
 */
import { SOLUTION_FORMAT, type CheckResult, type Solution, type Warning } from '../../shared-types/solution.js';
import type { ResolvedModel } from './normalise.js';
import type { StationLayout } from './stations.js';
import type { Recovered } from './recover.js';

/** A finished solve, in columns. */
export interface Solved {
  readonly model: ResolvedModel;
  readonly layout: StationLayout;
  readonly rec: Recovered;
  readonly maxResidual: number;
  readonly warnings: readonly Warning[];
  readonly stats: Solution['stats'];
}

const CHECK_KINDS = ['shear', 'twistRate', 'totalTwist'] as const;

/** The solution object (plain objects and arrays, nothing from the workspace). */
export function toSolution(sv: Solved): Solution {
  const { model, layout, rec } = sv;
  const { z, shaftStart } = layout;
  const { phi, TL, TR, segBase, segMaxAbs, segAt, segTwist, layerBase, layerMaxShear, diagStart, diagCount } = rec;
  const shafts = model.shafts.map((shaft, s) => {
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    const stations = [];
    for (let d = first; d <= last; d++) {
      stations.push({ z: z[d], rotation: phi[d], torqueLeft: d === first ? null : TR[d - 1 - s], torqueRight: d === last ? null : TL[d - s] });
    }
    const segments = shaft.segments.map((sg, k) => {
      const g = segBase[s] + k;
      const maxAbs = segMaxAbs[g];
      return {
        index: k,
        section: sg.sectionId,
        from: sg.z0,
        to: sg.z1,
        torsionalRigidity: sg.rigidity,
        maxAbsTorque: maxAbs,
        governingZ: segAt[g],
        maxTwistRate: maxAbs / sg.rigidity,
        twist: segTwist[g],
        layers: sg.layers.map((l, j) => {
          const maxShear = layerMaxShear[layerBase[g] + j];
          return {
            material: l.materialId,
            outerRadius: l.rOuter,
            maxShear,
            allowableShear: l.allowableShear,
            utilisation: l.allowableShear === null ? null : maxShear / l.allowableShear,
            shearYield: l.shearYield,
          };
        }),
      };
    });
    const from = diagStart[s];
    const to = from + diagCount[s];
    return {
      id: shaft.id,
      ...(shaft.name === undefined ? {} : { name: shaft.name }),
      length: shaft.length,
      stations,
      segments,
      totalTwist: rec.totalTwist[s],
      diagram: {
        z: Array.from(rec.dZ.subarray(from, to)),
        torque: Array.from(rec.dT.subarray(from, to)),
        rotation: Array.from(rec.dPhi.subarray(from, to)),
        shear: Array.from(rec.dTau.subarray(from, to)),
      },
    };
  });
  const c = rec.checks;
  const checks = Array.from(c.listed, (m): CheckResult => {
    const shaft = model.shafts[c.shaft[m]].id;
    const base = { value: c.value[m], limit: c.limit[m], utilisation: c.utilisation[m], pass: c.value[m] <= c.limit[m] };
    if (c.kind[m] === 0) {
      const material = model.shafts[c.shaft[m]].segments[c.segment[m]].layers[c.layer[m]].materialId;
      return { kind: 'shear', shaft, ...base, segment: c.segment[m], layer: c.layer[m], material };
    }
    if (c.kind[m] === 1) return { kind: 'twistRate', shaft, ...base, segment: c.segment[m] };
    return { kind: 'totalTwist', shaft, ...base };
  });
  return {
    format: SOLUTION_FORMAT,
    name: model.name,
    shafts,
    reactions: rec.reactions,
    gearMeshes: rec.gearMeshes,
    couplings: rec.couplings,
    equilibrium: { maxResidual: sv.maxResidual, shafts: model.shafts.map((shaft, s) => ({ shaft: shaft.id, residual: rec.residual[s] })) },
    checks,
    warnings: [...sv.warnings],
    stats: { ...sv.stats },
  };
}

/**
 * The text of numbers written lately, in a small direct-mapped table keyed by
 * the bits of the double: most numbers of an answer appear more than once (a
 * station's z, rotation and torques again in the diagram, a segment's peak
 * torque again in its layers and its checks), and turning a double into its
 * shortest text costs more than looking it up. Cleared for every answer.
 */
const NUM_SLOTS = 4096; // a power of two
const numKey = new Float64Array(NUM_SLOTS).fill(Number.NaN);
const numText: string[] = new Array<string>(NUM_SLOTS).fill('');
const numBits = new Float64Array(1);
const numWords = new Int32Array(numBits.buffer);

/** A JSON number as JSON.stringify writes it (null for NaN and ±Infinity). */
function num(x: number): string {
  numBits[0] = x;
  const slot = (numWords[0] ^ numWords[1] ^ (numWords[1] >>> 12)) & (NUM_SLOTS - 1);
  if (numKey[slot] === x) return numText[slot]; // NaN never equals: it is never found
  const text = Number.isFinite(x) ? String(x) : 'null';
  numKey[slot] = x;
  numText[slot] = text;
  return text;
}

/** A nullable JSON number. */
function opt(x: number | null): string {
  return x === null ? 'null' : num(x);
}

/**
 * Writes the JSON text of the solution to `sink`, in pieces of about
 * `pieceChars` characters (the whole text in one piece when it is shorter).
 */
export function writeSolutionJson(sv: Solved, sink: (text: string) => void, pieceChars = 1 << 20): void {
  const { model, layout, rec } = sv;
  const { z, shaftStart } = layout;
  const { phi, TL, TR, segBase, segMaxAbs, segAt, segTwist, layerBase, layerMaxShear, diagStart, diagCount } = rec;
  numKey.fill(Number.NaN);
  let out = '';
  const flush = () => {
    if (out.length >= pieceChars) {
      sink(out);
      out = '';
    }
  };
  // Ids repeat (a section or material on every segment): quote each once.
  const quoted = new Map<string, string>();
  const str = (v: string) => {
    let q = quoted.get(v);
    if (q === undefined) quoted.set(v, (q = JSON.stringify(v)));
    return q;
  };
  const series = (a: Float64Array, from: number, to: number) => {
    out += '[';
    for (let k = from; k < to; k++) {
      out += (k === from ? '' : ',') + num(a[k]);
      if ((k & 4095) === 4095) flush();
    }
    out += ']';
  };

  out += `{"format":${str(SOLUTION_FORMAT)},"name":${JSON.stringify(model.name)},"shafts":[`;
  model.shafts.forEach((shaft, s) => {
    out += `${s === 0 ? '' : ','}{"id":${str(shaft.id)},`;
    if (shaft.name !== undefined) out += `"name":${JSON.stringify(shaft.name)},`;
    out += `"length":${num(shaft.length)},"stations":[`;
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    for (let d = first; d <= last; d++) {
      out +=
        `${d === first ? '' : ','}{"z":${num(z[d])},"rotation":${num(phi[d])},` +
        `"torqueLeft":${d === first ? 'null' : num(TR[d - 1 - s])},"torqueRight":${d === last ? 'null' : num(TL[d - s])}}`;
      if ((d & 1023) === 1023) flush();
    }
    out += '],"segments":[';
    shaft.segments.forEach((sg, k) => {
      const g = segBase[s] + k;
      const maxAbs = segMaxAbs[g];
      out +=
        `${k === 0 ? '' : ','}{"index":${k},"section":${str(sg.sectionId)},"from":${num(sg.z0)},"to":${num(sg.z1)},` +
        `"torsionalRigidity":${num(sg.rigidity)},"maxAbsTorque":${num(maxAbs)},"governingZ":${num(segAt[g])},` +
        `"maxTwistRate":${num(maxAbs / sg.rigidity)},"twist":${num(segTwist[g])},"layers":[`;
      sg.layers.forEach((l, j) => {
        const maxShear = layerMaxShear[layerBase[g] + j];
        out +=
          `${j === 0 ? '' : ','}{"material":${str(l.materialId)},"outerRadius":${num(l.rOuter)},"maxShear":${num(maxShear)},` +
          `"allowableShear":${opt(l.allowableShear)},"utilisation":${l.allowableShear === null ? 'null' : num(maxShear / l.allowableShear)},` +
          `"shearYield":${opt(l.shearYield)}}`;
      });
      out += ']}';
      if ((k & 1023) === 1023) flush();
    });
    const from = diagStart[s];
    const to = from + diagCount[s];
    out += `],"totalTwist":${num(rec.totalTwist[s])},"diagram":{"z":`;
    series(rec.dZ, from, to);
    out += ',"torque":';
    series(rec.dT, from, to);
    out += ',"rotation":';
    series(rec.dPhi, from, to);
    out += ',"shear":';
    series(rec.dTau, from, to);
    out += '}}';
    flush();
  });
  out += '],"reactions":[';
  rec.reactions.forEach((r, k) => {
    out +=
      `${k === 0 ? '' : ','}{"support":${str(r.support)},"shaft":${str(r.shaft)},"kind":${str(r.kind)},` +
      `"torque":${num(r.torque)},"rotation":${num(r.rotation)}}`;
    if ((k & 1023) === 1023) flush();
  });
  out += '],"gearMeshes":[';
  rec.gearMeshes.forEach((g, k) => {
    out +=
      `${k === 0 ? '' : ','}{"gearMesh":${str(g.gearMesh)},"force":${num(g.force)},"torqueA":${num(g.torqueA)},"torqueB":${num(g.torqueB)},` +
      `"radiusA":${num(g.radiusA)},"radiusB":${num(g.radiusB)},"gap":${num(g.gap)}}`;
    if ((k & 1023) === 1023) flush();
  });
  out += '],"couplings":[';
  rec.couplings.forEach((c, k) => {
    out += `${k === 0 ? '' : ','}{"coupling":${str(c.coupling)},"torqueA":${num(c.torqueA)},"torqueB":${num(c.torqueB)},"twist":${num(c.twist)}}`;
    if ((k & 1023) === 1023) flush();
  });
  out += `],"equilibrium":{"maxResidual":${num(sv.maxResidual)},"shafts":[`;
  model.shafts.forEach((shaft, s) => {
    out += `${s === 0 ? '' : ','}{"shaft":${str(shaft.id)},"residual":${num(rec.residual[s])}}`;
    if ((s & 1023) === 1023) flush();
  });
  out += ']},"checks":[';
  const c = rec.checks;
  for (let k = 0; k < c.listed.length; k++) {
    const m = c.listed[k];
    const s = c.shaft[m];
    out +=
      `${k === 0 ? '' : ','}{"kind":"${CHECK_KINDS[c.kind[m]]}","shaft":${str(model.shafts[s].id)},"value":${num(c.value[m])},` +
      `"limit":${num(c.limit[m])},"utilisation":${num(c.utilisation[m])},"pass":${c.value[m] <= c.limit[m]}`;
    if (c.kind[m] === 0) {
      const material = model.shafts[s].segments[c.segment[m]].layers[c.layer[m]].materialId;
      out += `,"segment":${c.segment[m]},"layer":${c.layer[m]},"material":${str(material)}`;
    } else if (c.kind[m] === 1) out += `,"segment":${c.segment[m]}`;
    out += '}';
    if ((k & 1023) === 1023) flush();
  }
  out += `],"warnings":${JSON.stringify(sv.warnings)},"stats":${JSON.stringify(sv.stats)}}`;
  sink(out);
}
