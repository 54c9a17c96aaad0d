/**
 * The reduced dynamic stiffness K(ω) of a model and its Wittrick–Williams count.
 *
 * The unknowns are those of statics: rigid meshes, rigid couplings and fixed supports are eliminated
 * exactly by the same reduction (constraints.ts, φ = α·x + β; β, the prescribed rotations, misfits and
 * offsets, has no dynamic part), so a rigid mesh reflects inertia and stiffness through its ratio
 * squared. Each shaft element brings its exact dynamic stiffness (element.ts), each disc −ω²·J on its
 * station, each spring support, compliant mesh and compliant coupling its static (massless) stiffness.
 * K(ω) has the pattern of the static system at every ω: one compressed pattern, one symbolic L·D·Lᵀ,
 * and a numeric factorisation into the same storage per trial ω.
 *
 * Wittrick–Williams: the number of natural frequencies below ω is
 *   N(ω) = J0(ω) + s{K(ω)},
 * J0 the clamped-element frequencies below ω (every unknown held at zero leaves only the elements
 * vibrating between held ends) and s the negative pivots of K(ω)'s L·D·Lᵀ (Sylvester's law of inertia).
 * (W. H. Wittrick and F. W. Williams, "A general algorithm for computing natural frequencies of elastic
 * structures", Q. J. Mech. Appl. Math. 24 (1971) 263–284.) Rigid-body modes lie below every ω > 0.
 */
import type { ResolvedModel } from '../normalise.js';
import type { StationLayout } from '../stations.js';
import type { SpringSet } from '../assemble.js';
import type { Reduction } from '../constraints.js';
import { ldlNumeric, ldlSolve, ldlSymbolic, SingularMatrixError, type CscMatrix, type LdlFactor, type LdlSymbolic } from '../sparse-solver.js';
import { Workspace } from '../workspace.js';
import { subTaper } from '../taper-element.js';
import { taperDyn, uniformDyn, type ElementDyn, type TaperDynInput } from './element.js';

export class DynamicSystem {
  /** Reduced unknowns. */
  readonly n: number;
  readonly elemCount: number;
  /** Per element: k0 = GJ/h (a taper: unused), c = h²m/GJ, mh = m·h; taper descriptor or null. */
  readonly k0: Float64Array;
  readonly c: Float64Array;
  readonly mh: Float64Array;
  readonly tapers: Array<TaperDynInput | null>;
  /** Entry of spring m in the off-diagonal pattern (−1: none) and its two positions in Ax. */
  private readonly entry: Int32Array;
  private readonly pos1: Int32Array;
  private readonly pos2: Int32Array;
  readonly csc: CscMatrix;
  readonly diag: Float64Array;
  /** The mass operator M(ω) = −∂K/∂ω², same pattern. */
  readonly mAx: Float64Array;
  readonly mDiag: Float64Array;
  private readonly sym: LdlSymbolic;
  /** The factor of the last successful evaluation (null after a lost pivot), and the storage every factor reuses. */
  private factor: LdlFactor | null = null;
  private storage: LdlFactor | null = null;
  private readonly scratch = new Workspace();
  private readonly y: Float64Array;
  /** Last ω² assembled. */
  private assembled = Number.NaN;
  /** Per element at the last ω² assembled (for energies and shapes). */
  readonly dyn: ElementDyn[];
  /** Per element: the unknowns of its ends (−1: held), their α, and its entry's two places in Ax (−1: none). */
  private readonly eu: Int32Array;
  private readonly ev: Int32Array;
  private readonly eai: Float64Array;
  private readonly eaj: Float64Array;
  private readonly ep1: Int32Array;
  private readonly ep2: Int32Array;

  constructor(
    readonly model: ResolvedModel,
    readonly layout: StationLayout,
    readonly springs: SpringSet,
    readonly red: Reduction,
  ) {
    const { elemLeft, elemSegment, shaftOf, z } = layout;
    const ne = elemLeft.length;
    this.elemCount = ne;
    this.n = red.varCount;
    this.k0 = new Float64Array(ne);
    this.c = new Float64Array(ne);
    this.mh = new Float64Array(ne);
    this.tapers = new Array<TaperDynInput | null>(ne).fill(null);
    for (let e = 0; e < ne; e++) {
      const left = elemLeft[e];
      const h = z[left + 1] - z[left];
      const seg = model.shafts[shaftOf[left]].segments[elemSegment[e]];
      const m = seg.rhoIp ?? 0;
      if (seg.taper) {
        const density = seg.taper.density ?? 0;
        this.k0[e] = springs.k[e];
        if (density > 0) this.tapers[e] = { input: subTaper(seg, seg.taper, z[left], z[left + 1]), G: seg.taper.G, density };
        continue;
      }
      this.k0[e] = seg.rigidity / h;
      this.c[e] = (h * h * m) / seg.rigidity;
      this.mh[e] = m * h;
    }
    this.dyn = Array.from({ length: ne }, () => ({ a1: 0, a2: 0, b: 0, m1: 0, m2: 0, mb: 0, clamped: 0 }));
    // The off-diagonal pattern: one entry per spring joining two different unknowns.
    const { varOf } = red;
    const ends = (m: number): [number, number] => {
      if (m < ne) return [elemLeft[m], elemLeft[m] + 1];
      const x = m - ne;
      return [springs.i[x], springs.j[x]];
    };
    this.entry = new Int32Array(springs.count).fill(-1);
    let count = 0;
    const rows: number[] = [];
    const cols: number[] = [];
    for (let m = 0; m < springs.count; m++) {
      const [i, j] = ends(m);
      const u = varOf[i];
      const v = j >= 0 ? varOf[j] : -1;
      if (u >= 0 && v >= 0 && u !== v) {
        this.entry[m] = count++;
        rows.push(u);
        cols.push(v);
      }
    }
    const n = this.n;
    const colCount = new Int32Array(n + 1);
    for (let t = 0; t < count; t++) {
      colCount[rows[t] + 1]++;
      colCount[cols[t] + 1]++;
    }
    for (let k = 0; k < n; k++) colCount[k + 1] += colCount[k];
    const fill = colCount.slice(0, n);
    const rawI = new Int32Array(colCount[n]);
    const rawOwner = new Int32Array(colCount[n]);
    for (let t = 0; t < count; t++) {
      rawI[fill[cols[t]]] = rows[t];
      rawOwner[fill[cols[t]]++] = 2 * t;
      rawI[fill[rows[t]]] = cols[t];
      rawOwner[fill[rows[t]]++] = 2 * t + 1;
    }
    // Merge duplicates per column (two springs between the same unknowns share one entry).
    const last = new Int32Array(n).fill(-1);
    const Ap = new Int32Array(n + 1);
    const Ai = new Int32Array(colCount[n]);
    this.pos1 = new Int32Array(count);
    this.pos2 = new Int32Array(count);
    let w = 0;
    for (let col = 0; col < n; col++) {
      const start = w;
      for (let p = colCount[col]; p < colCount[col + 1]; p++) {
        const r = rawI[p];
        let at: number;
        if (last[r] >= start) at = last[r];
        else {
          at = w++;
          last[r] = at;
          Ai[at] = r;
        }
        const owner = rawOwner[p];
        if (owner & 1) this.pos2[owner >> 1] = at;
        else this.pos1[owner >> 1] = at;
      }
      Ap[col + 1] = w;
    }
    this.csc = { n, Ap, Ai: Ai.subarray(0, w), Ax: new Float64Array(w) };
    this.mAx = new Float64Array(w);
    this.diag = new Float64Array(n);
    this.mDiag = new Float64Array(n);
    this.sym = ldlSymbolic(this.csc, this.scratch);
    this.y = new Float64Array(n);
    this.eu = new Int32Array(ne);
    this.ev = new Int32Array(ne);
    this.eai = new Float64Array(ne);
    this.eaj = new Float64Array(ne);
    this.ep1 = new Int32Array(ne).fill(-1);
    this.ep2 = new Int32Array(ne).fill(-1);
    for (let e = 0; e < ne; e++) {
      const i = elemLeft[e];
      this.eu[e] = varOf[i];
      this.ev[e] = varOf[i + 1];
      this.eai[e] = varOf[i] >= 0 ? red.alpha[i] : 0;
      this.eaj[e] = varOf[i + 1] >= 0 ? red.alpha[i + 1] : 0;
      const t = this.entry[e];
      if (t >= 0) {
        this.ep1[e] = this.pos1[t];
        this.ep2[e] = this.pos2[t];
      }
    }
  }

  /** Assembles K(ω²) and M(ω²) (and every element's numbers) unless they are the last assembled. */
  assemble(w2: number): void {
    if (w2 === this.assembled) return;
    const { varOf, alpha } = this.red;
    const { diag, mDiag, mAx } = this;
    const Ax = this.csc.Ax;
    diag.fill(0);
    mDiag.fill(0);
    Ax.fill(0);
    mAx.fill(0);
    const ne = this.elemCount;
    const put = (m: number, i: number, j: number, p: number, q: number, a1: number, a2: number, b: number, m1: number, m2: number, mb: number) => {
      const u = varOf[i];
      const v = j >= 0 ? varOf[j] : -1;
      const ai = u >= 0 ? p * alpha[i] : 0;
      const aj = v >= 0 ? q * alpha[j] : 0;
      if (u >= 0 && u === v) {
        diag[u] += a1 * ai * ai + a2 * aj * aj + 2 * b * ai * aj;
        mDiag[u] += m1 * ai * ai + m2 * aj * aj + 2 * mb * ai * aj;
        return;
      }
      if (u >= 0) {
        diag[u] += a1 * ai * ai;
        mDiag[u] += m1 * ai * ai;
      }
      if (v >= 0) {
        diag[v] += a2 * aj * aj;
        mDiag[v] += m2 * aj * aj;
      }
      const t = this.entry[m];
      if (t >= 0) {
        const kv = b * ai * aj;
        const mv = mb * ai * aj;
        Ax[this.pos1[t]] += kv;
        Ax[this.pos2[t]] += kv;
        mAx[this.pos1[t]] += mv;
        mAx[this.pos2[t]] += mv;
      }
    };
    // The elements (the hot loop: their ends' unknowns and places precomputed). The element's p = −1,
    // q = 1 of the spring form are folded into its matrix: ends i and i + 1 as they are.
    const { eu, ev, eai, eaj, ep1, ep2 } = this;
    for (let e = 0; e < ne; e++) {
      const d = this.elementAt(e, w2);
      const u = eu[e];
      const v = ev[e];
      const ai = eai[e];
      const aj = eaj[e];
      if (u >= 0 && u === v) {
        diag[u] += d.a1 * ai * ai + d.a2 * aj * aj + 2 * d.b * ai * aj;
        mDiag[u] += d.m1 * ai * ai + d.m2 * aj * aj + 2 * d.mb * ai * aj;
        continue;
      }
      if (u >= 0) {
        diag[u] += d.a1 * ai * ai;
        mDiag[u] += d.m1 * ai * ai;
      }
      if (v >= 0) {
        diag[v] += d.a2 * aj * aj;
        mDiag[v] += d.m2 * aj * aj;
      }
      const p1 = ep1[e];
      if (p1 >= 0) {
        const kv = d.b * ai * aj;
        const mv = d.mb * ai * aj;
        Ax[p1] += kv;
        Ax[ep2[e]] += kv;
        mAx[p1] += mv;
        mAx[ep2[e]] += mv;
      }
    }
    const s = this.springs;
    for (let x = 0; x < s.count - ne; x++) {
      const k = s.k[ne + x];
      const p = s.p[x];
      const q = s.q[x];
      // k·(p·φi + q·φj)²: the spring's matrix with its coefficients folded in.
      put(ne + x, s.i[x], s.j[x], 1, 1, k * p * p, k * q * q, k * p * q, 0, 0, 0);
    }
    for (const disc of this.model.discs) {
      const dof = this.layout.stationAt(disc.shaft, disc.z);
      const u = varOf[dof];
      if (u < 0) continue;
      const a = alpha[dof];
      diag[u] -= w2 * disc.inertia * a * a;
      mDiag[u] += disc.inertia * a * a;
    }
    this.assembled = w2;
  }

  /** Element e's numbers at ω² (kept in `dyn[e]`). */
  elementAt(e: number, w2: number): ElementDyn {
    const t = this.tapers[e];
    if (t) return taperDyn(t, w2, this.dyn[e]);
    // A uniform element; a massless one (or a taper without density: c = 0, k0 its static stiffness) is a spring.
    return uniformDyn(this.k0[e], this.c[e], this.mh[e], w2, this.dyn[e]);
  }

  /**
   * Factorises K(ω²); answers the Wittrick–Williams count N = J0 + s{K}, or null when a pivot is
   * lost (ω² at or within round-off of a root of a leading minor: the caller moves ω a little).
   */
  evaluate(w2: number): number | null {
    this.assemble(w2);
    let j0 = 0;
    for (let e = 0; e < this.elemCount; e++) j0 += this.dyn[e].clamped;
    try {
      // The first factor is allocated for good; later ones go into its storage, their scratch from a
      // session of the private workspace (given back when it ends: no garbage per trial ω).
      const into = this.storage;
      this.factor = into
        ? this.scratch.session(() => ldlNumeric(this.sym, this.csc, this.diag, this.scratch, { indefinite: true, into }))
        : ldlNumeric(this.sym, this.csc, this.diag, this.scratch, { indefinite: true });
      this.storage = this.factor;
    } catch (err) {
      if (err instanceof SingularMatrixError) {
        this.factor = null;
        return null;
      }
      throw err;
    }
    return j0 + this.factor.negativePivots;
  }

  /** The count below ω (ω > 0), moving ω up by a few ulps' worth where a pivot is lost. */
  countBelow(omega: number): number {
    let w = omega;
    for (let k = 0; k < 8; k++) {
      const c = this.evaluate(w * w);
      if (c !== null) return c;
      w = omega * (1 + 1e-13 * 4 ** k);
    }
    throw new SingularMatrixError(-1, 0);
  }

  /** x := K(ω²)⁻¹·b with the factor of the last successful `evaluate`. */
  solve(b: Float64Array, x: Float64Array): Float64Array {
    if (!this.factor) throw new Error('no factor');
    return ldlSolve(this.sym, this.factor, b, x, this.y);
  }

  /** out := A·x for A = K (mass false) or M (mass true) as last assembled. */
  multiply(x: Float64Array, out: Float64Array, mass: boolean): Float64Array {
    const d = mass ? this.mDiag : this.diag;
    const ax = mass ? this.mAx : this.csc.Ax;
    const { Ap, Ai } = this.csc;
    for (let col = 0; col < this.n; col++) {
      let sum = d[col] * x[col];
      for (let p = Ap[col]; p < Ap[col + 1]; p++) sum += ax[p] * x[Ai[p]];
      out[col] = sum;
    }
    return out;
  }
}
