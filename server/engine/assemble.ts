/**
 * Assembly of the reduced stiffness system, in two stages: the model's
 * parts as springs, constraint edges and loads (`elasticParts`), then, once
 * the constraints are eliminated (constraints.ts), K·x = f (`reducedSystem`).
 *
 * Every elastic part is a two-point spring in rotation space with energy
 * ½·k·(p·φ_i + q·φ_j − c)²: a shaft element (p = −1, q = 1, k = GJ/h), a
 * spring support (j = −1), a compliant coupling (p = 1, q = −1, c = misfit)
 * and a compliant mesh (p = r_a, q = −s·r_b, c = offset). Substituting the
 * exact constraints φ = α·x + β turns each into a contribution to K·x = f.
 */
import type { ResolvedModel } from './normalise.js';
import type { StationLayout } from './stations.js';
import { ModelError } from '../../shared-types/errors.js';
import type { Reduction, RigidEdge } from './constraints.js';
import type { SymmetricEntries } from './sparse-solver.js';
import type { Workspace } from './workspace.js';
import { taperElementLoads, taperElementStiffness } from './taper-element.js';

/**
 * All elastic parts as springs; the first `elemCount` are the shaft elements,
 * in element order. Every spring has its stiffness in `k`. A shaft element e
 * joins dof elemLeft[e] (p = −1) and the next dof (q = 1) with no initial
 * strain, so only the other springs keep their ends and coefficients, in
 * `i`, `j`, `p`, `q`, `c` at m − elemCount (a million elements save 32 MB).
 * Read any spring through a `SpringCursor`.
 */
export interface SpringSet {
  readonly count: number;
  readonly elemCount: number;
  readonly k: Float64Array;
  readonly elemLeft: Int32Array;
  readonly i: Int32Array;
  readonly j: Int32Array;
  readonly p: Float64Array;
  readonly q: Float64Array;
  readonly c: Float64Array;
  /** For springs after the elements: which part ('support' | 'mesh' | 'coupling') and its index in the model. */
  readonly kind: ReadonlyArray<'support' | 'mesh' | 'coupling'>;
  readonly ref: Int32Array;
}

/**
 * Reads the ends (j = −1: none) and coefficients of one spring at a time.
 * Each loop over the springs makes its own cursor: nothing is shared.
 */
export class SpringCursor {
  i = 0;
  j = 0;
  p = 0;
  q = 0;
  c = 0;
  constructor(private readonly s: SpringSet) {}

  /** Moves to spring m. */
  read(m: number): void {
    const s = this.s;
    const x = m - s.elemCount;
    if (x < 0) {
      this.i = s.elemLeft[m];
      this.j = this.i + 1;
      this.p = -1;
      this.q = 1;
      this.c = 0;
    } else {
      this.i = s.i[x];
      this.j = s.j[x];
      this.p = s.p[x];
      this.q = s.q[x];
      this.c = s.c[x];
    }
  }
}

/** The elastic parts (springs), the rigid parts (constraint edges) and the applied load of a model. */
export interface ElasticParts {
  readonly springs: SpringSet;
  readonly edges: readonly RigidEdge[];
  /** Applied torque at each dof: point torques plus consistent distributed loads, N·m. */
  readonly load: Float64Array;
}

/** K·x = f in the unknowns of a reduction. */
export interface ReducedSystem {
  readonly matrix: SymmetricEntries;
  readonly rhs: Float64Array;
}

/** Springs of the elastic parts, constraint edges of the rigid ones, and the load at every dof. */
export function elasticParts(model: ResolvedModel, layout: StationLayout, ws: Workspace): ElasticParts {
  const { z, elemLeft, elemSegment, elemT1, elemT2, shaftOf } = layout;
  const elemCount = elemLeft.length;
  const extra: Array<{ kind: 'support' | 'mesh' | 'coupling'; ref: number; k: number; i: number; j: number; p: number; q: number; c: number }> = [];
  const edges: RigidEdge[] = [];

  model.supports.forEach((s, n) => {
    const i = layout.stationAt(s.shaft, s.z);
    if (s.kind === 'fixed') edges.push({ kind: 'support', ref: n, id: s.id, i, j: -1, p: 1, q: 0, c: s.rotation });
    else extra.push({ kind: 'support', ref: n, k: s.stiffness, i, j: -1, p: 1, q: 0, c: 0 });
  });
  model.meshes.forEach((g, n) => {
    const i = layout.stationAt(g.a.shaft, g.a.z);
    const j = layout.stationAt(g.b.shaft, g.b.z);
    const p = g.a.radius;
    const q = -g.sense * g.b.radius;
    if (g.stiffness === null) edges.push({ kind: 'mesh', ref: n, id: g.id, i, j, p, q, c: g.offset });
    else extra.push({ kind: 'mesh', ref: n, k: g.stiffness, i, j, p, q, c: g.offset });
  });
  model.couplings.forEach((cpl, n) => {
    const i = layout.stationAt(cpl.a.shaft, cpl.a.z);
    const j = layout.stationAt(cpl.b.shaft, cpl.b.z);
    if (cpl.stiffness === null) edges.push({ kind: 'coupling', ref: n, id: cpl.id, i, j, p: 1, q: -1, c: cpl.misfit });
    else extra.push({ kind: 'coupling', ref: n, k: cpl.stiffness, i, j, p: 1, q: -1, c: cpl.misfit });
  });

  const count = elemCount + extra.length;
  const springs = {
    count,
    elemCount,
    k: ws.f64(count),
    elemLeft,
    i: ws.i32(extra.length),
    j: ws.i32(extra.length),
    p: ws.f64(extra.length),
    q: ws.f64(extra.length),
    c: ws.f64(extra.length),
    kind: extra.map((e) => e.kind),
    ref: new Int32Array(extra.map((e) => e.ref)),
  };
  const load = ws.f64(layout.dofCount);
  for (let e = 0; e < elemCount; e++) {
    const left = elemLeft[e];
    const h = z[left + 1] - z[left];
    const seg = model.shafts[shaftOf[left]].segments[elemSegment[e]];
    const t1 = elemT1[e];
    const t2 = elemT2[e];
    if (seg.taper) {
      // A (sub-)taper: exact stiffness and consistent loads by the exact shape function.
      springs.k[e] = taperElementStiffness(seg, seg.taper, z[left], z[left + 1]);
      if (t1 !== 0 || t2 !== 0) {
        const f = taperElementLoads(seg, seg.taper, z[left], z[left + 1], t1, t2);
        load[left] += f.fa;
        load[left + 1] += f.fb;
      }
      continue;
    }
    springs.k[e] = seg.rigidity / h;
    if (t1 !== 0 || t2 !== 0) {
      // ∫ N·t dz with linear N and linear t: exact nodal loads for a linear element.
      load[left] += consistentLeft(h, t1, t2);
      load[left + 1] += consistentRight(h, t1, t2);
    }
  }
  extra.forEach((s, n) => {
    springs.k[elemCount + n] = s.k;
    springs.i[n] = s.i;
    springs.j[n] = s.j;
    springs.p[n] = s.p;
    springs.q[n] = s.q;
    springs.c[n] = s.c;
  });
  for (const t of model.torques) load[layout.stationAt(t.shaft, t.z)] += t.torque;
  return { springs, edges, load };
}

/**
 * The applied torque at every dof of `model`'s loads (point torques plus consistent distributed
 * loads from `elemT1`/`elemT2`), with the arithmetic of `elasticParts`: a load combination passes
 * its factored loads and its own intensities.
 */
export function loadVector(model: ResolvedModel, layout: StationLayout, ws: Workspace): Float64Array {
  const { z, elemLeft, elemSegment, elemT1, elemT2, shaftOf } = layout;
  const load = ws.f64(layout.dofCount);
  for (let e = 0; e < elemLeft.length; e++) {
    const t1 = elemT1[e];
    const t2 = elemT2[e];
    if (t1 === 0 && t2 === 0) continue;
    const left = elemLeft[e];
    const seg = model.shafts[shaftOf[left]].segments[elemSegment[e]];
    if (seg.taper) {
      const f = taperElementLoads(seg, seg.taper, z[left], z[left + 1], t1, t2);
      load[left] += f.fa;
      load[left + 1] += f.fb;
      continue;
    }
    const h = z[left + 1] - z[left];
    load[left] += consistentLeft(h, t1, t2);
    load[left + 1] += consistentRight(h, t1, t2);
  }
  for (const t of model.torques) load[layout.stationAt(t.shaft, t.z)] += t.torque;
  return load;
}

/** The right-hand side f of K·x = f for the load vector `load`, with the arithmetic of `reducedSystem`. */
export function reducedRhs(s: SpringSet, load: Float64Array, red: Reduction, ws: Workspace): Float64Array {
  const { varOf, alpha, beta } = red;
  const rhs = ws.f64(red.varCount);
  const spring = new SpringCursor(s);
  for (let m = 0; m < s.count; m++) {
    spring.read(m);
    const { i, j, p, q } = spring;
    const u = varOf[i];
    const v = j >= 0 ? varOf[j] : -1;
    if (u < 0 && v < 0) continue;
    const k = s.k[m];
    const cu = u >= 0 ? p * alpha[i] : 0;
    const cv = v >= 0 ? q * alpha[j] : 0;
    const e = spring.c - p * beta[i] - (j >= 0 ? q * beta[j] : 0);
    if (u >= 0 && u === v) {
      rhs[u] += k * (cu + cv) * e;
      continue;
    }
    if (u >= 0) rhs[u] += k * cu * e;
    if (v >= 0) rhs[v] += k * cv * e;
  }
  for (let d = 0; d < load.length; d++) {
    const u = varOf[d];
    if (u >= 0 && load[d] !== 0) rhs[u] += alpha[d] * load[d];
  }
  return rhs;
}

/**
 * The consistent nodal shares of a linear distributed torque t1 → t2 over an
 * element of length h, ∫ N·t dz, at its left and right end, N·m (recovery
 * recomputes them with the same arithmetic rather than keeping two arrays).
 */
export function consistentLeft(h: number, t1: number, t2: number): number {
  return (h * (2 * t1 + t2)) / 6;
}

export function consistentRight(h: number, t1: number, t2: number): number {
  return (h * (t1 + 2 * t2)) / 6;
}

/** K·x = f in the unknowns of the reduction: each spring's k·(p·φ_i + q·φ_j − c)² with φ = α·x + β. */
export function reducedSystem(s: SpringSet, load: Float64Array, red: Reduction, ws: Workspace): ReducedSystem {
  const n = red.varCount;
  const { varOf, alpha, beta } = red;
  const diag = ws.f64(n);
  const rhs = ws.f64(n);
  const rows = ws.i32(s.count);
  const cols = ws.i32(s.count);
  const vals = ws.f64(s.count);
  let nnz = 0;
  const spring = new SpringCursor(s);
  for (let m = 0; m < s.count; m++) {
    const k = s.k[m];
    spring.read(m);
    const { i, j, p, q } = spring;
    const u = varOf[i];
    const v = j >= 0 ? varOf[j] : -1;
    const cu = u >= 0 ? p * alpha[i] : 0;
    const cv = v >= 0 ? q * alpha[j] : 0;
    // e: the spring's stretch when every unknown is zero, with its sign turned into a load.
    const e = spring.c - p * beta[i] - (j >= 0 ? q * beta[j] : 0);
    if (u >= 0 && u === v) {
      const cc = cu + cv;
      diag[u] += k * cc * cc;
      rhs[u] += k * cc * e;
      continue;
    }
    if (u >= 0) {
      diag[u] += k * cu * cu;
      rhs[u] += k * cu * e;
    }
    if (v >= 0) {
      diag[v] += k * cv * cv;
      rhs[v] += k * cv * e;
    }
    if (u >= 0 && v >= 0) {
      rows[nnz] = u;
      cols[nnz] = v;
      vals[nnz++] = k * cu * cv;
    }
  }
  for (let d = 0; d < load.length; d++) {
    const u = varOf[d];
    if (u >= 0 && load[d] !== 0) rhs[u] += alpha[d] * load[d];
  }
  return { matrix: { n, diag, rows, cols, vals, count: nnz }, rhs };
}

/**
 * Groups of unknowns that can turn together with no strain: a mechanism.
 * A zero-energy mode of a connected group exists exactly when no spring ties
 * it to a known rotation and the ratios of its springs agree around every
 * loop. Answers the groups found (unknown indices, ascending), empty when none.
 *
 * A union-find over the unknowns carries, for each, the ratio of its turn to
 * its parent's in the group's zero-energy mode (ρ_u = rel_u·ρ_parent): a
 * spring with stretch c_u·x_u + c_v·x_v joins u and v with ρ_v = −(c_u/c_v)·ρ_u,
 * and a spring inside one group whose ratio disagrees locks it. Near-linear
 * time, 17 bytes per unknown.
 */
export function findMechanisms(s: SpringSet, red: Reduction, ws: Workspace): number[][] {
  const n = red.varCount;
  const { varOf, alpha } = red;
  const parent = ws.i32(n);
  const rel = ws.f64(n);
  const size = ws.i32(n);
  const held = ws.u8(n); // of a root: its group is anchored or locked
  for (let u = 0; u < n; u++) {
    parent[u] = u;
    rel[u] = 1;
    size[u] = 1;
  }
  // The root of u, with ρ_u / ρ_root left in `ratio`; compresses the path.
  let ratio = 1;
  const find = (u: number): number => {
    let root = u;
    let r = 1;
    while (parent[root] !== root) {
      r *= rel[root];
      root = parent[root];
    }
    ratio = r;
    // Point every node of the path at the root, with its ratio to the root.
    let x = u;
    let rx = r;
    while (parent[x] !== root && x !== root) {
      const next = parent[x];
      const rNext = rx / rel[x];
      parent[x] = root;
      rel[x] = rx;
      x = next;
      rx = rNext;
    }
    return root;
  };
  const spring = new SpringCursor(s);
  for (let m = 0; m < s.count; m++) {
    spring.read(m);
    const u = varOf[spring.i];
    const v = spring.j >= 0 ? varOf[spring.j] : -1;
    const cu = u >= 0 ? spring.p * alpha[spring.i] : 0;
    const cv = v >= 0 ? spring.q * alpha[spring.j] : 0;
    if (u >= 0 && u === v) {
      if (Math.abs(cu + cv) > 1e-12 * (Math.abs(cu) + Math.abs(cv))) held[find(u)] = 1;
      continue;
    }
    if (u < 0 || v < 0 || cu === 0 || cv === 0) {
      // A spring that strains when one unknown turns alone ties it to a known rotation.
      if (u >= 0 && cu !== 0) held[find(u)] = 1;
      if (v >= 0 && cv !== 0) held[find(v)] = 1;
      continue;
    }
    const w = -cu / cv; // ρ_v / ρ_u for no strain
    const ru = find(u);
    const a = ratio; // ρ_u = a·ρ_ru
    const rv = find(v);
    const b = ratio; // ρ_v = b·ρ_rv
    if (ru === rv) {
      // A loop: its springs agree only if ρ_v = w·ρ_u already.
      if (Math.abs(b - w * a) > 1e-10 * (Math.abs(b) + Math.abs(w * a))) held[ru] = 1;
      continue;
    }
    // Hang the smaller group under the larger: ρ_rv = (w·a / b)·ρ_ru, ρ_ru = (b / (w·a))·ρ_rv.
    const top = size[ru] >= size[rv] ? ru : rv;
    const low = top === ru ? rv : ru;
    parent[low] = top;
    rel[low] = top === ru ? (w * a) / b : b / (w * a);
    size[top] += size[low];
    held[top] |= held[low];
  }
  const groupOf = new Map<number, number[]>();
  for (let u = 0; u < n; u++) {
    const root = find(u);
    if (held[root]) continue;
    const group = groupOf.get(root);
    if (group) group.push(u);
    else groupOf.set(root, [u]);
  }
  return [...groupOf.values()];
}

/** Throws SN_MECHANISM naming the shafts of every group free to turn. */
export function assertNoMechanism(model: ResolvedModel, layout: StationLayout, springs: SpringSet, red: Reduction, ws: Workspace): void {
  const groups = findMechanisms(springs, red, ws);
  if (groups.length === 0) return;
  // Unknown → one of its dofs → shaft.
  const dofOfVar = ws.i32(red.varCount).fill(-1);
  red.varOf.forEach((u, d) => {
    if (u >= 0 && dofOfVar[u] < 0) dofOfVar[u] = d;
  });
  const issues = groups.map((g) => {
    const shafts = [...new Set(g.map((u) => model.shafts[layout.shaftOf[dofOfVar[u]]].id))];
    const list = shafts.map((s) => `"${s}"`).join(', ');
    return {
      code: 'SN_MECHANISM' as const,
      pointer: '/supports',
      message: `${shafts.length === 1 ? 'shaft' : 'shafts'} ${list} can spin freely: add a fixed or spring support, or connect ${shafts.length === 1 ? 'it' : 'them'} to a supported shaft`,
      shafts,
    };
  });
  throw new ModelError(issues);
}
