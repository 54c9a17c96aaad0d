/**
 * From the model as typed (unit strings, ids) to a resolved model: SI numbers,
 * indices instead of ids, sections with their per-layer rigidities. Every
 * problem found is collected with the JSON pointer of its field and thrown at
 * once as one ModelError, so the user fixes them in one pass.
 */
import type { GearEnd, Model as ModelT } from '../../shared-types/model.js';
import { MODEL_VALIDATOR, modelSchemaIssues } from '../../shared-types/schema-issues.js';
import { ModelError, pointer, type ErrorCode, type ModelIssue } from '../../shared-types/errors.js';
import { isProblem, QUANTITY_RANGE, rangeProblem, readQuantity, type QuantityKind } from '../../shared-types/quantity.js';
import type { Warning } from '../../shared-types/solution.js';
import { buildSectionLayers, type SectionLayer } from './sections.js';
import { sectionProperties, shapeProblems, type ShapeInput, type ShapeProperties } from './shapes.js';
import { taperProblems, taperStiffness, type TaperInput } from './taper.js';
import { shoulderFactor, shoulderRangeProblem } from './stress-raisers.js';
import type { ResolvedDynamics, ResolvedExcitation } from './dynamics/types.js';

export interface ResolvedMaterial {
  readonly id: string;
  readonly G: number;
  readonly allowableShear: number | null;
  readonly shearYield: number | null;
  /** kg/m³, or null when not given (the shafts' own inertia is then left out of dynamics). */
  readonly density: number | null;
}

export interface ResolvedSegment {
  readonly index: number;
  readonly sectionId: string;
  readonly z0: number;
  readonly z1: number;
  readonly layers: readonly SectionLayer[];
  /** Σ G·J, N·m². */
  readonly rigidity: number;
  /** max over layers of G·r_outer / ΣGJ: τ_peak = factor · |T|, 1/m³. */
  readonly shearFactor: number;
  /** A section of the non-circular shapes: its polar moment (m⁴, null if not given) and modulus Wt (m³). */
  readonly shape?: { readonly polarMoment: number | null; readonly torsionalModulus: number; readonly plasticModulus?: number | null };
  /** A tapered segment (`layers`, `rigidity` and `shearFactor` are then those at its start). */
  readonly taper?: ResolvedTaper;
  /**
   * Rotary inertia per length ρ·Ip summed over the layers, kg·m (dynamics); 0 where no density (or,
   * for a non-circular section, no polar moment) is given. A taper's varies: ρ·Ip(z) from its geometry
   * and `taper.density`.
   */
  readonly rhoIp?: number;
}

/** A tapered segment: its geometry from the segment's start, its one material and its exact stiffness. */
export interface ResolvedTaper {
  readonly input: TaperInput;
  readonly G: number;
  /** 1/∫dz/(G·J(z)) of the whole segment, N·m/rad. */
  readonly stiffness: number;
  readonly sectionEndId: string;
  /** The layer at the end (one ring). */
  readonly layersEnd: readonly SectionLayer[];
  /** Density of its material, kg/m³ (0 without one): ρ·Ip(z) per length for dynamics. */
  readonly density?: number;
}

/**
 * A stress raiser resolved: its factor, and the sides of its station whose nominal stress it
 * multiplies (a shoulder: the smaller side; a factor: both sides, the larger nominal governs).
 */
export interface ResolvedRaiser extends ShaftPoint {
  readonly id: string;
  readonly kind: 'shoulder' | 'factor';
  readonly factor: number;
  readonly note?: string;
  /** Segment index (within the shaft) of each side read, and whether it lies left of the station. */
  readonly sides: ReadonlyArray<{ readonly segment: number; readonly left: boolean }>;
}

export interface ResolvedShaft {
  readonly id: string;
  readonly name?: string;
  readonly length: number;
  readonly segments: readonly ResolvedSegment[];
}

export interface ShaftPoint {
  readonly shaft: number;
  readonly z: number;
}

export interface ResolvedSupport extends ShaftPoint {
  readonly id: string;
  readonly kind: 'fixed' | 'spring';
  /** Prescribed rotation (fixed), rad. */
  readonly rotation: number;
  /** Spring stiffness (spring), N·m/rad. */
  readonly stiffness: number;
}

export interface ResolvedTorque extends ShaftPoint {
  readonly id: string;
  readonly torque: number;
  /** Index of its load case in `loadCases`, −1 in a model without load cases. */
  readonly caseIndex: number;
}

export interface ResolvedDistributed {
  readonly id: string;
  readonly shaft: number;
  readonly from: number;
  readonly to: number;
  /** t at `from` and at `to`, N·m/m. */
  readonly start: number;
  readonly end: number;
  /** Index of its load case in `loadCases`, −1 in a model without load cases. */
  readonly caseIndex: number;
}

/** A combination: the factor of every load case (by index in `loadCases`, 0 where not named). */
export interface ResolvedCombination {
  readonly id: string;
  readonly name?: string;
  readonly factors: readonly number[];
}

export interface ResolvedMesh {
  readonly id: string;
  readonly a: ShaftPoint & { readonly radius: number };
  readonly b: ShaftPoint & { readonly radius: number };
  /** −1 for "opposite", +1 for "same". */
  readonly sense: -1 | 1;
  /** Tangential stiffness N/m, or null for a rigid mesh. */
  readonly stiffness: number | null;
  readonly offset: number;
}

export interface ResolvedCoupling {
  readonly id: string;
  readonly a: ShaftPoint;
  readonly b: ShaftPoint;
  /** N·m/rad, or null for a rigid coupling. */
  readonly stiffness: number | null;
  readonly misfit: number;
}

export interface ResolvedDisc extends ShaftPoint {
  readonly id: string;
  readonly inertia: number;
}

export interface ResolvedModel {
  readonly name: string;
  readonly shafts: readonly ResolvedShaft[];
  readonly supports: readonly ResolvedSupport[];
  readonly torques: readonly ResolvedTorque[];
  readonly distributed: readonly ResolvedDistributed[];
  readonly meshes: readonly ResolvedMesh[];
  readonly couplings: readonly ResolvedCoupling[];
  readonly discs: readonly ResolvedDisc[];
  readonly raisers: readonly ResolvedRaiser[];
  /** Cautions found while resolving (thin walls stretched, open sections). */
  readonly warnings: readonly Warning[];
  readonly limits: { readonly twistRate: number | null; readonly totalTwist: number | null };
  /** Load cases (empty: one load state, as before) and the combinations to solve (each case alone when none are given). */
  readonly loadCases: ReadonlyArray<{ readonly id: string; readonly name?: string }>;
  readonly combinations: readonly ResolvedCombination[];
  /** True when the model lists its combinations (else each case is one, and is named by /loadCases/i). */
  readonly combinationsGiven: boolean;
  /** The model's `dynamics`, resolved; null without it. */
  readonly dynamics: ResolvedDynamics | null;
}

/** Smallest positive normal double: below it numbers lose precision and products underflow. */
const MIN_NORMAL = 2.2250738585072014e-308;

/**
 * Shortest segment, as a fraction of its shaft's length, whose ends stay two stations: stations.ts
 * merges points closer than 1e-12 of the shaft's length (MERGE_TOLERANCE there), so a shorter
 * segment would have no element and no results. Twice that, for the round-off of the summed ends.
 */
const MIN_SEGMENT_FRACTION = 2e-12;

/** Dynamics: modes found without `modes` (contract default), the most one may ask, orders' bound, margin's default. */
const DEFAULT_MODES = 6;
const MAX_MODES = 200;
const MAX_ORDER = 1000;
const DEFAULT_MARGIN = 0.1; // ±10 % (common practice, no source)

/** The model schema, compiled once for the program (shared-types/schema-issues.ts). */
const validator = MODEL_VALIDATOR;

/** Validates and resolves a model; throws ModelError listing every problem. */
export function normaliseModel(raw: unknown): ResolvedModel {
  if (!validator.Check(raw)) throw new ModelError(schemaIssues(raw));
  return new Resolver(raw).resolve();
}

/** The schema's issues with a model, worded as on every other path (the one translator). */
export function schemaIssues(raw: unknown): ModelIssue[] {
  return modelSchemaIssues(raw);
}

/** Resolves a schema-valid model, collecting issues as it goes. */
class Resolver {
  private readonly issues: ModelIssue[] = [];
  private readonly materials = new Map<string, ResolvedMaterial>();
  private readonly sectionIndex = new Map<string, number>();
  private readonly shaftIndex = new Map<string, number>();
  private shafts: ResolvedShaft[] = [];
  private readonly warnings: Warning[] = [];
  /** Properties of the non-circular sections, by section index. */
  private readonly shapeProps = new Map<number, ShapeProperties>();

  constructor(private readonly m: ModelT) {}

  resolve(): ResolvedModel {
    const m = this.m;
    this.uniqueIds('materials', m.materials);
    this.uniqueIds('sections', m.sections);
    this.uniqueIds('shafts', m.shafts);
    for (const list of ['supports', 'torques', 'distributedTorques', 'gearMeshes', 'couplings', 'discs', 'stressRaisers', 'loadCases', 'combinations'] as const) {
      this.uniqueIds(list, m[list] ?? []);
    }
    m.materials.forEach((mat, i) => this.material(mat, i));
    m.sections.forEach((s, i) => this.sectionIndex.set(s.id, i));
    this.shafts = m.shafts.map((s, i) => this.shaft(s, i));
    const supports = (m.supports ?? []).map((s, i): ResolvedSupport => {
      const base = pointer('supports', i);
      const at = this.point(s.shaft, s.at, base);
      const rotation = s.rotation === undefined ? 0 : this.q(s.rotation, 'angle', base + '/rotation');
      let stiffness = 0;
      if (s.kind === 'spring') {
        if (s.stiffness === undefined) this.issue('SN_SCHEMA', base + '/stiffness', 'a spring support needs a stiffness');
        else stiffness = this.positive(s.stiffness, 'rotationalStiffness', base + '/stiffness');
        if (s.rotation !== undefined) this.issue('SN_SCHEMA', base + '/rotation', 'only a fixed support takes a rotation');
      } else if (s.stiffness !== undefined) {
        this.issue('SN_SCHEMA', base + '/stiffness', 'a fixed support takes no stiffness (use kind "spring")');
      }
      return { id: s.id, kind: s.kind, ...at, rotation, stiffness };
    });
    const torques = (m.torques ?? []).map((t, i): ResolvedTorque => {
      const base = pointer('torques', i);
      const at = this.point(t.shaft, t.at, base);
      return { id: t.id, ...at, torque: this.pointTorque(t, base), caseIndex: this.caseOf(t.case, base) };
    });
    const distributed = (m.distributedTorques ?? []).map((d, i): ResolvedDistributed => {
      const base = pointer('distributedTorques', i);
      const from = this.point(d.shaft, d.from, base, 'from');
      const to = this.point(d.shaft, d.to, base, 'to');
      if (from.z > to.z) this.issue('SN_RANGE_ORDER', base + '/to', '"to" must not be before "from"');
      return {
        id: d.id,
        shaft: from.shaft,
        from: from.z,
        to: to.z,
        start: this.q(d.start, 'torquePerLength', base + '/start'),
        end: this.q(d.end, 'torquePerLength', base + '/end'),
        caseIndex: this.caseOf(d.case, base),
      };
    });
    const meshes = (m.gearMeshes ?? []).map((g, i): ResolvedMesh => {
      const base = pointer('gearMeshes', i);
      const module = g.module === undefined ? null : this.positive(g.module, 'length', base + '/module');
      const end = (e: GearEnd, key: 'a' | 'b') => {
        const p = this.point(e.shaft, e.at, `${base}/${key}`);
        let radius = 1;
        if ((e.radius === undefined) === (e.teeth === undefined)) {
          this.issue('SN_GEAR_SIZE', `${base}/${key}`, 'give either a pitch "radius" or a number of "teeth" (with the mesh "module")');
        } else if (e.radius !== undefined) {
          radius = this.positive(e.radius, 'length', `${base}/${key}/radius`);
        } else if (module === null) {
          if (g.module === undefined) this.issue('SN_GEAR_SIZE', base + '/module', `"teeth" on gear ${key} needs the mesh "module"`);
        } else {
          radius = this.derived(((e.teeth as number) * module) / 2, 'length', `${base}/${key}/teeth`, 'the pitch radius teeth × module / 2 =');
        }
        return { ...p, radius };
      };
      return {
        id: g.id,
        a: end(g.a, 'a'),
        b: end(g.b, 'b'),
        sense: g.sense === 'same' ? 1 : -1,
        stiffness: g.stiffness === undefined ? null : this.positive(g.stiffness, 'linearStiffness', base + '/stiffness'),
        offset: g.offset === undefined ? 0 : this.q(g.offset, 'length', base + '/offset'),
      };
    });
    const couplings = (m.couplings ?? []).map((c, i): ResolvedCoupling => {
      const base = pointer('couplings', i);
      return {
        id: c.id,
        a: this.point(c.a.shaft, c.a.at, base + '/a'),
        b: this.point(c.b.shaft, c.b.at, base + '/b'),
        stiffness: c.stiffness === undefined ? null : this.positive(c.stiffness, 'rotationalStiffness', base + '/stiffness'),
        misfit: c.misfit === undefined ? 0 : this.q(c.misfit, 'angle', base + '/misfit'),
      };
    });
    const discs = (m.discs ?? []).map((d, i): ResolvedDisc => {
      const base = pointer('discs', i);
      return { id: d.id, ...this.point(d.shaft, d.at, base), inertia: this.nonNegative(d.inertia, 'massInertia', base + '/inertia') };
    });
    const raisers = (m.stressRaisers ?? []).map((r, i) => this.raiser(r, i));
    const limits = {
      twistRate: m.limits?.twistRate === undefined ? null : this.positive(m.limits.twistRate, 'twistRate', '/limits/twistRate'),
      totalTwist: m.limits?.totalTwist === undefined ? null : this.positive(m.limits.totalTwist, 'angle', '/limits/totalTwist'),
    };
    const combinations = this.combinations(torques, distributed);
    const dynamics = this.dynamics(discs);
    if (this.issues.length > 0) throw new ModelError(this.issues);
    const loadCases = (m.loadCases ?? []).map((c) => (c.name === undefined ? { id: c.id } : { id: c.id, name: c.name }));
    return { name: m.name, shafts: this.shafts, supports, torques, distributed, meshes, couplings, discs, raisers, warnings: this.warnings, limits, loadCases, combinations, combinationsGiven: m.loadCases !== undefined && m.combinations !== undefined, dynamics };
  }

  /**
   * The model's `dynamics` (contract, "Dynamics"), every issue at its pointer; null without it.
   * Warns where inertia the engineer may expect is left out (a material without density, a
   * non-circular section without its polar moment).
   */
  private dynamics(discs: readonly ResolvedDisc[]): ResolvedDynamics | null {
    const d = this.m.dynamics;
    if (d === undefined) return null;
    const base = '/dynamics';
    let modes = DEFAULT_MODES;
    if (d.modes !== undefined) {
      if (!(Number.isInteger(d.modes) && d.modes >= 1 && d.modes <= MAX_MODES)) {
        this.issue('SN_OUT_OF_RANGE', base + '/modes', `"modes" must be a whole number from 1 to ${MAX_MODES} (got ${String(d.modes)})`);
      } else modes = d.modes;
    }
    const maxFrequency = d.maxFrequency === undefined ? null : this.positive(d.maxFrequency, 'angularSpeed', base + '/maxFrequency');
    let speed: ResolvedDynamics['speed'] = null;
    if (d.speed !== undefined) {
      const sp = base + '/speed';
      const shaft = this.shaftIndex.get(d.speed.shaft);
      if (shaft === undefined) this.issue('SN_UNRESOLVED', sp + '/shaft', `no shaft with id "${d.speed.shaft}"`);
      const min = this.positive(d.speed.min, 'angularSpeed', sp + '/min');
      const max = this.positive(d.speed.max, 'angularSpeed', sp + '/max');
      if (min > max) this.issue('SN_RANGE_ORDER', sp + '/max', '"max" must not be below "min"');
      speed = { shaft: shaft ?? -1, min, max };
    }
    const orders = (d.orders ?? []).map((o, k) => {
      if (!(Number.isFinite(o) && o > 0 && o <= MAX_ORDER)) {
        this.issue(Number.isFinite(o) && o <= 0 ? 'SN_NOT_POSITIVE' : 'SN_OUT_OF_RANGE', `${base}/orders/${k}`, `an order is a number of cycles per revolution, greater than zero and at most ${MAX_ORDER} (got ${String(o)})`);
      }
      return o;
    });
    if (d.orders !== undefined && d.speed === undefined) this.issue('SN_SCHEMA', base + '/speed', '"orders" are per revolution of the reference shaft: give "speed" (shaft, min, max)');
    const fraction = (v: number | undefined, key: string, what: string, fallback: number): number => {
      if (v === undefined) return fallback;
      if (!(Number.isFinite(v) && v >= 0 && v < 1)) this.issue('SN_OUT_OF_RANGE', `${base}/${key}`, `${what} must lie from 0 up to (not including) 1 (got ${String(v)})`);
      return v;
    };
    const margin = fraction(d.margin, 'margin', '"margin" (a fraction: 0.1 is ±10 %)', DEFAULT_MARGIN);
    const damping = fraction(d.damping, 'damping', 'the damping ratio ζ', 0);
    const seen = new Map<string, number>();
    (d.excitations ?? []).forEach((e, i) => {
      const first = seen.get(e.id);
      if (first === undefined) seen.set(e.id, i);
      else this.issue('SN_DUPLICATE_ID', pointer('dynamics', 'excitations', i, 'id'), `id "${e.id}" is already used by ${pointer('dynamics', 'excitations', first)}`);
    });
    const excitations = (d.excitations ?? []).map((e, i): ResolvedExcitation => {
      const ep = pointer('dynamics', 'excitations', i);
      const at = this.point(e.shaft, e.at, ep);
      const amplitude = this.q(e.amplitude, 'torque', ep + '/amplitude');
      if (!(Number.isFinite(e.order) && e.order > 0 && e.order <= MAX_ORDER)) {
        this.issue(Number.isFinite(e.order) && e.order <= 0 ? 'SN_NOT_POSITIVE' : 'SN_OUT_OF_RANGE', ep + '/order', `an order is greater than zero and at most ${MAX_ORDER} (got ${String(e.order)})`);
      }
      return { id: e.id, ...at, amplitude, order: e.order };
    });
    if (excitations.length > 0 && d.speed === undefined) this.issue('SN_SCHEMA', base + '/speed', 'excitations run at orders of the reference speed: give "speed" (shaft, min, max)');
    // Inertia left out: say where, once per material or section.
    const noDensity = new Set<string>();
    const noPolar = new Set<string>();
    let inertial = discs.some((x) => x.inertia > 0);
    for (const shaft of this.shafts) {
      for (const seg of shaft.segments) {
        if ((seg.rhoIp ?? 0) > 0) inertial = true;
        for (const l of seg.layers) if (this.materials.get(l.materialId)?.density === null) noDensity.add(l.materialId);
        if (seg.shape && seg.shape.polarMoment === null) noPolar.add(seg.sectionId);
      }
    }
    if (noDensity.size > 0) {
      this.warnings.push({ code: 'SN_DYN_NO_DENSITY', message: `material${noDensity.size === 1 ? '' : 's'} ${[...noDensity].map((x) => `"${x}"`).join(', ')} give${noDensity.size === 1 ? 's' : ''} no density: the shafts' own inertia there is left out of the dynamics` });
    }
    if (noPolar.size > 0) {
      this.warnings.push({ code: 'SN_DYN_NO_DENSITY', message: `section${noPolar.size === 1 ? '' : 's'} ${[...noPolar].map((x) => `"${x}"`).join(', ')} give${noPolar.size === 1 ? 's' : ''} no polarMoment: their inertia is left out of the dynamics` });
    }
    if (!inertial && this.issues.length === 0) {
      this.issue('SN_DYN_NO_INERTIA', base, 'the model has no inertia: give discs, or a density on the materials of its shafts, to have natural frequencies');
    }
    return { modes, maxFrequency, speed, orders, margin, damping, excitations };
  }

  /** The index of a load's case: −1 without load cases; every load names one when they exist. */
  private caseOf(name: string | undefined, base: string): number {
    const cases = this.m.loadCases;
    if (cases === undefined) {
      if (name !== undefined) this.issue('SN_LOAD_CASE', base + '/case', `"case" needs "loadCases" in the model (none are defined)`);
      return -1;
    }
    if (name === undefined) {
      this.issue('SN_LOAD_CASE', base + '/case', 'the model has load cases: every torque and distributed torque names its "case"');
      return -1;
    }
    const k = cases.findIndex((c) => c.id === name);
    if (k < 0) this.issue('SN_UNRESOLVED', base + '/case', `no load case "${name}"`);
    return k;
  }

  /** The combinations to solve: as given, or each load case alone (factor 1); none without load cases. */
  private combinations(torques: readonly ResolvedTorque[], distributed: readonly ResolvedDistributed[]): ResolvedCombination[] {
    const cases = this.m.loadCases;
    if (cases === undefined) {
      if (this.m.combinations !== undefined) this.issue('SN_LOAD_CASE', '/combinations', '"combinations" need "loadCases" in the model');
      return [];
    }
    const used = new Set<number>([...torques.map((t) => t.caseIndex), ...distributed.map((d) => d.caseIndex)]);
    // A load whose case is missing or unknown is named already: which case it meant is not known.
    const allNamed = !used.has(-1);
    cases.forEach((c, k) => {
      // A repeated id is named as such (uniqueIds), not again as a case with no loads.
      if (allNamed && !used.has(k) && cases.findIndex((d) => d.id === c.id) === k) this.issue('SN_LOAD_CASE', pointer('loadCases', k), `load case "${c.id}" has no loads: give it a torque or a distributed torque, or remove it`);
    });
    const given = this.m.combinations;
    if (given === undefined) return cases.map((c, k) => ({ id: c.id, ...(c.name === undefined ? {} : { name: c.name }), factors: cases.map((_, j) => (j === k ? 1 : 0)) }));
    const largest = largestLoads(cases.length, torques, distributed);
    return given.map((cmb, i) => {
      const factors = cases.map(() => 0);
      for (const [caseId, f] of Object.entries(cmb.factors)) {
        const ptr = pointer('combinations', i, 'factors', caseId);
        const k = cases.findIndex((c) => c.id === caseId);
        if (k < 0) this.issue('SN_UNRESOLVED', ptr, `no load case "${caseId}"`);
        else if (!Number.isFinite(f)) this.issue('SN_NOT_FINITE', ptr, `a factor must be a finite number (got ${String(f)})`);
        else {
          // A factored load beyond its physical range would overflow the solve: refused here, naming the factor.
          const over = factorProblem(f, largest[k]);
          if (over) this.issue('SN_OUT_OF_RANGE', ptr, over);
          else factors[k] = f;
        }
      }
      return { id: cmb.id, ...(cmb.name === undefined ? {} : { name: cmb.name }), factors };
    });
  }

  private issue(code: ErrorCode, ptr: string, message: string): void {
    this.issues.push({ code, pointer: ptr, message });
  }

  private uniqueIds(list: string, items: ReadonlyArray<{ id: string }>): void {
    const seen = new Map<string, number>();
    items.forEach((item, i) => {
      const first = seen.get(item.id);
      if (first !== undefined) {
        this.issue('SN_DUPLICATE_ID', pointer(list, i, 'id'), `id "${item.id}" is already used by ${pointer(list, first)}`);
      } else seen.set(item.id, i);
    });
  }

  /** Reads a quantity; on a problem records it and answers NaN (never reaches the solver). */
  private q(value: unknown, kind: QuantityKind, ptr: string): number {
    const r = readQuantity(value, kind);
    if (isProblem(r)) {
      this.issue(r.code, ptr, r.message);
      return Number.NaN;
    }
    return r;
  }

  /** A number worked out from others, held to the physical range of its kind like a typed one (NaN if not). */
  private derived(si: number, kind: QuantityKind, ptr: string, what: string): number {
    const problem = rangeProblem(si, kind, undefined, what);
    if (problem === null) return si;
    this.issue(problem.code, ptr, problem.message);
    return Number.NaN;
  }

  private positive(value: unknown, kind: QuantityKind, ptr: string): number {
    const v = this.q(value, kind, ptr);
    if (v <= 0) this.issue('SN_NOT_POSITIVE', ptr, `must be greater than zero (got ${String(value)})`);
    return v;
  }

  private nonNegative(value: unknown, kind: QuantityKind, ptr: string): number {
    const v = this.q(value, kind, ptr);
    if (v < 0) this.issue('SN_NOT_POSITIVE', ptr, `must not be negative (got ${String(value)})`);
    return v;
  }

  private material(mat: ModelT['materials'][number], i: number): void {
    const base = pointer('materials', i);
    let G = Number.NaN;
    const hasG = mat.G !== undefined;
    const hasE = mat.E !== undefined || mat.nu !== undefined;
    if (hasG && hasE) {
      this.issue('SN_MATERIAL', base, 'give either G, or E and nu, not both');
    } else if (hasG) {
      G = this.positive(mat.G, 'stress', base + '/G');
    } else if (mat.E !== undefined && mat.nu !== undefined) {
      const E = this.positive(mat.E, 'stress', base + '/E');
      if (!(mat.nu > -1 && mat.nu < 0.5)) this.issue('SN_OUT_OF_RANGE', base + '/nu', "Poisson's ratio must lie in (-1, 0.5)");
      else if (E > 0) {
        // G = E / (2(1 + nu)) grows without bound as nu nears −1: name nu then, else E.
        G = this.derived(E / (2 * (1 + mat.nu)), 'stress', base + (mat.nu < -0.5 ? '/nu' : '/E'), 'the shear modulus G = E / (2(1 + nu)) =');
      }
    } else {
      this.issue('SN_MATERIAL', mat.E === undefined ? base + '/E' : base + '/nu', 'give the shear modulus G, or both E and nu');
    }
    const optional = (v: unknown, key: string) => (v === undefined ? null : this.positive(v, 'stress', `${base}/${key}`));
    const density = mat.density === undefined ? null : this.positive(mat.density, 'density', base + '/density');
    this.materials.set(mat.id, {
      id: mat.id,
      G,
      allowableShear: optional(mat.allowableShear, 'allowableShear'),
      shearYield: optional(mat.shearYield, 'shearYield'),
      density: density !== null && density > 0 ? density : null,
    });
  }

  private shaft(s: ModelT['shafts'][number], i: number): ResolvedShaft {
    const base = pointer('shafts', i);
    if (!this.shaftIndex.has(s.id)) this.shaftIndex.set(s.id, i);
    // Segment ends by compensated (Neumaier) summation: correctly rounded, so a point typed at a
    // segment end ("0.999999") meets it even after a million segments of 1e-6 m.
    let z = 0;
    let carry = 0;
    const segments = s.segments.map((seg, j): ResolvedSegment => {
      const sp = `${base}/segments/${j}`;
      const length = this.positive(seg.length, 'length', sp + '/length');
      const z0 = z + carry;
      const t = z + length;
      carry += Math.abs(z) >= Math.abs(length) ? z - t + length : length - t + z;
      z = t;
      const si = this.sectionIndex.get(seg.section);
      let layers: SectionLayer[] = [];
      if (si === undefined) {
        this.issue('SN_UNRESOLVED', sp + '/section', `no section with id "${seg.section}"`);
      } else {
        layers = this.sectionLayers(si, seg.material, sp);
      }
      const props = si === undefined ? undefined : this.shapeProps.get(si);
      const shape = props === undefined ? undefined : { polarMoment: props.polarMoment, torsionalModulus: props.torsionalModulus, plasticModulus: props.plasticModulus };
      const taper = seg.sectionEnd === undefined ? undefined : this.taper(seg.sectionEnd, si, layers, seg.material, length, sp);
      const rigidity = layers.reduce((sum, l) => sum + l.G * l.J, 0);
      const shearFactor = layers.reduce((mx, l) => Math.max(mx, l.G * l.rOuter), 0) / rigidity;
      if (layers.length > 0 && length > 0 && layers.every((l) => l.G > 0 && l.G < Infinity && l.rOuter < Infinity)) {
        // Sizes far outside any machine (a diameter of 1e-300 m) underflow or overflow G·J and G·J/L.
        if (!(rigidity > MIN_NORMAL && rigidity < Infinity && shearFactor < Infinity)) {
          this.issue('SN_OUT_OF_RANGE', sp + '/section', `the torsional rigidity G·J of section "${seg.section}" (${rigidity} N·m²) is out of numeric range: check the units of its diameters and modulus`);
        } else if (!(rigidity / length < Infinity) || !(rigidity / length > MIN_NORMAL)) {
          this.issue('SN_OUT_OF_RANGE', sp + '/length', `a length of ${length} m makes the stiffness G·J/L out of numeric range: check its unit`);
        }
      }
      // ρ·Ip per length (dynamics): rings by their own polar moments; a non-circular section by its polarMoment.
      const density = (l: SectionLayer) => this.materials.get(l.materialId)?.density ?? 0;
      const rhoIp = props === undefined ? layers.reduce((sum, l) => sum + density(l) * l.J, 0) : layers.length === 1 ? density(layers[0]) * (props.polarMoment ?? 0) : 0;
      const out: ResolvedSegment = { index: j, sectionId: seg.section, z0, z1: z + carry, layers, rigidity, shearFactor, rhoIp };
      if (shape) return { ...out, shape };
      return taper ? { ...out, taper } : out;
    });
    const length = z + carry;
    for (let j = 0; j < segments.length && Number.isFinite(length); j++) {
      const h = segments[j].z1 - segments[j].z0;
      if (h > 0 && h <= MIN_SEGMENT_FRACTION * length) {
        this.issue(
          'SN_OUT_OF_RANGE',
          `${base}/segments/${j}/length`,
          `a segment of ${h} m on a shaft ${length} m long is shorter than ${MIN_SEGMENT_FRACTION} of the shaft's length: its ends cannot be told apart (check the units, or model the shaft in parts)`,
        );
      }
    }
    return { id: s.id, name: s.name, length, segments };
  }

  private readonly sectionCache = new Map<string, SectionLayer[]>();

  /** The layers of section `si` as used by one segment (solid/hollow take the segment's material). */
  private sectionLayers(si: number, segMaterial: string | undefined, segPtr: string): SectionLayer[] {
    const sec = this.m.sections[si];
    const sp = pointer('sections', si);
    const key = `${si}\u0000${sec.shape === 'layered' ? '' : segMaterial ?? ''}`;
    const cached = this.sectionCache.get(key);
    if (cached) return cached;
    if (sec.shape !== 'solid' && sec.shape !== 'hollow' && sec.shape !== 'layered') {
      const layers = this.shapeLayers(si, segMaterial, segPtr);
      this.sectionCache.set(key, layers);
      return layers;
    }
    const before = this.issues.length;
    for (const f of ['width', 'height', 'wall', 'walls', 'polarMoment', 'torsionConstant', 'torsionalModulus', 'plasticTorqueModulus'] as const) {
      if (sec[f] !== undefined) this.issue('SN_SCHEMA', `${sp}/${f}`, `a ${sec.shape} section takes no ${f}`);
    }
    const lookup = (id: string, ptr: string): ResolvedMaterial | null => {
      const mat = this.materials.get(id);
      if (!mat) this.issue('SN_UNRESOLVED', ptr, `no material with id "${id}"`);
      return mat ?? null;
    };
    let rings: Array<{ rInner: number; rOuter: number; material: ResolvedMaterial | null }> = [];
    const di = (ptr: string) => (sec.di === undefined ? 0 : this.nonNegative(sec.di, 'length', ptr));
    if (sec.shape === 'layered') {
      if (!sec.layers) {
        this.issue('SN_SCHEMA', sp + '/layers', 'a layered section needs layers (inside out)');
      } else {
        if (segMaterial !== undefined) {
          this.issue('SN_MATERIAL', segPtr + '/material', 'a layered section names the material of each layer; leave the segment material out');
        }
        let r = di(sp + '/di') / 2;
        sec.layers.forEach((layer, k) => {
          const lp = `${sp}/layers/${k}`;
          const rOuter = this.positive(layer.d, 'length', lp + '/d') / 2;
          // A size already refused (NaN) is not compared again: one issue for one mistake.
          if (Number.isFinite(rOuter) && Number.isFinite(r) && !(rOuter > r)) {
            this.issue('SN_SECTION_GEOMETRY', lp + '/d', 'each layer must be larger than the bore or the layer inside it');
          }
          rings.push({ rInner: r, rOuter, material: lookup(layer.material, lp + '/material') });
          r = rOuter;
        });
      }
    } else {
      if (sec.layers !== undefined) this.issue('SN_SCHEMA', sp + '/layers', `a ${sec.shape} section takes no layers`);
      if (sec.d === undefined) this.issue('SN_SCHEMA', sp + '/d', `a ${sec.shape} section needs an outer diameter d`);
      const rOuter = sec.d === undefined ? Number.NaN : this.positive(sec.d, 'length', sp + '/d') / 2;
      let rInner = 0;
      if (sec.shape === 'hollow') {
        if (sec.di === undefined) this.issue('SN_SCHEMA', sp + '/di', 'a hollow section needs an inner diameter di');
        else {
          rInner = di(sp + '/di') / 2;
          if (Number.isFinite(rInner) && Number.isFinite(rOuter) && !(rInner < rOuter)) {
            this.issue('SN_SECTION_GEOMETRY', sp + '/di', 'the bore di must be smaller than d');
          }
        }
      } else if (sec.di !== undefined) {
        this.issue('SN_SCHEMA', sp + '/di', 'a solid section has no bore (use shape "hollow")');
      }
      let material: ResolvedMaterial | null = null;
      if (segMaterial === undefined) this.issue('SN_MATERIAL', segPtr + '/material', `a ${sec.shape} section needs the segment's material`);
      else material = lookup(segMaterial, segPtr + '/material');
      rings = [{ rInner, rOuter, material }];
    }
    const ok = this.issues.length === before && rings.every((r) => r.material !== null);
    const layers = ok
      ? buildSectionLayers(rings.map((r) => ({ ...r, material: r.material as ResolvedMaterial })))
      : [];
    // Keyed by section (and material for solid/hollow): each section's errors are reported once.
    this.sectionCache.set(key, layers);
    return layers;
  }

  /** A tapered segment from `section` (layers given) to `sectionEnd`; undefined after an issue. */
  private taper(
    endId: string,
    si: number | undefined,
    layers: readonly SectionLayer[],
    material: string | undefined,
    length: number,
    sp: string,
  ): ResolvedTaper | undefined {
    const ei = this.sectionIndex.get(endId);
    if (ei === undefined) {
      this.issue('SN_UNRESOLVED', sp + '/sectionEnd', `no section with id "${endId}"`);
      return undefined;
    }
    // Without the start section or the material the segment is refused already.
    if (si === undefined || material === undefined) return undefined;
    const a = this.m.sections[si].shape;
    const b = this.m.sections[ei].shape;
    if (!((a === 'solid' && b === 'solid') || (a === 'hollow' && b === 'hollow'))) {
      this.issue('SN_SECTION_GEOMETRY', sp + '/sectionEnd', `a taper joins two solid or two hollow sections; "${this.m.sections[si].id}" is ${a} and "${endId}" is ${b}`);
      return undefined;
    }
    const layersEnd = this.sectionLayers(ei, material, sp);
    if (layers.length !== 1 || layersEnd.length !== 1 || !(length > 0)) return undefined;
    const input: TaperInput = {
      length,
      dA: 2 * layers[0].rOuter,
      dB: 2 * layersEnd[0].rOuter,
      diA: 2 * layers[0].rInner,
      diB: 2 * layersEnd[0].rInner,
    };
    const problems = taperProblems(input);
    for (const p of problems) this.issue('SN_SECTION_GEOMETRY', sp + '/sectionEnd', `taper from "${this.m.sections[si].id}" to "${endId}": ${p.message}`);
    if (problems.length > 0) return undefined;
    const G = layers[0].G;
    return { input, G, stiffness: taperStiffness(input, G), sectionEndId: endId, layersEnd, density: this.materials.get(layers[0].materialId)?.density ?? 0 };
  }

  /** The layer of a non-circular section: its effective J and outer radius J/Wt (τmax = G·r·θ). */
  private shapeLayers(si: number, segMaterial: string | undefined, segPtr: string): SectionLayer[] {
    const sec = this.m.sections[si];
    const sp = pointer('sections', si);
    const before = this.issues.length;
    const allowed: Record<string, readonly string[]> = {
      rectangle: ['width', 'height'],
      ellipse: ['width', 'height'],
      rectangularTube: ['width', 'height', 'wall'],
      thinOpen: ['walls', 'polarMoment'],
      custom: ['torsionConstant', 'torsionalModulus', 'polarMoment', 'plasticTorqueModulus'],
    };
    const fields = allowed[sec.shape];
    for (const f of ['d', 'di', 'layers', 'width', 'height', 'wall', 'walls', 'polarMoment', 'torsionConstant', 'torsionalModulus', 'plasticTorqueModulus'] as const) {
      if (sec[f] !== undefined && !fields.includes(f)) this.issue('SN_SCHEMA', `${sp}/${f}`, `a ${sec.shape} section takes no ${f}`);
    }
    const need = (f: 'width' | 'height' | 'wall' | 'torsionConstant' | 'torsionalModulus', kind: QuantityKind): number => {
      if (sec[f] === undefined) {
        this.issue('SN_SCHEMA', `${sp}/${f}`, `a ${sec.shape} section needs ${f}`);
        return Number.NaN;
      }
      return this.positive(sec[f], kind, `${sp}/${f}`);
    };
    const opt = (f: 'polarMoment' | 'plasticTorqueModulus', kind: QuantityKind): number | undefined =>
      sec[f] === undefined ? undefined : this.positive(sec[f], kind, `${sp}/${f}`);
    let input: ShapeInput;
    switch (sec.shape) {
      case 'rectangle':
      case 'ellipse':
        input = { shape: sec.shape, width: need('width', 'length'), height: need('height', 'length') };
        break;
      case 'rectangularTube':
        input = { shape: 'rectangularTube', width: need('width', 'length'), height: need('height', 'length'), wall: need('wall', 'length') };
        break;
      case 'thinOpen':
        if (sec.walls === undefined) this.issue('SN_SCHEMA', sp + '/walls', 'a thinOpen section needs walls');
        input = {
          shape: 'thinOpen',
          walls: (sec.walls ?? []).map((w, k) => ({
            length: this.positive(w.length, 'length', `${sp}/walls/${k}/length`),
            thickness: this.positive(w.thickness, 'length', `${sp}/walls/${k}/thickness`),
          })),
          polarMoment: opt('polarMoment', 'areaMoment'),
        };
        break;
      default:
        input = {
          shape: 'custom',
          torsionConstant: need('torsionConstant', 'areaMoment'),
          torsionalModulus: need('torsionalModulus', 'sectionModulus'),
          polarMoment: opt('polarMoment', 'areaMoment'),
          plasticTorqueModulus: opt('plasticTorqueModulus', 'sectionModulus'),
        };
    }
    if (this.issues.length === before) {
      // Sizes are positive by now: what is left is geometry (a wall too thick for its tube).
      for (const p of shapeProblems(input)) this.issue('SN_SECTION_GEOMETRY', `${sp}/${p.field}`, p.message);
    }
    let material: ResolvedMaterial | null = null;
    if (segMaterial === undefined) this.issue('SN_MATERIAL', segPtr + '/material', `a ${sec.shape} section needs the segment's material`);
    else {
      material = this.materials.get(segMaterial) ?? null;
      if (!material) this.issue('SN_UNRESOLVED', segPtr + '/material', `no material with id "${segMaterial}"`);
    }
    if (this.issues.length !== before || material === null) return [];
    const props = sectionProperties(input);
    if (!this.shapeProps.has(si)) {
      for (const w of props.warnings) {
        const where = w.field === null ? '' : ` (${sp}/${w.field})`;
        this.warnings.push(
          w.kind === 'thinWallStretched'
            ? { code: 'SN_THIN_WALL', message: `section "${sec.id}"${where}: ${w.message}` }
            : { code: 'SN_OPEN_SECTION', message: `section "${sec.id}": ${w.message}` },
        );
      }
    }
    this.shapeProps.set(si, props);
    const J = props.torsionConstant;
    return [
      {
        materialId: material.id,
        G: material.G,
        rInner: 0,
        rOuter: J / props.torsionalModulus,
        J,
        allowableShear: material.allowableShear,
        shearYield: material.shearYield,
      },
    ];
  }

  /** A stress raiser: where it sits, its factor, and the sides whose nominal stress it multiplies. */
  private raiser(r: NonNullable<ModelT['stressRaisers']>[number], i: number): ResolvedRaiser {
    const base = pointer('stressRaisers', i);
    const before = this.issues.length;
    const at = this.point(r.shaft, r.at, base);
    const out = { id: r.id, kind: r.kind, ...at, ...(r.note === undefined ? {} : { note: r.note }) };
    const shaft = at.shaft >= 0 ? this.shafts[at.shaft] : undefined;
    // A place already refused (off the shaft, no such shaft) is not judged again: one issue for one mistake.
    if (!shaft || this.issues.length > before || !Number.isFinite(shaft.length)) return { ...out, factor: 1, sides: [] };
    const tol = 1e-12 * shaft.length;
    // The segment boundary at z (j: the segment that ends there), or −1.
    const boundary = shaft.segments.findIndex((s, j) => j < shaft.segments.length - 1 && Math.abs(s.z1 - at.z) <= tol);
    if (r.kind === 'factor') {
      if (r.fillet !== undefined) this.issue('SN_SCHEMA', base + '/fillet', 'a "factor" raiser takes no fillet (give "factor")');
      if (r.factor === undefined) {
        this.issue('SN_SCHEMA', base + '/factor', 'a "factor" raiser needs its factor (≥ 1)');
        return { ...out, factor: 1, sides: [] };
      }
      if (!(Number.isFinite(r.factor) && r.factor >= 1)) {
        this.issue('SN_OUT_OF_RANGE', base + '/factor', `a stress concentration factor must be at least 1 (got ${r.factor})`);
      }
      let sides: Array<{ segment: number; left: boolean }>;
      if (boundary >= 0) sides = [{ segment: boundary, left: true }, { segment: boundary + 1, left: false }];
      else {
        let j = shaft.segments.findIndex((s) => at.z <= s.z1 + tol);
        if (j < 0) j = shaft.segments.length - 1;
        sides = at.z <= tol ? [{ segment: 0, left: false }] : Math.abs(at.z - shaft.length) <= tol ? [{ segment: j, left: true }] : [{ segment: j, left: true }, { segment: j, left: false }];
      }
      return { ...out, factor: r.factor, sides };
    }
    if (r.factor !== undefined) this.issue('SN_SCHEMA', base + '/factor', 'a shoulder takes its factor from the fit: give "fillet", not "factor"');
    if (r.fillet === undefined) {
      this.issue('SN_SCHEMA', base + '/fillet', 'a shoulder needs its fillet radius');
      return { ...out, factor: 1, sides: [] };
    }
    const fillet = this.positive(r.fillet, 'length', base + '/fillet');
    if (boundary < 0) {
      this.issue('SN_RAISER_PLACE', base + '/at', `a shoulder sits where the diameter steps, at a segment boundary of shaft "${shaft.id}"; ${at.z} m is not one`);
      return { ...out, factor: 1, sides: [] };
    }
    const left = shaft.segments[boundary];
    const right = shaft.segments[boundary + 1];
    const diameter = (s: ResolvedSegment, atEnd: boolean): number => {
      if (s.shape || s.layers.length === 0) return Number.NaN;
      if (s.taper) return atEnd ? s.taper.input.dB : s.taper.input.dA;
      return 2 * s.layers[s.layers.length - 1].rOuter;
    };
    const dl = diameter(left, true);
    const dr = diameter(right, false);
    if (left.layers.length === 0 || right.layers.length === 0) return { ...out, factor: 1, sides: [] };
    if (!(Number.isFinite(dl) && Number.isFinite(dr))) {
      this.issue('SN_RAISER_PLACE', base + '/at', 'a shoulder joins two round sections');
      return { ...out, factor: 1, sides: [] };
    }
    if (dl === dr) {
      this.issue('SN_RAISER_PLACE', base + '/at', `no diameter step at ${at.z} m on shaft "${shaft.id}" (${dl} m on both sides): a shoulder needs one`);
      return { ...out, factor: 1, sides: [] };
    }
    if (!Number.isFinite(fillet)) return { ...out, factor: 1, sides: [] };
    const input = { D: Math.max(dl, dr), d: Math.min(dl, dr), r: fillet };
    const problem = shoulderRangeProblem(input);
    if (problem) {
      this.issue(problem.field === 'fillet' ? 'SN_OUT_OF_RANGE' : 'SN_RAISER_PLACE', base + (problem.field === 'fillet' ? '/fillet' : '/at'), problem.message);
      return { ...out, factor: 1, sides: [] };
    }
    return { ...out, factor: shoulderFactor(input), sides: [dl < dr ? { segment: boundary, left: true } : { segment: boundary + 1, left: false }] };
  }

  private point(shaftId: string, at: unknown, base: string, key = 'at'): ShaftPoint {
    const shaft = this.shaftIndex.get(shaftId);
    const z = this.q(at, 'length', `${base}/${key}`);
    if (shaft === undefined) {
      this.issue('SN_UNRESOLVED', base + '/shaft', `no shaft with id "${shaftId}"`);
      return { shaft: -1, z };
    }
    const length = this.shafts[shaft].length;
    if (Number.isFinite(z) && Number.isFinite(length)) {
      // Points typed in other units than the segment lengths can miss an end by round-off.
      const tol = 1e-12 * length;
      if (z < -tol || z > length + tol) {
        this.issue('SN_OFF_SHAFT', `${base}/${key}`, `${z} m lies outside shaft "${shaftId}" (0 to ${length} m)`);
      }
      return { shaft, z: Math.min(Math.max(z, 0), length) };
    }
    return { shaft, z };
  }

  private pointTorque(t: NonNullable<ModelT['torques']>[number], base: string): number {
    const byTorque = t.torque !== undefined;
    const byPower = t.power !== undefined || t.speed !== undefined;
    if (byTorque === byPower) {
      this.issue('SN_TORQUE_FORM', base, 'give either "torque", or "power" with "speed"');
      return 0;
    }
    if (byTorque) return this.q(t.torque, 'torque', base + '/torque');
    if (t.power === undefined || t.speed === undefined) {
      this.issue('SN_TORQUE_FORM', base + (t.power === undefined ? '/power' : '/speed'), '"power" and "speed" go together');
      return 0;
    }
    const power = this.q(t.power, 'power', base + '/power');
    const speed = this.q(t.speed, 'angularSpeed', base + '/speed');
    if (!(speed > 0)) {
      if (Number.isFinite(speed)) {
        this.issue('SN_NOT_POSITIVE', base + '/speed', 'speed must be greater than zero; give the sense of the torque by the sign of "power"');
      }
      return 0;
    }
    // P = T·ω, so T = P/ω: the sign of the power gives the sense of the torque about +z.
    return Number.isFinite(power) ? this.derived(power / speed, 'torque', base + '/power', 'the torque power / speed =') : 0;
  }
}

/** Per load case: its largest |point torque| (N·m) and |distributed torque| (N·m/m), with the load's id. */
function largestLoads(
  cases: number,
  torques: readonly ResolvedTorque[],
  distributed: readonly ResolvedDistributed[],
): Array<{ torque: number; torqueId: string; perLength: number; perLengthId: string }> {
  const out = Array.from({ length: cases }, () => ({ torque: 0, torqueId: '', perLength: 0, perLengthId: '' }));
  for (const t of torques) {
    const x = out[t.caseIndex];
    if (x && Math.abs(t.torque) > x.torque) Object.assign(x, { torque: Math.abs(t.torque), torqueId: t.id });
  }
  for (const d of distributed) {
    const x = out[d.caseIndex];
    const t = Math.max(Math.abs(d.start), Math.abs(d.end));
    if (x && t > x.perLength) Object.assign(x, { perLength: t, perLengthId: d.id });
  }
  return out;
}

/** The problem of factor `f` on a case whose largest loads are `big`: a factored load beyond its kind's range, or null. */
function factorProblem(f: number, big: ReturnType<typeof largestLoads>[number] | undefined): string | null {
  // Only the large side: a factored load below the range's floor is small, not an overflow.
  if (!big) return null;
  const t = Math.abs(f * big.torque) > QUANTITY_RANGE.torque.max ? rangeProblem(f * big.torque, 'torque', undefined, `times the torque "${big.torqueId}" it makes`) : null;
  if (t) return `the factor ${String(f)} ${t.message}`;
  const size = Math.abs(f * big.perLength);
  const d = size > QUANTITY_RANGE.torquePerLength.max ? rangeProblem(f * big.perLength, 'torquePerLength', undefined, `times the distributed torque "${big.perLengthId}" it makes`) : null;
  return d ? `the factor ${String(f)} ${d.message}` : null;
}
