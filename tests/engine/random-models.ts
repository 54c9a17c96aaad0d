/**
 * Seeded random shaft systems for the engine's property tests, and small
 * readers that take a model apart again (in SI) so a test can compute what the
 * solution must satisfy without trusting the engine.
 *
 * Every generated system is valid and grounded: each group of shafts joined by
 * meshes and couplings carries at least one fixed or spring support, no two
 * rigid constraints share a station (so no rigid-only loop and no clash with a
 * fixed support), and stations keep a minimum spacing so the stiffness matrix
 * stays well conditioned. Quantities are written as SI numbers; `withUnitStrings`
 * rewrites the same model with random units.
 */
import type {
  Coupling,
  DistributedTorque,
  GearMesh,
  Material,
  Model,
  PointTorque,
  Quantity,
  Section,
  Shaft,
  Support,
} from '../../shared-types/model.js';
import { isProblem, readQuantity, UNITS, unitsOfKind, type QuantityKind } from '../../shared-types/quantity.js';

/**
 * mulberry32: a 32-bit seeded generator (public-domain algorithm, one 32-bit
 * state word). Good enough to spread test inputs; not for statistics.
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Convenience draws over a mulberry32 stream. */
export class Rng {
  private readonly next: () => number;

  constructor(seed: number) {
    this.next = mulberry32(seed);
  }

  /** Uniform in [0, 1). */
  float(): number {
    return this.next();
  }

  /** Uniform in [lo, hi). */
  range(lo: number, hi: number): number {
    return lo + (hi - lo) * this.next();
  }

  /** Uniform integer in [lo, hi]. */
  int(lo: number, hi: number): number {
    return lo + Math.floor((hi - lo + 1) * this.next());
  }

  pick<T>(xs: readonly T[]): T {
    return xs[Math.floor(xs.length * this.next())];
  }

  chance(p: number): boolean {
    return this.next() < p;
  }

  /** A random sign times a magnitude in [lo, hi). */
  signed(lo: number, hi: number): number {
    return (this.chance(0.5) ? -1 : 1) * this.range(lo, hi);
  }
}

/** What a random system may contain. */
export interface RandomModelOptions {
  /** Number of shafts, inclusive range (default [1, 5]). */
  shafts?: readonly [number, number];
  /** Most segments per shaft (default 4). */
  maxSegments?: number;
  /** Point and distributed torques (default true). */
  loads?: boolean;
  /** Mesh offsets, coupling misfits and prescribed support rotations (default true). */
  imposed?: boolean;
  /** Extra connections closing loops through the shafts: 'never', 'sometimes' (default) or 'always'. */
  loops?: 'never' | 'sometimes' | 'always';
  /** Probability that a connection is rigid (default 0.3). */
  rigidChance?: number;
  /** Layered sections in the pool (default true). */
  layered?: boolean;
  /**
   * Non-circular sections (rectangle, ellipse, rectangularTube, thinOpen, custom) in the pool,
   * tapered segments (solid–solid, hollow–hollow) and stress raisers (default false: the draws
   * of a model without them are unchanged).
   */
  shapes?: boolean;
}

/** Smallest distance between two distinct stations of a generated shaft, m (keeps K well conditioned). */
export const MIN_GAP = 0.004;

interface ShaftPlan {
  id: string;
  length: number;
  /** Every station placed so far (segment ends included). */
  stations: number[];
  /** Stations held by a fixed support or a rigid connection: no second rigid tie may use them. */
  tied: number[];
}

const near = (a: number, b: number, tol = 1e-12) => Math.abs(a - b) <= tol;

/** Builds one random valid, grounded system from a seed. */
export function randomModel(seed: number, options: RandomModelOptions = {}): Model {
  const rng = new Rng(seed);
  const [minShafts, maxShafts] = options.shafts ?? [1, 5];
  const maxSegments = options.maxSegments ?? 4;
  const loads = options.loads ?? true;
  const imposed = options.imposed ?? true;
  const loops = options.loops ?? 'sometimes';
  const rigidChance = options.rigidChance ?? 0.3;
  const layered = options.layered ?? true;
  const shapes = options.shapes ?? false;

  // Materials: G directly, or E with nu (G = E / 2(1 + nu)).
  const materials: Material[] = [];
  const nMaterials = rng.int(1, 3);
  for (let i = 0; i < nMaterials; i++) {
    const m: Material = { id: `mat${i}` };
    if (rng.chance(0.35)) {
      m.E = rng.range(70e9, 210e9); // Pa
      m.nu = rng.range(0.25, 0.35);
    } else {
      m.G = rng.range(25e9, 85e9); // Pa
    }
    if (rng.chance(0.5)) m.allowableShear = rng.range(30e6, 120e6); // Pa
    if (rng.chance(0.3)) m.density = rng.range(2700, 8900); // kg/m³
    materials.push(m);
  }

  // Sections: solid, hollow, layered (bonded rings, inside out, optional bore).
  const sections: Section[] = [];
  const nSections = rng.int(1, 4);
  for (let i = 0; i < nSections; i++) {
    const kind = layered ? rng.pick(['solid', 'hollow', 'layered'] as const) : rng.pick(['solid', 'hollow'] as const);
    if (kind === 'solid') {
      sections.push({ id: `sec${i}`, shape: 'solid', d: rng.range(0.025, 0.06) });
    } else if (kind === 'hollow') {
      const d = rng.range(0.03, 0.07);
      sections.push({ id: `sec${i}`, shape: 'hollow', d, di: d * rng.range(0.3, 0.8) });
    } else {
      const bore = rng.chance(0.5) ? 0 : rng.range(0.004, 0.012);
      let d = bore + rng.range(0.012, 0.025);
      const layers = [];
      for (let k = 0, n = rng.int(2, 3); k < n; k++) {
        layers.push({ d, material: rng.pick(materials).id });
        d += rng.range(0.004, 0.015);
      }
      sections.push({ id: `sec${i}`, shape: 'layered', di: bore, layers });
    }
  }

  if (shapes) {
    // One of each non-circular shape (sizes in m; J and Wt of custom in m⁴ and m³), and taper ends.
    const w = () => rng.range(0.02, 0.07);
    sections.push({ id: 'rect', shape: 'rectangle', width: w(), height: w() });
    sections.push({ id: 'oval', shape: 'ellipse', width: w(), height: w() });
    const bw = rng.range(0.05, 0.09);
    const bh = rng.range(0.04, 0.08);
    sections.push({ id: 'box', shape: 'rectangularTube', width: bw, height: bh, wall: rng.range(0.002, 0.006) });
    sections.push({
      id: 'chan',
      shape: 'thinOpen',
      walls: [
        { length: rng.range(0.06, 0.1), thickness: rng.range(0.004, 0.008) },
        { length: rng.range(0.03, 0.06), thickness: rng.range(0.003, 0.006) },
      ],
    });
    sections.push({ id: 'cat', shape: 'custom', torsionConstant: rng.range(1e-7, 1e-6), torsionalModulus: rng.range(5e-6, 3e-5) });
    sections.push({ id: 'taperSolid', shape: 'solid', d: rng.range(0.025, 0.06) });
    const d = rng.range(0.04, 0.07);
    sections.push({ id: 'taperHollow', shape: 'hollow', d, di: d * rng.range(0.3, 0.7) });
  }
  /** A tapered segment from `section` to the pool's taper end of the same kind, sometimes. */
  const maybeTaper = (section: Section): string | undefined => {
    if (!shapes || !rng.chance(0.5)) return undefined;
    if (section.shape === 'solid' && section.id !== 'taperSolid') return 'taperSolid';
    if (section.shape === 'hollow' && section.id !== 'taperHollow') return 'taperHollow';
    return undefined;
  };

  // Shafts: segment lengths on a 1 mm grid so that boundaries keep their spacing.
  const shafts: Shaft[] = [];
  const plans: ShaftPlan[] = [];
  const nShafts = rng.int(minShafts, maxShafts);
  for (let k = 0; k < nShafts; k++) {
    const segments = [];
    const stations = [0];
    let z = 0;
    for (let j = 0, n = rng.int(1, maxSegments); j < n; j++) {
      const length = rng.int(40, 300) / 1000; // m
      const section = rng.pick(sections);
      const sectionEnd = maybeTaper(section);
      segments.push(
        section.shape === 'layered'
          ? { length, section: section.id }
          : sectionEnd === undefined
            ? { length, section: section.id, material: rng.pick(materials).id }
            : { length, section: section.id, sectionEnd, material: rng.pick(materials).id },
      );
      z += length;
      stations.push(z);
    }
    shafts.push({ id: `shaft${k}`, segments });
    plans.push({ id: `shaft${k}`, length: z, stations, tied: [] });
  }

  /** A new station at least MIN_GAP from the others, or an existing one (`reuse`), avoiding `tied` when `rigid`. */
  const place = (plan: ShaftPlan, rigid: boolean, reuse = 0.15): number => {
    const allowed = (z: number) => !rigid || plan.tied.every((t) => Math.abs(t - z) > MIN_GAP);
    if (rng.chance(reuse)) {
      const candidates = plan.stations.filter(allowed);
      if (candidates.length > 0) {
        const z = rng.pick(candidates);
        if (rigid) plan.tied.push(z);
        return z;
      }
    }
    for (let attempt = 0; attempt < 200; attempt++) {
      const z = Math.round(rng.range(0, plan.length) * 10000) / 10000; // 0.1 mm grid
      if (z < 0 || z > plan.length) continue;
      if (plan.stations.some((s) => Math.abs(s - z) < MIN_GAP)) continue;
      if (!allowed(z)) continue;
      plan.stations.push(z);
      if (rigid) plan.tied.push(z);
      return z;
    }
    throw new Error(`random model ${seed}: no room for another station on ${plan.id}`);
  };

  // Connections: a forest (each new shaft joins an earlier one, or starts a new group), then loops.
  const parent = plans.map((_, i) => i);
  const find = (i: number): number => (parent[i] === i ? i : (parent[i] = find(parent[i])));
  const gearMeshes: GearMesh[] = [];
  const couplings: Coupling[] = [];
  const connect = (i: number, j: number) => {
    const [ia, ib] = rng.chance(0.5) ? [i, j] : [j, i];
    const rigid = rng.chance(rigidChance);
    const za = place(plans[ia], rigid);
    const zb = place(plans[ib], rigid);
    if (rng.chance(0.6)) {
      const mesh: GearMesh = {
        id: `mesh${gearMeshes.length}`,
        a: { shaft: plans[ia].id, at: za },
        b: { shaft: plans[ib].id, at: zb },
        sense: rng.chance(0.7) ? 'opposite' : 'same',
      };
      if (rng.chance(0.3)) {
        mesh.module = rng.pick([0.002, 0.003, 0.004]); // m, common gear modules
        mesh.a.teeth = rng.int(14, 60);
        mesh.b.teeth = rng.int(14, 60);
      } else {
        mesh.a.radius = rng.range(0.025, 0.12);
        mesh.b.radius = rng.range(0.025, 0.12);
      }
      if (!rigid) mesh.stiffness = rng.range(2e6, 2e8); // N/m
      if (imposed && rng.chance(0.4)) mesh.offset = rng.signed(1e-6, 1e-4); // m
      gearMeshes.push(mesh);
    } else {
      const c: Coupling = {
        id: `coupling${couplings.length}`,
        a: { shaft: plans[ia].id, at: za },
        b: { shaft: plans[ib].id, at: zb },
      };
      if (!rigid) c.stiffness = rng.range(2e3, 2e5); // N·m/rad
      if (imposed && rng.chance(0.4)) c.misfit = rng.signed(1e-4, 1e-2); // rad
      couplings.push(c);
    }
    parent[find(i)] = find(j);
  };
  for (let k = 1; k < plans.length; k++) {
    if (rng.chance(0.85)) connect(rng.int(0, k - 1), k);
  }
  if (plans.length >= 2) {
    const extra = loops === 'always' ? rng.int(1, 2) : loops === 'sometimes' && rng.chance(0.3) ? 1 : 0;
    for (let e = 0; e < extra; e++) {
      const i = rng.int(0, plans.length - 1);
      let j = rng.int(0, plans.length - 2);
      if (j >= i) j++;
      connect(i, j);
    }
  }

  // Supports: at least one per group, a few more at random.
  const supports: Support[] = [];
  const addSupport = (k: number) => {
    const plan = plans[k];
    const fixed = rng.chance(0.6);
    let z: number;
    if (fixed && rng.chance(0.4) && plan.tied.every((t) => t !== 0 && t !== plan.length)) {
      z = rng.chance(0.5) ? 0 : plan.length;
      plan.tied.push(z);
    } else {
      z = place(plan, fixed, fixed ? 0 : 0.3);
    }
    const s: Support = { id: `support${supports.length}`, shaft: plan.id, at: z, kind: fixed ? 'fixed' : 'spring' };
    if (fixed) {
      if (imposed && rng.chance(0.3)) s.rotation = rng.signed(1e-4, 1e-2); // rad
    } else {
      s.stiffness = rng.range(1e3, 1e5); // N·m/rad
    }
    supports.push(s);
  };
  const groups = new Map<number, number[]>();
  plans.forEach((_, k) => {
    const g = find(k);
    groups.set(g, [...(groups.get(g) ?? []), k]);
  });
  for (const members of groups.values()) addSupport(rng.pick(members));
  plans.forEach((_, k) => {
    if (rng.chance(0.3)) addSupport(k);
  });

  // Loads.
  const torques: PointTorque[] = [];
  const distributedTorques: DistributedTorque[] = [];
  if (loads) {
    plans.forEach((plan) => {
      for (let n = rng.int(0, 2); n > 0; n--) {
        const t: PointTorque = { id: `torque${torques.length}`, shaft: plan.id, at: place(plan, false, 0.3) };
        if (rng.chance(0.25)) {
          t.power = rng.signed(1e3, 2e4); // W
          t.speed = rng.range(50, 300); // rad/s
        } else {
          t.torque = rng.signed(10, 500); // N·m
        }
        torques.push(t);
      }
      if (rng.chance(0.5)) {
        let from: number;
        let to: number;
        if (rng.chance(0.3)) {
          from = 0;
          to = plan.length;
        } else {
          const a = place(plan, false, 0.3);
          let b = place(plan, false, 0.3);
          for (let tries = 0; near(a, b) && tries < 20; tries++) b = place(plan, false, 0.3);
          [from, to] = a < b ? [a, b] : [b, a];
        }
        const start = rng.chance(0.15) ? 0 : rng.signed(10, 300); // N·m/m
        const end = rng.chance(0.15) ? start : rng.signed(10, 300); // N·m/m
        distributedTorques.push({ id: `drag${distributedTorques.length}`, shaft: plan.id, from, to, start, end });
      }
    });
    if (torques.length === 0 && distributedTorques.length === 0) {
      const plan = rng.pick(plans);
      torques.push({ id: 'torque0', shaft: plan.id, at: place(plan, false, 0.3), torque: rng.signed(10, 500) });
    }
  }

  const model: Model = {
    format: 'shaftnet/1',
    name: `random system ${seed}`,
    materials,
    sections,
    shafts,
    supports,
    torques,
    distributedTorques,
    gearMeshes,
    couplings,
  };
  if (rng.chance(0.3)) {
    const plan = rng.pick(plans);
    model.discs = [{ id: 'disc0', shaft: plan.id, at: place(plan, false, 0.3), inertia: rng.range(0.01, 1) }];
  }
  if (rng.chance(0.3)) model.limits = { twistRate: rng.range(0.002, 0.02), totalTwist: rng.range(0.005, 0.05) };
  if (shapes) model.stressRaisers = randomRaisers(model, plans, rng, (plan) => place(plan, false, 0.3));
  return model;
}

/** Round outer diameters either side of each inner segment boundary of a shaft (NaN where not round), m. */
function roundEnds(model: Model, shaft: Shaft): Array<{ z: number; left: number; right: number }> {
  const d = (id: string | undefined) => {
    const sec = model.sections.find((x) => x.id === id);
    return sec && (sec.shape === 'solid' || sec.shape === 'hollow') ? (sec.d as number) : Number.NaN;
  };
  const out: Array<{ z: number; left: number; right: number }> = [];
  let z = 0;
  shaft.segments.forEach((seg, j) => {
    z += seg.length as number;
    const next = shaft.segments[j + 1];
    if (next) out.push({ z, left: d(seg.sectionEnd ?? seg.section), right: d(next.section) });
  });
  return out;
}

/** A shoulder at each boundary with a diameter step (fillet inside the fit's range), and a keyseat factor or two. */
function randomRaisers(model: Model, plans: ShaftPlan[], rng: Rng, place: (plan: ShaftPlan) => number): NonNullable<Model['stressRaisers']> {
  const out: NonNullable<Model['stressRaisers']> = [];
  model.shafts.forEach((shaft, k) => {
    for (const b of roundEnds(model, shaft)) {
      if (!(Number.isFinite(b.left) && Number.isFinite(b.right)) || Math.abs(b.left - b.right) < 1e-4 || !rng.chance(0.7)) continue;
      const h = Math.abs(b.left - b.right) / 2;
      // h/r in [0.5, 3.5], inside the fit's 0.25 … 4 (server/engine/stress-raisers.ts).
      out.push({ id: `F${out.length}`, shaft: shaft.id, at: b.z, kind: 'shoulder', fillet: h / rng.range(0.5, 3.5) });
    }
    if (rng.chance(0.5)) out.push({ id: `K${out.length}`, shaft: shaft.id, at: place(plans[k]), kind: 'factor', factor: rng.range(1, 3), note: 'keyseat' });
  });
  return out;
}

// ---------------------------------------------------------------------------
// Unit rewriting

/** The kind of every quantity field, by JSON path with `*` for an array index. */
export const QUANTITY_FIELDS: ReadonlyArray<readonly [string, QuantityKind]> = [
  ['materials/*/G', 'stress'],
  ['materials/*/E', 'stress'],
  ['materials/*/density', 'density'],
  ['materials/*/allowableShear', 'stress'],
  ['materials/*/shearYield', 'stress'],
  ['sections/*/d', 'length'],
  ['sections/*/di', 'length'],
  ['sections/*/layers/*/d', 'length'],
  ['sections/*/width', 'length'],
  ['sections/*/height', 'length'],
  ['sections/*/wall', 'length'],
  ['sections/*/walls/*/length', 'length'],
  ['sections/*/walls/*/thickness', 'length'],
  ['sections/*/polarMoment', 'areaMoment'],
  ['sections/*/torsionConstant', 'areaMoment'],
  ['sections/*/torsionalModulus', 'sectionModulus'],
  ['sections/*/plasticTorqueModulus', 'sectionModulus'],
  ['stressRaisers/*/at', 'length'],
  ['stressRaisers/*/fillet', 'length'],
  ['shafts/*/segments/*/length', 'length'],
  ['supports/*/at', 'length'],
  ['supports/*/rotation', 'angle'],
  ['supports/*/stiffness', 'rotationalStiffness'],
  ['torques/*/at', 'length'],
  ['torques/*/torque', 'torque'],
  ['torques/*/power', 'power'],
  ['torques/*/speed', 'angularSpeed'],
  ['distributedTorques/*/from', 'length'],
  ['distributedTorques/*/to', 'length'],
  ['distributedTorques/*/start', 'torquePerLength'],
  ['distributedTorques/*/end', 'torquePerLength'],
  ['gearMeshes/*/a/at', 'length'],
  ['gearMeshes/*/a/radius', 'length'],
  ['gearMeshes/*/b/at', 'length'],
  ['gearMeshes/*/b/radius', 'length'],
  ['gearMeshes/*/module', 'length'],
  ['gearMeshes/*/stiffness', 'linearStiffness'],
  ['gearMeshes/*/offset', 'length'],
  ['couplings/*/a/at', 'length'],
  ['couplings/*/b/at', 'length'],
  ['couplings/*/stiffness', 'rotationalStiffness'],
  ['couplings/*/misfit', 'angle'],
  ['discs/*/at', 'length'],
  ['discs/*/inertia', 'massInertia'],
  ['limits/twistRate', 'twistRate'],
  ['limits/totalTwist', 'angle'],
];

/** Calls `visit(holder, key, kind)` for every quantity field present in the model. */
export function forEachQuantity(
  model: Model,
  visit: (holder: Record<string, unknown>, key: string, kind: QuantityKind) => void,
): void {
  for (const [path, kind] of QUANTITY_FIELDS) {
    const parts = path.split('/');
    const walk = (node: unknown, i: number): void => {
      if (node === undefined || node === null) return;
      if (i === parts.length - 1) {
        const holder = node as Record<string, unknown>;
        if (holder[parts[i]] !== undefined) visit(holder, parts[i], kind);
        return;
      }
      if (parts[i] === '*') {
        for (const item of node as unknown[]) walk(item, i + 1);
      } else {
        walk((node as Record<string, unknown>)[parts[i]], i + 1);
      }
    };
    walk(model, 0);
  }
}

/**
 * The same model with every SI number rewritten as "<number> <unit>" in a
 * random unit of its kind, spelt with `*`, `·` or spaces. The number is the
 * shortest decimal that reads back as value / factor, so the SI value read
 * back differs from the original by round-off only.
 */
export function withUnitStrings(model: Model, seed: number): Model {
  const rng = new Rng(seed);
  const copy = structuredClone(model);
  forEachQuantity(copy, (holder, key, kind) => {
    const value = holder[key];
    if (typeof value !== 'number') return;
    const symbol = rng.pick(unitsOfKind(kind));
    const unit = UNITS.get(symbol);
    if (!unit) throw new Error(`no unit ${symbol}`);
    const spelt = rng.chance(0.3) ? symbol.replace(/\*/g, '·') : rng.chance(0.2) ? symbol.replace(/\*/g, ' * ') : symbol;
    holder[key] = `${String(value / unit.toSI)} ${spelt}`;
  });
  return copy;
}

// ---------------------------------------------------------------------------
// Reading a model back (SI), independently of the engine

/** A quantity in SI; throws on a problem (test models are valid). */
export function si(value: Quantity | undefined, kind: QuantityKind): number {
  if (value === undefined) throw new Error(`missing ${kind}`);
  const r = readQuantity(value, kind);
  if (isProblem(r)) throw new Error(`${String(value)}: ${r.message}`);
  return r;
}

/** Shear modulus of a material, Pa: G, or E / (2(1 + nu)) (isotropic elasticity). */
export function shearModulus(model: Model, materialId: string): number {
  const m = model.materials.find((x) => x.id === materialId);
  if (!m) throw new Error(`no material ${materialId}`);
  if (m.G !== undefined) return si(m.G, 'stress');
  return si(m.E, 'stress') / (2 * (1 + (m.nu as number)));
}

/** One ring of a section: radii, m, and shear modulus, Pa. */
export interface Ring {
  material: string;
  rInner: number;
  rOuter: number;
  G: number;
}

/** The rings of a segment's section (solid and hollow take the segment's material). */
export function ringsOf(model: Model, segment: Shaft['segments'][number]): Ring[] {
  const sec = model.sections.find((s) => s.id === segment.section);
  if (!sec) throw new Error(`no section ${segment.section}`);
  if (sec.shape === 'layered') {
    let r = sec.di === undefined ? 0 : si(sec.di, 'length') / 2;
    return (sec.layers ?? []).map((layer) => {
      const ring = { material: layer.material, rInner: r, rOuter: si(layer.d, 'length') / 2, G: shearModulus(model, layer.material) };
      r = ring.rOuter;
      return ring;
    });
  }
  const material = segment.material as string;
  const rInner = sec.shape === 'hollow' ? si(sec.di, 'length') / 2 : 0;
  return [{ material, rInner, rOuter: si(sec.d, 'length') / 2, G: shearModulus(model, material) }];
}

/** Polar second moment of area of a ring, m⁴: π (ro⁴ − ri⁴) / 2 (closed form for a circular annulus). */
export function ringJ(r: Ring): number {
  return (Math.PI * (r.rOuter ** 4 - r.rInner ** 4)) / 2;
}

/** Torsional rigidity Σ G J of a segment, N·m². */
export function rigidityOf(model: Model, segment: Shaft['segments'][number]): number {
  return ringsOf(model, segment).reduce((sum, r) => sum + r.G * ringJ(r), 0);
}

/** Segment extents of a shaft, z from 0, in model order (cumulative sum of the lengths). */
export function segmentSpans(model: Model, shaftId: string): Array<{ from: number; to: number; segment: Shaft['segments'][number] }> {
  const shaft = model.shafts.find((s) => s.id === shaftId);
  if (!shaft) throw new Error(`no shaft ${shaftId}`);
  let z = 0;
  return shaft.segments.map((segment) => {
    const from = z;
    z += si(segment.length, 'length');
    return { from, to: z, segment };
  });
}

/** Point torque in N·m: "torque", or P / ω (P = T ω). */
export function pointTorqueValue(t: PointTorque): number {
  if (t.torque !== undefined) return si(t.torque, 'torque');
  return si(t.power, 'power') / si(t.speed, 'angularSpeed');
}

/** Radius of a gear end, m: "radius", or module × teeth / 2 (pitch diameter = m z). */
export function gearRadius(mesh: GearMesh, end: 'a' | 'b'): number {
  const e = mesh[end];
  if (e.radius !== undefined) return si(e.radius, 'length');
  return (si(mesh.module, 'length') * (e.teeth as number)) / 2;
}
