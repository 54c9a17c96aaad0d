/**
 * Writing a solve out: one walk over the recovered columns (`walkSolution`)
 * that names every field once, in the order written, and two writers it
 * feeds: one builds the solution object of the contract (`toSolution`), the
 * other its JSON text (`writeSolutionJson`), byte for byte
 * `JSON.stringify(toSolution(solved))` (a test holds them to it). The text is
 * written without making the millions of small objects a large model would
 * need, and in pieces, since a million-station answer is longer than the
 * longest string a JavaScript engine can hold.
 *
 * Both must run inside the solve's session (`withSolved`): the columns are
 * work arrays. A new field of the solution: its schema in
 * shared-types/solution.ts, its name in the record below, its value in the
 * walk, at the same place.
 */
import {
  SOLUTION_FORMAT,
  type CheckResult,
  type CombinationResult,
  type CouplingResult,
  type EnvelopeResult,
  type Diagram,
  type GearMeshResult,
  type LayerResult,
  type ReactionResult,
  type SegmentResult,
  type ShaftResult,
  type Solution,
  type ModeResult,
  type EnergyShare,
  type CrossingResult,
  type Station,
  type StressRaiserResult,
  type Warning,
  type Overload,
} from '../../shared-types/solution.js';
import type { ResolvedModel } from './normalise.js';
import type { StationLayout } from './stations.js';
import type { CheckColumns, Recovered } from './recover.js';
import { checkGovernedBy, governedItems, type CombinationSolved, type Envelope, type Governed, type Superposition } from './combinations.js';
import type { Crossing, DynamicsSolved } from './dynamics/modes.js';
import type { ForcedSolved } from './dynamics/forced.js';
import { forcedRecords, walkForcedResponse } from './dynamics/forced-output.js';

/** A finished solve, in columns. */
export interface Solved {
  readonly model: ResolvedModel;
  readonly layout: StationLayout;
  readonly rec: Recovered;
  readonly maxResidual: number;
  readonly warnings: readonly Warning[];
  readonly stats: Solution['stats'];
  /** Overload factors of the single load state; absent when no material has shearYield. */
  readonly overload?: Overload;
  /** A model with load cases: the combination shown at the top level, every combination, and the envelope. */
  readonly cases?: {
    readonly combination: string;
    readonly combinations: readonly CombinationSolved[];
    readonly envelope: Envelope;
    /** The columns every combination is evaluated from when it is written. */
    readonly superposition: Superposition;
    /** True when each combination lists only the items it governs (combinations.ts, ALL_ITEMS_UP_TO). */
    readonly abridged: boolean;
  };
  /** A model with dynamics: its modes and crossings. */
  readonly dynamics?: DynamicsSolved;
  /** With excitations and a speed range: the forced response. */
  readonly forced?: ForcedSolved;
}

/** The field names of one kind of object, in the order they are written. The first is never left out. */
interface Rec {
  readonly keys: readonly string[];
  /** The JSON text before each field's value: `"key":`, after a comma from the second on. */
  readonly json: readonly string[];
  /**
   * The object of the values, in order: field n is `num[n]` where bit n of
   * `isNum` is set, else `val[n]`; the fields whose bit is set in `left` are
   * left out.
   */
  readonly build: (num: Float64Array, val: readonly unknown[], isNum: number, left: number) => Record<string, unknown>;
}

/** Most fields of one kind of object (the bits of a mask). */
const MAX_FIELDS = 30;

/**
 * The record of `keys`. Its builder is generated from the names, once, so
 * that an object gets its fields in one go, in the order of the list, and
 * numbers come from a Float64Array without being boxed on the way (as a fast
 * serialiser is generated from a schema). The names are this file's literals,
 * never data.
 */
function rec<T>(...keys: Array<keyof T & string>): Rec {
  if (keys.length > MAX_FIELDS) throw new RangeError(`a record of more than ${MAX_FIELDS} fields`);
  const names = keys.map((k) => JSON.stringify(k));
  const value = (n: number) => `(isNum & ${1 << n} ? num[${n}] : val[${n}])`;
  const code = [
    `if (left === 0) return {${names.map((k, n) => `${k}: ${value(n)}`).join(', ')}};`,
    `const o = {${names[0]}: ${value(0)}};`,
    ...names.slice(1).map((k, m) => `if (!(left & ${1 << (m + 1)})) o[${k}] = ${value(m + 1)};`),
    'return o;',
  ].join('\n');
  const build = new Function('num', 'val', 'isNum', 'left', code) as Rec['build'];
  return { keys, json: names.map((k, n) => `${n === 0 ? '' : ','}${k}:`), build };
}

// The key order of the solution: written here once, for both writers.
const SOLUTION = rec<Solution>(
  'format',
  'name',
  'combination',
  'shafts',
  'reactions',
  'gearMeshes',
  'couplings',
  'equilibrium',
  'checks',
  'stressRaisers',
  'overload',
  'combinations',
  'envelope',
  'modes',
  'crossings',
  'forcedResponse',
  'warnings',
  'stats',
);
const SHAFT = rec<ShaftResult>('id', 'name', 'length', 'stations', 'segments', 'totalTwist', 'diagram');
const STATION = rec<Station>('z', 'rotation', 'torqueLeft', 'torqueRight');
const SEGMENT = rec<SegmentResult>(
  'index',
  'section',
  'from',
  'to',
  'torsionConstant',
  'torsionalRigidity',
  'stiffness',
  'sectionEnd',
  'torsionConstantEnd',
  'torsionalRigidityEnd',
  'polarMoment',
  'torsionalModulus',
  'maxAbsTorque',
  'governingZ',
  'maxTwistRate',
  'twist',
  'layers',
);
const LAYER = rec<LayerResult>('material', 'outerRadius', 'maxShear', 'allowableShear', 'utilisation', 'shearYield');
const DIAGRAM = rec<Diagram>('z', 'torque', 'rotation', 'shear');
const REACTION = rec<ReactionResult>('support', 'shaft', 'kind', 'torque', 'rotation');
const GEAR_MESH = rec<GearMeshResult>('gearMesh', 'force', 'torqueA', 'torqueB', 'radiusA', 'radiusB', 'gap');
const COUPLING = rec<CouplingResult>('coupling', 'torqueA', 'torqueB', 'twist');
const EQUILIBRIUM = rec<Solution['equilibrium']>('maxResidual', 'shafts');
const RESIDUAL = rec<Solution['equilibrium']['shafts'][number]>('shaft', 'residual');
const CHECK = rec<CheckResult>('kind', 'shaft', 'value', 'limit', 'utilisation', 'pass', 'segment', 'layer', 'material', 'raiser', 'mode', 'order');
const RAISER = rec<StressRaiserResult>(
  'id',
  'shaft',
  'z',
  'kind',
  'factor',
  'nominalShear',
  'localPeak',
  'material',
  'allowableShear',
  'utilisation',
  'note',
);
const OVERLOAD = rec<Overload>('firstYieldFactor', 'firstYield', 'collapseFactor', 'plasticAt', 'collapse');
const FIRST_YIELD = rec<NonNullable<Overload['firstYield']>>('shaft', 'z', 'layer');
const PLASTIC_AT = rec<Overload['plasticAt'][number]>('shaft', 'z');
const WARNING = rec<Warning>('code', 'message', 'shafts', 'connections');
const STATS = rec<Solution['stats']>('stations', 'unknowns', 'factorNonzeros', 'checksEvaluated');

type Item<T extends readonly unknown[]> = T[number];
const COMBINATION = rec<CombinationResult>('id', 'name', 'reactions', 'gearMeshes', 'couplings', 'segments', 'checks', 'equilibrium', 'overload');
const C_REACTION = rec<Item<CombinationResult['reactions']>>('support', 'torque');
const C_MESH = rec<Item<CombinationResult['gearMeshes']>>('gearMesh', 'force', 'torqueA', 'torqueB');
const C_COUPLING = rec<Item<CombinationResult['couplings']>>('coupling', 'torqueA', 'torqueB');
const C_SEGMENT = rec<Item<CombinationResult['segments']>>('shaft', 'index', 'maxAbsTorque', 'governingZ', 'maxTwistRate', 'twist', 'layers');
const C_LAYER = rec<Item<Item<CombinationResult['segments']>['layers']>>('material', 'maxShear', 'utilisation');
const C_EQUILIBRIUM = rec<CombinationResult['equilibrium']>('maxResidual');
const ENVELOPE = rec<EnvelopeResult>('reactions', 'shafts');
const E_REACTION = rec<Item<EnvelopeResult['reactions']>>('support', 'min', 'max', 'minCombination', 'maxCombination');
const E_SHAFT = rec<Item<EnvelopeResult['shafts']>>('id', 'stations', 'segments');
const E_STATIONS = rec<Item<EnvelopeResult['shafts']>['stations']>(
  'z',
  'torqueLeftMin',
  'torqueLeftMax',
  'torqueRightMin',
  'torqueRightMax',
  'rotationMin',
  'rotationMax',
);
const E_SEGMENT = rec<Item<Item<EnvelopeResult['shafts']>['segments']>>('index', 'maxAbsTorque', 'combination', 'layers');
const E_LAYER = rec<Item<Item<Item<EnvelopeResult['shafts']>['segments']>['layers']>>('material', 'maxShear', 'utilisation', 'combination');

const CHECK_KINDS = ['shear', 'twistRate', 'totalTwist', 'localPeak'] as const;
const MODE = rec<ModeResult>('frequency', 'angularFrequency', 'rigidBody', 'shafts', 'energy');
const MODE_SHAFT = rec<Item<ModeResult['shafts']>>('id', 'z', 'rotation', 'diagram');
const MODE_DIAGRAM = rec<Item<ModeResult['shafts']>['diagram']>('z', 'rotation');
const ENERGY = rec<ModeResult['energy']>('strain', 'kinetic');
const SHARE = rec<EnergyShare>('item', 'share');
const CROSSING = rec<CrossingResult>('mode', 'order', 'speed', 'inRange');
const FORCED = forcedRecords((...keys) => rec<Record<string, unknown>>(...keys));

/**
 * What a walk writes with, for records of type R (dynamics/forced-output.ts walks its part
 * with it too). Each value is the next field of the innermost open object (named by its
 * record) or the next item of the innermost open list; `absent` leaves an optional field out.
 */
export interface ValueWriter<R> {
  open(r: R): void;
  list(): void;
  close(): void;
  num(x: number): void;
  optNum(x: number | null): void;
  str(s: string): void;
  bool(b: boolean): void;
  absent(): void;
  /** A list of the numbers a[from … to − 1]. */
  series(a: Float64Array, from: number, to: number): void;
}

/** What the solution's walk writes with. */
interface Writer extends ValueWriter<Rec> {
  /** A list of strings. */
  strings(a: readonly string[]): void;
}

/** The one walk over a solve: every field of the solution, in order. */
function walkSolution(sv: Solved, w: Writer): void {
  const { model, layout, rec: r } = sv;
  const { z, shaftStart } = layout;
  const { phi, TL, TR, segBase, segMaxAbs, segAt, segTwist, layerBase, layerMaxShear, diagStart, diagCount } = r;
  w.open(SOLUTION);
  w.str(SOLUTION_FORMAT);
  w.str(model.name);
  if (sv.cases === undefined) w.absent();
  else w.str(sv.cases.combination);
  w.list();
  model.shafts.forEach((shaft, s) => {
    w.open(SHAFT);
    w.str(shaft.id);
    if (shaft.name === undefined) w.absent();
    else w.str(shaft.name);
    w.num(shaft.length);
    w.list();
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    for (let d = first; d <= last; d++) {
      w.open(STATION);
      w.num(z[d]);
      w.num(phi[d]);
      w.optNum(d === first ? null : TR[d - 1 - s]);
      w.optNum(d === last ? null : TL[d - s]);
      w.close();
    }
    w.close();
    w.list();
    shaft.segments.forEach((sg, k) => {
      const g = segBase[s] + k;
      const maxAbs = segMaxAbs[g];
      let J = 0;
      for (const l of sg.layers) J += l.J;
      w.open(SEGMENT);
      w.num(k);
      w.str(sg.sectionId);
      w.num(sg.z0);
      w.num(sg.z1);
      w.num(J);
      w.num(sg.rigidity);
      const taper = sg.taper;
      w.num(taper ? taper.stiffness : sg.rigidity / (sg.z1 - sg.z0));
      if (taper) {
        let JEnd = 0;
        let GJEnd = 0;
        for (const l of taper.layersEnd) {
          JEnd += l.J;
          GJEnd += l.G * l.J;
        }
        w.str(taper.sectionEndId);
        w.num(JEnd);
        w.num(GJEnd);
      } else {
        w.absent();
        w.absent();
        w.absent();
      }
      if (sg.shape) {
        w.optNum(sg.shape.polarMoment);
        w.num(sg.shape.torsionalModulus);
      } else {
        w.absent();
        w.absent();
      }
      w.num(maxAbs);
      w.num(segAt[g]);
      w.num(taper ? r.segRate[g] : maxAbs / sg.rigidity);
      w.num(segTwist[g]);
      w.list();
      sg.layers.forEach((l, j) => {
        const maxShear = layerMaxShear[layerBase[g] + j];
        w.open(LAYER);
        w.str(l.materialId);
        w.num(l.rOuter);
        w.num(maxShear);
        w.optNum(l.allowableShear);
        w.optNum(l.allowableShear === null ? null : maxShear / l.allowableShear);
        w.optNum(l.shearYield);
        w.close();
      });
      w.close();
      w.close();
    });
    w.close();
    w.num(r.totalTwist[s]);
    const from = diagStart[s];
    const to = from + diagCount[s];
    w.open(DIAGRAM);
    w.series(r.dZ, from, to);
    w.series(r.dT, from, to);
    w.series(r.dPhi, from, to);
    w.series(r.dTau, from, to);
    w.close();
    w.close();
  });
  w.close();
  w.list();
  for (const x of r.reactions) {
    w.open(REACTION);
    w.str(x.support);
    w.str(x.shaft);
    w.str(x.kind);
    w.num(x.torque);
    w.num(x.rotation);
    w.close();
  }
  w.close();
  w.list();
  for (const g of r.gearMeshes) {
    w.open(GEAR_MESH);
    w.str(g.gearMesh);
    w.num(g.force);
    w.num(g.torqueA);
    w.num(g.torqueB);
    w.num(g.radiusA);
    w.num(g.radiusB);
    w.num(g.gap);
    w.close();
  }
  w.close();
  w.list();
  for (const c of r.couplings) {
    w.open(COUPLING);
    w.str(c.coupling);
    w.num(c.torqueA);
    w.num(c.torqueB);
    w.num(c.twist);
    w.close();
  }
  w.close();
  w.open(EQUILIBRIUM);
  w.num(sv.maxResidual);
  w.list();
  model.shafts.forEach((shaft, s) => {
    w.open(RESIDUAL);
    w.str(shaft.id);
    w.num(r.residual[s]);
    w.close();
  });
  w.close();
  w.close();
  writeChecks(w, model, r, undefined, sv.dynamics);
  if (r.raisers === undefined) w.absent();
  else {
    const rr = r.raisers;
    w.list();
    model.raisers.forEach((x, i) => {
      const seg = model.shafts[x.shaft].segments[rr.segment[i]];
      const layer = seg.layers[seg.layers.length - 1];
      w.open(RAISER);
      w.str(x.id);
      w.str(model.shafts[x.shaft].id);
      w.num(x.z);
      w.str(x.kind);
      w.num(x.factor);
      w.num(rr.nominal[i]);
      w.num(rr.peak[i]);
      w.str(layer.materialId);
      w.optNum(layer.allowableShear);
      w.optNum(layer.allowableShear === null ? null : rr.peak[i] / layer.allowableShear);
      if (x.note === undefined) w.absent();
      else w.str(x.note);
      w.close();
    });
    w.close();
  }
  if (sv.overload === undefined) w.absent();
  else walkOverload(sv.overload, w);
  if (sv.cases === undefined) {
    w.absent();
    w.absent();
  } else {
    writeCombinations(w, model, sv.cases);
    writeEnvelope(w, sv, sv.cases.envelope);
  }
  if (sv.dynamics === undefined) {
    w.absent();
    w.absent();
  } else writeDynamics(w, sv.dynamics, model.dynamics?.speed !== null);
  if (sv.forced === undefined) w.absent();
  else walkForcedResponse(sv.forced, sv.forced.model, w, FORCED);
  w.list();
  for (const x of sv.warnings) {
    w.open(WARNING);
    w.str(x.code);
    w.str(x.message);
    if (x.shafts === undefined) w.absent();
    else w.strings(x.shafts);
    if (x.connections === undefined) w.absent();
    else w.strings(x.connections);
    w.close();
  }
  w.close();
  w.open(STATS);
  w.num(sv.stats.stations);
  w.num(sv.stats.unknowns);
  w.num(sv.stats.factorNonzeros);
  w.num(sv.stats.checksEvaluated);
  w.close();
  w.close();
}

/** The modes (each shaft's stations and drawing, the energy shares) and, with a speed, the crossings. */
function writeDynamics(w: Writer, d: DynamicsSolved, withSpeed: boolean): void {
  const shares = (items: readonly string[], values: Float64Array) => {
    w.list();
    for (let k = 0; k < values.length; k++) {
      w.open(SHARE);
      w.str(items[k]);
      w.num(values[k]);
      w.close();
    }
    w.close();
  };
  w.list();
  for (const m of d.modes) {
    w.open(MODE);
    w.num(m.frequency);
    w.num(m.angularFrequency);
    w.bool(m.rigidBody);
    w.list();
    for (const sh of m.shafts) {
      w.open(MODE_SHAFT);
      w.str(sh.id);
      w.series(sh.stationZ, 0, sh.stationZ.length);
      w.series(sh.rotation, 0, sh.rotation.length);
      w.open(MODE_DIAGRAM);
      w.series(sh.z, 0, sh.z.length);
      w.series(sh.shape, 0, sh.shape.length);
      w.close();
      w.close();
    }
    w.close();
    w.open(ENERGY);
    if (m.strain === null) w.optNum(null);
    else shares(d.items.strain, m.strain);
    shares(d.items.kinetic, m.kinetic);
    w.close();
    w.close();
  }
  w.close();
  if (!withSpeed) {
    w.absent();
    return;
  }
  w.list();
  for (const c of d.crossings) {
    w.open(CROSSING);
    w.num(c.mode);
    w.num(c.order);
    w.num(c.speed);
    w.bool(c.inRange);
    w.close();
  }
  w.close();
}

/** A failing crossing as a check: 1 at the edge of the widened range, 2 at its centre. */
function crossingUtilisation(c: Crossing): number {
  const half = 0.5 * (c.high - c.low);
  return half > 0 ? 1 + Math.min(c.speed - c.low, c.high - c.speed) / half : 2;
}

function writeCrossingCheck(w: Writer, shaft: string, c: Crossing): void {
  w.open(CHECK);
  w.str('crossing');
  w.str(shaft);
  w.num(c.speed);
  w.num(c.speed - c.low <= c.high - c.speed ? c.low : c.high);
  w.num(crossingUtilisation(c));
  w.bool(false);
  w.absent();
  w.absent();
  w.absent();
  w.absent();
  w.num(c.mode);
  w.num(c.order);
  w.close();
}

/** The checks of one load state, worst first (those `keep` keeps, when given); with dynamics, the failing crossings merged in by utilisation. */
function writeChecks(w: Writer, model: ResolvedModel, r: { checks: CheckColumns; raisers?: Recovered['raisers'] }, keep?: (m: number) => boolean, dynamics?: DynamicsSolved): void {
  w.list();
  const c = r.checks;
  const speedShaft = model.dynamics?.speed ? model.shafts[model.dynamics.speed.shaft].id : '';
  const failing = (dynamics?.crossings ?? []).filter((x) => x.inRange).sort((a, b) => crossingUtilisation(b) - crossingUtilisation(a));
  let next = 0;
  for (let k = 0; k < c.listed.length; k++) {
    const m = c.listed[k];
    if (keep && !keep(m)) continue;
    while (next < failing.length && crossingUtilisation(failing[next]) > c.utilisation[m]) writeCrossingCheck(w, speedShaft, failing[next++]);
    const shaft = model.shafts[c.shaft[m]];
    const kind = c.kind[m];
    w.open(CHECK);
    w.str(CHECK_KINDS[kind]);
    w.str(shaft.id);
    w.num(c.value[m]);
    w.num(c.limit[m]);
    w.num(c.utilisation[m]);
    w.bool(c.value[m] <= c.limit[m]);
    if (kind === 3) {
      // A local peak: its material is the outer layer's on the side that governs.
      const seg = shaft.segments[(r.raisers as NonNullable<typeof r.raisers>).segment[c.segment[m]]];
      w.absent();
      w.absent();
      w.str(seg.layers[seg.layers.length - 1].materialId);
      w.str(model.raisers[c.segment[m]].id);
      w.absent();
      w.absent();
      w.close();
      continue;
    }
    if (kind === 2) w.absent();
    else w.num(c.segment[m]);
    if (kind === 0) {
      w.num(c.layer[m]);
      w.str(shaft.segments[c.segment[m]].layers[c.layer[m]].materialId);
    } else {
      w.absent();
      w.absent();
    }
    w.absent();
    w.absent();
    w.absent();
    w.close();
  }
  while (next < failing.length) writeCrossingCheck(w, speedShaft, failing[next++]);
  w.close();
}

/**
 * Every combination's results, each evaluated from the columns as it is written: reactions,
 * connections, segment peaks, checks, equilibrium, overload. Abridged (a large model × many
 * combinations): each lists its reactions and the items and checks it governs.
 */
function writeCombinations(w: Writer, model: ResolvedModel, cases: NonNullable<Solved['cases']>): void {
  const { superposition: sup, envelope: env } = cases;
  // Abridged: each item under the combination that governs it, with the numbers the envelope kept
  // of that combination; no combination is evaluated again (but with stress raisers, for their checks).
  let governed: Governed | null = null;
  const reactions = new Float64Array(model.supports.length);
  w.list();
  cases.combinations.forEach((cmb, k) => {
    const full = !cases.abridged || model.raisers.length > 0;
    const r = full ? sup.evaluate(cmb.weights) : null;
    if (cases.abridged && governed === null) governed = governedItems(env, sup, cases.combinations.length, r ? null : sup.checkList());
    const mine = governed as Governed | null;
    const reaction = r ? r.reaction : sup.reactions(cmb.weights, reactions);
    w.open(COMBINATION);
    w.str(cmb.id);
    if (cmb.name === undefined) w.absent();
    else w.str(cmb.name);
    w.list();
    model.supports.forEach((x, i) => {
      w.open(C_REACTION);
      w.str(x.id);
      w.num(reaction[i]);
      w.close();
    });
    w.close();
    w.list();
    for (const i of mine ? mine.meshes[k] : model.meshes.keys()) {
      w.open(C_MESH);
      w.str(model.meshes[i].id);
      w.num(r ? r.meshForce[i] : env.meshForce[i]);
      w.num(r ? r.meshA[i] : env.meshA[i]);
      w.num(r ? r.meshB[i] : env.meshB[i]);
      w.close();
    }
    w.close();
    w.list();
    for (const i of mine ? mine.couplings[k] : model.couplings.keys()) {
      w.open(C_COUPLING);
      w.str(model.couplings[i].id);
      w.num(r ? r.couplingA[i] : env.couplingA[i]);
      w.num(r ? r.couplingB[i] : env.couplingB[i]);
      w.close();
    }
    w.close();
    w.list();
    for (const g of mine ? mine.segments[k] : sup.segments.keys()) {
      const sg = sup.segments[g];
      const s = sup.segShaft[g];
      const l0 = sup.layerBase[g];
      // Numbers of this combination: evaluated, or kept by the envelope where it governs the peak |T| or the stress.
      const byPeak = env.segCombination[g] === k;
      w.open(C_SEGMENT);
      w.str(model.shafts[s].id);
      w.num(g - sup.segBase[s]);
      if (r) {
        w.num(r.segMaxAbs[g]);
        w.num(r.segAt[g]);
        w.num(sg.taper ? r.segRate[g] : r.segMaxAbs[g] / sg.rigidity);
        w.num(r.segTwist[g]);
      } else {
        w.num(byPeak ? env.segMaxAbs[g] : env.stressAbs[g]);
        w.num(byPeak ? env.segAt[g] : env.stressAt[g]);
        w.num(byPeak ? env.segRate[g] : env.stressRate[g]);
        w.num(byPeak ? env.segTwist[g] : env.stressTwist[g]);
      }
      const layers = r ? r.layerMaxShear : byPeak ? env.segLayers : env.stressLayers;
      w.list();
      sg.layers.forEach((l, j) => {
        const maxShear = layers[l0 + j];
        w.open(C_LAYER);
        w.str(l.materialId);
        w.num(maxShear);
        w.optNum(l.allowableShear === null ? null : maxShear / l.allowableShear);
        w.close();
      });
      w.close();
      w.close();
    }
    w.close();
    const some = mine?.checks ? sup.someChecks(env, mine.checks[k]) : null;
    if (some) writeChecks(w, model, { checks: some });
    else {
      const rr = r as NonNullable<typeof r>;
      const checks = sup.checks(rr);
      writeChecks(w, model, { checks, raisers: rr.raisers }, mine ? (m) => checkGovernedBy(env, sup, checks, m) === k : undefined);
    }
    w.open(C_EQUILIBRIUM);
    w.num(cmb.maxResidual);
    w.close();
    if (cmb.overload === undefined) w.absent();
    else walkOverload(cmb.overload, w);
    w.close();
  });
  w.close();
}

/** The envelope over the combinations, with the combination that governs each extreme. */
function writeEnvelope(w: Writer, sv: Solved, env: Envelope): void {
  const { model, layout } = sv;
  const ids = (sv.cases as NonNullable<Solved['cases']>).combinations.map((c) => c.id);
  const { z, shaftStart } = layout;
  const side = (a: Float64Array, from: number, to: number) => {
    w.list();
    for (let d = from; d <= to; d++) w.optNum(Number.isFinite(a[d]) ? a[d] : null);
    w.close();
  };
  w.open(ENVELOPE);
  w.list();
  model.supports.forEach((x, n) => {
    w.open(E_REACTION);
    w.str(x.id);
    w.num(env.reactionMin[n]);
    w.num(env.reactionMax[n]);
    w.str(ids[env.reactionMinAt[n]]);
    w.str(ids[env.reactionMaxAt[n]]);
    w.close();
  });
  w.close();
  w.list();
  let g = 0;
  let l = 0;
  model.shafts.forEach((shaft, s) => {
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    w.open(E_SHAFT);
    w.str(shaft.id);
    w.open(E_STATIONS);
    w.series(z, first, last + 1);
    side(env.leftMin, first, last);
    side(env.leftMax, first, last);
    side(env.rightMin, first, last);
    side(env.rightMax, first, last);
    w.series(env.rotationMin, first, last + 1);
    w.series(env.rotationMax, first, last + 1);
    w.close();
    w.list();
    shaft.segments.forEach((sg, k) => {
      w.open(E_SEGMENT);
      w.num(k);
      w.num(env.segMaxAbs[g]);
      w.str(ids[env.segCombination[g]]);
      w.list();
      for (const layer of sg.layers) {
        const maxShear = env.layerMaxShear[l];
        w.open(E_LAYER);
        w.str(layer.materialId);
        w.num(maxShear);
        w.optNum(layer.allowableShear === null ? null : maxShear / layer.allowableShear);
        w.str(ids[env.layerCombination[l]]);
        w.close();
        l++;
      }
      w.close();
      w.close();
      g++;
    });
    w.close();
    w.close();
  });
  w.close();
  w.close();
}

/** The overload factors (server/engine/overload.ts). */
function walkOverload(o: Overload, w: Writer): void {
  w.open(OVERLOAD);
  w.optNum(o.firstYieldFactor);
  if (o.firstYield === null) w.optNum(null);
  else {
    w.open(FIRST_YIELD);
    w.str(o.firstYield.shaft);
    w.optNum(o.firstYield.z);
    w.str(o.firstYield.layer);
    w.close();
  }
  w.optNum(o.collapseFactor);
  w.list();
  for (const p of o.plasticAt) {
    w.open(PLASTIC_AT);
    w.str(p.shaft);
    w.num(p.z);
    w.close();
  }
  w.close();
  w.str(o.collapse);
  w.close();
}

/** The solution object (plain objects and arrays, nothing from the workspace). */
export function toSolution(sv: Solved): Solution {
  const w = new ObjectWriter();
  walkSolution(sv, w);
  return w.result as Solution;
}

/**
 * Writes the JSON text of the solution to `sink`, in pieces of about
 * `pieceChars` characters (the whole text in one piece when it is shorter).
 */
export function writeSolutionJson(sv: Solved, sink: (text: string) => void, pieceChars = 1 << 20): void {
  const w = new JsonWriter(sink, pieceChars, sv.layout.dofCount);
  walkSolution(sv, w);
  w.end();
}

/** Builds plain objects and arrays. */
class ObjectWriter implements Writer {
  result: unknown = undefined;
  // The innermost open object or list: its record (null: a list); of a list, the list; of an object,
  // its values so far (numbers apart, so that they are never boxed), which fields are numbers, the
  // next field, and which fields were left out. An object is built when it closes.
  private rec: Rec | null = null;
  private items: unknown[] = [];
  private nums: Float64Array = new Float64Array(MAX_FIELDS);
  private vals: unknown[] = [];
  private isNum = 0;
  private field = 0;
  private left = 0;
  private depth = -1;
  /** The same of the enclosing ones, outermost first (buffers stay with their depth, for reuse). */
  private readonly outer: Array<{ rec: Rec | null; items: unknown[]; nums: Float64Array; vals: unknown[]; isNum: number; field: number; left: number }> = [];

  private put(v: unknown): void {
    if (this.rec !== null) this.vals[this.field++] = v;
    else if (this.depth >= 0) this.items.push(v);
    else this.result = v;
  }

  /** Saves the current frame and makes the next depth's buffers current. */
  private enter(rec: Rec | null): void {
    if (this.depth >= 0) {
      const o = this.outer[this.depth];
      o.rec = this.rec;
      o.items = this.items;
      o.isNum = this.isNum;
      o.field = this.field;
      o.left = this.left;
    }
    const d = ++this.depth;
    if (this.outer.length === d) {
      this.outer.push({ rec: null, items: [], nums: new Float64Array(MAX_FIELDS), vals: new Array<unknown>(MAX_FIELDS).fill(undefined), isNum: 0, field: 0, left: 0 });
    }
    const o = this.outer[d];
    this.rec = rec;
    this.nums = o.nums;
    this.vals = o.vals;
    this.isNum = 0;
    this.field = 0;
    this.left = 0;
  }

  open(r: Rec): void {
    this.enter(r);
  }
  list(): void {
    this.enter(null);
    this.items = [];
  }
  close(): void {
    let done: unknown;
    if (this.rec === null) done = this.items;
    else {
      done = this.rec.build(this.nums, this.vals, this.isNum, this.left);
      if (this.isNum !== (1 << this.field) - 1) this.vals.fill(undefined, 0, this.field);
    }
    const d = --this.depth;
    if (d >= 0) {
      const o = this.outer[d];
      this.rec = o.rec;
      this.items = o.items;
      this.nums = o.nums;
      this.vals = o.vals;
      this.isNum = o.isNum;
      this.field = o.field;
      this.left = o.left;
    } else this.rec = null;
    this.put(done);
  }
  num(x: number): void {
    if (this.rec === null) this.put(x);
    else {
      this.nums[this.field] = x;
      this.isNum |= 1 << this.field++;
    }
  }
  optNum(x: number | null): void {
    if (x === null) this.put(null);
    else this.num(x);
  }
  str(s: string): void {
    this.put(s);
  }
  bool(b: boolean): void {
    this.put(b);
  }
  absent(): void {
    this.left |= 1 << this.field++;
  }
  series(a: Float64Array, from: number, to: number): void {
    this.put(Array.from(a.subarray(from, to)));
  }
  strings(a: readonly string[]): void {
    this.put([...a]);
  }
}

/**
 * Writes JSON text as JSON.stringify would, in pieces. The text of numbers
 * written lately is kept, for this walk only, in a small direct-mapped table
 * keyed by the bits of the double: most numbers of an answer appear more than
 * once (a station's z, rotation and torques again in the diagram, a segment's
 * peak torque again in its layers and its checks), and turning a double into
 * its shortest text costs more than looking it up.
 */
class JsonWriter implements Writer {
  private out = '';
  private readonly recs: Array<Rec | null> = [];
  /** Of each open object: its next field; of each open list: items written. */
  private readonly count: number[] = [];
  private depth = -1;
  // The number-text table: a power of two of slots, more for larger answers (at most 4096).
  private readonly slots: number;
  private readonly numKey: Float64Array;
  private readonly numText: string[];
  private readonly numBits = new Float64Array(1);
  private readonly numWords = new Int32Array(this.numBits.buffer);
  /** Ids repeat (a section or material on every segment): each is quoted once. */
  private readonly quoted = new Map<string, string>();

  constructor(
    private readonly sink: (text: string) => void,
    private readonly pieceChars: number,
    stations: number,
  ) {
    this.slots = Math.min(4096, 1 << Math.ceil(Math.log2(Math.max(64, 4 * stations))));
    this.numKey = new Float64Array(this.slots).fill(Number.NaN);
    this.numText = new Array<string>(this.slots).fill('');
  }

  /** The text before the next value: its key, or a comma between list items. */
  private before(): string {
    const d = this.depth;
    const r = this.recs[d];
    if (r === null) return this.count[d]++ === 0 ? '' : ',';
    return r.json[this.count[d]++];
  }

  /** A JSON number as JSON.stringify writes it (null for NaN and ±Infinity). */
  private text(x: number): string {
    this.numBits[0] = x;
    const w = this.numWords;
    const slot = (w[0] ^ w[1] ^ (w[1] >>> 12)) & (this.slots - 1);
    if (this.numKey[slot] === x) return this.numText[slot]; // NaN never equals: it is never found
    const text = Number.isFinite(x) ? String(x) : 'null';
    this.numKey[slot] = x;
    this.numText[slot] = text;
    return text;
  }

  private quote(s: string): string {
    let q = this.quoted.get(s);
    if (q === undefined) this.quoted.set(s, (q = JSON.stringify(s)));
    return q;
  }

  private push(r: Rec | null, bracket: string): void {
    this.out += (this.depth < 0 ? '' : this.before()) + bracket;
    const d = ++this.depth;
    this.recs[d] = r;
    this.count[d] = 0;
  }

  open(r: Rec): void {
    this.push(r, '{');
  }
  list(): void {
    this.push(null, '[');
  }
  close(): void {
    this.out += this.recs[this.depth--] === null ? ']' : '}';
    if (this.out.length >= this.pieceChars) {
      this.sink(this.out);
      this.out = '';
    }
  }
  num(x: number): void {
    this.out += this.before() + this.text(x);
  }
  optNum(x: number | null): void {
    this.out += this.before() + (x === null ? 'null' : this.text(x));
  }
  str(s: string): void {
    this.out += this.before() + this.quote(s);
  }
  bool(b: boolean): void {
    this.out += this.before() + (b ? 'true' : 'false');
  }
  absent(): void {
    this.count[this.depth]++;
  }
  series(a: Float64Array, from: number, to: number): void {
    this.out += this.before() + '[';
    for (let k = from; k < to; k++) {
      this.out += (k === from ? '' : ',') + this.text(a[k]);
      if ((k & 4095) === 4095 && this.out.length >= this.pieceChars) {
        this.sink(this.out);
        this.out = '';
      }
    }
    this.out += ']';
  }
  strings(a: readonly string[]): void {
    this.out += this.before() + '[' + a.map((s) => this.quote(s)).join(',') + ']';
  }

  /** Hands over the rest of the text. */
  end(): void {
    this.sink(this.out);
    this.out = '';
  }
}
