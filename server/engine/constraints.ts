/**
 * Exact constraints: fixed supports, rigid gear meshes and rigid couplings.
 *
 * Each is one linear equation between at most two rotations,
 *   p·φ_i + q·φ_j = c          (j = −1 for a fixed support: φ_i = c),
 * so they are eliminated exactly rather than approximated by stiff springs:
 * the rigid edges split the dofs into connected groups; a spanning tree of
 * each group expresses every rotation in it as φ = α·x + β in terms of one
 * unknown x of the group. An edge that closes a loop, or a second tie to the
 * ground, gives an equation a·x = b for the group: with a ≠ 0 it fixes x (a
 * loop whose ratios multiply to other than one: the group jams); with a = 0
 * it must hold identically, or the offsets and misfits cannot be assembled.
 */
import { ModelError, type ModelIssue } from '../../shared-types/errors.js';
import type { Workspace } from './workspace.js';

/** One exact constraint p·φ_i + q·φ_j = c. */
export interface RigidEdge {
  readonly kind: 'support' | 'mesh' | 'coupling';
  /** Index into the model's supports, gearMeshes or couplings. */
  readonly ref: number;
  readonly id: string;
  readonly i: number;
  /** −1: the ground (a fixed support). */
  readonly j: number;
  readonly p: number;
  readonly q: number;
  readonly c: number;
}

export interface Reduction {
  /** Unknowns of the reduced system. */
  readonly varCount: number;
  /** Unknown of each dof, −1 when the dof's rotation is known. */
  readonly varOf: Int32Array;
  /** φ_dof = alpha·x[varOf] + beta. */
  readonly alpha: Float64Array;
  readonly beta: Float64Array;
  /** Loops of rigid connections whose ratios do not multiply to one: solved, and their dofs cannot turn. */
  readonly lockedLoops: ReadonlyArray<readonly string[]>;
  /** Rigid ties that share torque in a way no rigid model decides (answer is the least-squares split). */
  readonly redundantTies: ReadonlyArray<readonly string[]>;
}

/** Relative size under which a loop's ratio product counts as exactly one. */
const RATIO_TOLERANCE = 1e-10;
/** Relative size under which a loop's offsets and misfits count as adding up. */
const CLOSURE_TOLERANCE = 1e-9;

/** Eliminates the rigid edges; throws SN_LOOP_MISMATCH when they cannot all hold. */
export function reduceConstraints(dofCount: number, edges: readonly RigidEdge[], shaftNameOf: (dof: number) => string, ws: Workspace): Reduction {
  const varOf = ws.i32(dofCount).fill(-2); // −2: not yet reached
  const alpha = ws.f64(dofCount);
  const beta = ws.f64(dofCount);
  const lockedLoops: string[][] = [];
  const redundantTies: string[][] = [];
  const issues: ModelIssue[] = [];

  // Adjacency of the rigid edges, compressed.
  const degree = ws.i32(dofCount + 1);
  for (const e of edges) {
    degree[e.i + 1]++;
    if (e.j >= 0 && e.j !== e.i) degree[e.j + 1]++;
  }
  for (let k = 0; k < dofCount; k++) degree[k + 1] += degree[k];
  const adjStart = degree;
  const adj = ws.i32(adjStart[dofCount]);
  const fill = ws.i32Copy(adjStart, dofCount);
  edges.forEach((e, n) => {
    adj[fill[e.i]++] = n;
    if (e.j >= 0 && e.j !== e.i) adj[fill[e.j]++] = n;
  });

  const parentEdge = ws.i32(dofCount).fill(-1);
  const depth = ws.i32(dofCount);
  let varCount = 0;

  /** Edge ids on the tree path between two dofs of one group (both may be −1: none). */
  const treePath = (a: number, b: number): number[] => {
    const path: number[] = [];
    while (a !== b && a >= 0 && b >= 0) {
      if (depth[a] >= depth[b]) {
        const e = edges[parentEdge[a]];
        path.push(parentEdge[a]);
        a = e.i === a ? e.j : e.i;
      } else {
        const e = edges[parentEdge[b]];
        path.push(parentEdge[b]);
        b = e.i === b ? e.j : e.i;
      }
    }
    return path;
  };

  const queue = ws.i32(dofCount);
  for (let start = 0; start < dofCount; start++) {
    if (varOf[start] !== -2) continue;
    if (adjStart[start] === adjStart[start + 1]) {
      varOf[start] = varCount++;
      alpha[start] = 1;
      continue;
    }
    // Spanning tree of the group by breadth-first search.
    const members: number[] = [];
    const closures: number[] = [];
    const seenEdge = new Set<number>();
    varOf[start] = -3; // in this group, provisional
    alpha[start] = 1;
    beta[start] = 0;
    depth[start] = 0;
    let head = 0;
    let tail = 0;
    queue[tail++] = start;
    while (head < tail) {
      const u = queue[head++];
      members.push(u);
      for (let k = adjStart[u]; k < adjStart[u + 1]; k++) {
        const n = adj[k];
        if (seenEdge.has(n)) continue;
        seenEdge.add(n);
        const e = edges[n];
        const v = e.i === u ? e.j : e.i;
        if (v < 0 || v === u || varOf[v] === -3) {
          closures.push(n);
          continue;
        }
        // p·φ_u + q·φ_v = c, oriented so that u is known.
        const [pu, qv] = e.i === u ? [e.p, e.q] : [e.q, e.p];
        alpha[v] = (-pu * alpha[u]) / qv;
        beta[v] = (e.c - pu * beta[u]) / qv;
        varOf[v] = -3;
        parentEdge[v] = n;
        depth[v] = depth[u] + 1;
        queue[tail++] = v;
      }
    }
    // Closing equations a·x = b of the group.
    let xKnown: number | null = null;
    let fixedBy: number[] = [];
    let groundEdge = -1;
    const pending: Array<{ n: number; a: number; b: number; scale: number; loop: number[] }> = [];
    for (const n of closures) {
      const e = edges[n];
      const ai = e.p * alpha[e.i];
      const aj = e.j >= 0 ? e.q * alpha[e.j] : 0;
      const a = ai + aj;
      const bj = e.j >= 0 ? e.q * beta[e.j] : 0;
      const b = e.c - e.p * beta[e.i] - bj;
      const scale = Math.abs(e.c) + Math.abs(e.p * beta[e.i]) + Math.abs(bj);
      const ratioOne = Math.abs(a) <= RATIO_TOLERANCE * (Math.abs(ai) + Math.abs(aj));
      let loop: number[];
      if (e.j < 0) {
        loop = groundEdge < 0 ? [n] : [groundEdge, ...treePath(edges[groundEdge].i, e.i), n];
        if (groundEdge < 0) groundEdge = n;
      } else loop = [...treePath(e.i, e.j), n];
      if (!ratioOne && e.j >= 0) lockedLoops.push(loop.map((m) => edges[m].id));
      pending.push({ n, a: ratioOne ? 0 : a, b, scale, loop });
    }
    // Ground ties first: they fix x without locking anything.
    pending.sort((x, y) => Number(edges[y.n].j < 0) - Number(edges[x.n].j < 0));
    for (const eq of pending) {
      if (eq.a !== 0 && xKnown === null) {
        xKnown = eq.b / eq.a;
        fixedBy = eq.loop;
        continue;
      }
      const lhs = xKnown === null ? 0 : eq.a * xKnown;
      const tol = CLOSURE_TOLERANCE * (eq.scale + Math.abs(lhs) + Math.abs(eq.b));
      if (eq.a === 0 && xKnown === null ? Math.abs(eq.b) > tol : Math.abs(lhs - eq.b) > tol) {
        const loop = eq.a === 0 || xKnown === null ? eq.loop : [...new Set([...fixedBy, ...eq.loop])];
        const ids = loop.map((m) => edges[m].id);
        const shafts = [...new Set(loop.flatMap((m) => [edges[m].i, edges[m].j]).filter((d) => d >= 0).map(shaftNameOf))];
        issues.push({
          code: 'SN_LOOP_MISMATCH',
          pointer: '',
          message: `rigid ${ids.join(', ')} close a loop whose offsets, misfits or prescribed rotations do not add up (mismatch ${(lhs - eq.b).toPrecision(3)}): no assembly exists; make one of them compliant or correct the values`,
          shafts,
          connections: ids,
        });
        continue;
      }
      // A closure that holds identically: the torque it carries is shared with the tree in no unique way.
      redundantTies.push(eq.loop.map((m) => edges[m].id));
    }
    if (xKnown === null) {
      const x = varCount++;
      for (const d of members) varOf[d] = x;
    } else {
      for (const d of members) {
        beta[d] = alpha[d] * xKnown + beta[d];
        alpha[d] = 0;
        varOf[d] = -1;
      }
    }
  }
  if (issues.length > 0) throw new ModelError(issues);
  return { varCount, varOf, alpha, beta, lockedLoops, redundantTies };
}
