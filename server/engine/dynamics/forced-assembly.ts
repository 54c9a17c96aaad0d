/**
 * The complex dynamic stiffness of a model at circular frequency Ω with
 * hysteretic damping: every elastic stiffness k becomes k·(1 + 2iζ), every
 * inertia J adds −Ω²·J. Reduced by the exact elimination of statics
 * (constraints.ts: rigid meshes and couplings reflect inertia and stiffness
 * through the ratio squared; fixed supports clamp; prescribed rotations,
 * misfits and offsets have no dynamic part).
 *
 * Uniform shaft element of length h, rigidity GJ, inertia per length m = ρ·Ip
 * (kg·m), complex rigidity GJ* = GJ·(1 + 2iζ): the exact solution of
 * GJ*·φ'' + Ω²·m·φ = 0 is φ(x) = [φa·sin λ(1 − ξ) + φb·sin λξ] / sin λ,
 * ξ = x/h, λ = Ω·h·√(m/GJ*) (complex; every entry below is even in λ, so
 * the branch of the root does not matter). With k* = GJ* ÷ h:
 *   K = k* · [[λ cot λ, −λ/sin λ], [−λ/sin λ, λ cot λ]],
 *   T(ξ) = GJ*·φ' = k*·(λ/sin λ)·[φb·cos λξ − φa·cos λ(1 − ξ)].
 * λ → 0 (no density, or Ω = 0) gives the static k*·[[1, −1], [−1, 1]].
 * The sines and cosines are formed divided by cosh(Im λ), so a long, heavily
 * damped element does not overflow.
 *
 * Interior peak of |T| in a uniform element with inertia: d|T|²/dx =
 * −2Ω²m·Re(conj(T)·φ) (since dT/dx = −Ω²·m·φ, the inertia torque per length), known
 * in closed form. The element is cut into pieces of at most an eighth of a
 * wavelength (π/4 in Re λ); on each piece the sign of that derivative is read
 * at both ends, and a change from + to − is a local maximum, located by
 * bisection to 1e-15 of the element (undamped, |T| is |R·cos(βx − θ)| whose
 * critical points are π/2 apart in βx, so a piece of π/4 holds at most one).
 * The peak is the largest of the ends, the piece ends and those maxima.
 *
 * Tapered element: GJ(z) and m(z) = ρ·J(z) vary, so the transfer matrix of
 * y = (φ, T), y' = (T/GJ*(z), −Ω²·m(z)·φ) is integrated numerically: classical
 * Runge–Kutta of order 4 with N steps and 2N steps, N doubled from
 * TAPER_FIRST_STEPS until the two dynamic stiffnesses agree to TAPER_TOL
 * relative (the error of the 2N result is then about 1/15 of that
 * difference), and the Richardson value (16·K₂N − K_N)/15 taken. Its
 * interior |T| and |T|·r/J are the largest at the integration nodes of the
 * 2N run (exact at the ends; between nodes not searched: a taper's element is
 * short against a wavelength in any model with a sensible number of
 * stations).
 */
import type { ResolvedModel } from '../normalise.js';
import type { StationLayout } from '../stations.js';
import { SpringCursor, type SpringSet } from '../assemble.js';
import type { Reduction } from '../constraints.js';
import type { Workspace } from '../workspace.js';
import { polarMomentAt, outerDiameterAt, type TaperInput } from '../taper.js';
import { subTaper } from '../taper-element.js';
import type { ComplexCsc } from './complex-ldl.js';

/** First number of Runge–Kutta steps across a tapered element. */
const TAPER_FIRST_STEPS = 16;
/** Relative agreement of the N- and 2N-step dynamic stiffness of a tapered element. */
const TAPER_TOL = 1e-10;
/** Most Runge–Kutta steps across one tapered element (a bound on the work). */
const TAPER_MAX_STEPS = 1 << 14;
/** Below this |λ| the even series of λ cot λ and λ / sin λ are used (their next term is under 1e-32). */
const SMALL_LAMBDA = 1e-8;
/** Bisection steps for an interior peak of |T| (to 2⁻⁵⁰ of a piece). */
const PEAK_BISECTIONS = 50;

/**
 * Inertia of the shafts' own material, per segment numbered across all shafts
 * as recover.ts numbers them (shaft s has segBase[s] …).
 */
export interface SegmentInertia {
  /** Of a uniform segment: ρ·polar moment summed over its layers, kg·m (0: massless). */
  readonly perLength: Float64Array;
  /** Of a tapered segment: the density of its one material, kg/m³ (0: massless); unused for uniform ones. */
  readonly taperDensity: Float64Array;
}

/**
 * Segment inertias as normalise resolved them: a uniform segment's ρ·Ip per length summed over its
 * layers (`rhoIp`: round layers ρ·J of the ring, a non-circular shape ρ·its polarMoment, 0 without
 * a density), a taper's density (its ρ·Ip(z) varies along it).
 */
export function segmentInertia(model: ResolvedModel): SegmentInertia {
  let n = 0;
  for (const sh of model.shafts) n += sh.segments.length;
  const perLength = new Float64Array(n);
  const taperDensity = new Float64Array(n);
  let g = 0;
  for (const sh of model.shafts) {
    for (const sg of sh.segments) {
      if (sg.taper) taperDensity[g] = sg.taper.density ?? 0;
      else perLength[g] = sg.rhoIp ?? 0;
      g++;
    }
  }
  return { perLength, taperDensity };
}

/** The pattern of the reduced dynamic stiffness and where each part adds into it, built once. */
export interface ForcedSystem {
  /** Unknowns (those of the static reduction). */
  readonly n: number;
  readonly csc: ComplexCsc;
  /** Diagonal, real and imaginary, refilled for each Ω. */
  readonly dr: Float64Array;
  readonly di: Float64Array;
  /** Per spring (elements first): slot of its off-diagonal entry in Axr/Axi (both triangles), −1 when none. */
  readonly slotUV: Int32Array;
  readonly slotVU: Int32Array;
  /** Per element: static stiffness GJ/h (uniform), N·m/rad; h·√(m/GJ) (0: massless), s; taper flag. */
  readonly elemK: Float64Array;
  readonly elemC: Float64Array;
  readonly elemTaper: Uint8Array;
  /**
   * Per uniform element with inertia: its class, the index of its h·√(m/GJ) among the distinct
   * ones (classC); −1 otherwise. Elements of one class share λ at each Ω, so a fill computes
   * λ cot λ and λ / sin λ once per class (classLam, 4 numbers per class, at the last Ω filled).
   */
  readonly elemClass: Int32Array;
  readonly classC: Float64Array;
  readonly classLam: Float64Array;
  /** Per element: global segment index. */
  readonly elemSeg: Int32Array;
  /** Per uniform element, at the last Ω filled: k11 and k12 of its dynamic stiffness (re, im), N·m/rad. */
  readonly elemK11r: Float64Array;
  readonly elemK11i: Float64Array;
  readonly elemK12r: Float64Array;
  readonly elemK12i: Float64Array;
  /** Disc inertia at each dof, kg·m². */
  readonly dofInertia: Float64Array;
  /** The element's sub-taper of a tapered segment, G and density, by element (only tapered elements). */
  readonly tapers: ReadonlyMap<number, { readonly input: TaperInput; readonly G: number; readonly rho: number }>;
  /** Tapered elements' dynamic stiffness at the last Ω, complex [k11, k12, k22] each (6 numbers per element). */
  readonly taperK: Map<number, Float64Array>;
}

/** The pattern of the reduced system: each spring's (u, v) entry, duplicates summed into one slot. */
export function buildForcedSystem(
  model: ResolvedModel,
  layout: StationLayout,
  springs: SpringSet,
  red: Reduction,
  inertia: SegmentInertia,
  ws: Workspace,
): ForcedSystem {
  const n = red.varCount;
  const { varOf, alpha } = red;
  const m = springs.count;
  const cnt = ws.i32(n + 1);
  const spring = new SpringCursor(springs);
  const eu = ws.i32(m);
  const ev = ws.i32(m);
  for (let s = 0; s < m; s++) {
    spring.read(s);
    const u = varOf[spring.i];
    const v = spring.j >= 0 ? varOf[spring.j] : -1;
    const cu = u >= 0 ? spring.p * alpha[spring.i] : 0;
    const cv = v >= 0 ? spring.q * alpha[spring.j] : 0;
    if (u >= 0 && v >= 0 && u !== v && cu !== 0 && cv !== 0) {
      eu[s] = u;
      ev[s] = v;
      cnt[u + 1]++;
      cnt[v + 1]++;
    } else eu[s] = -1;
  }
  for (let k = 0; k < n; k++) cnt[k + 1] += cnt[k];
  const fill = ws.i32Copy(cnt, n);
  const raw = cnt[n];
  const Ai0 = ws.i32(raw);
  const rawUV = ws.i32(m);
  const rawVU = ws.i32(m);
  for (let s = 0; s < m; s++) {
    if (eu[s] < 0) continue;
    const u = eu[s];
    const v = ev[s];
    // Entry (u, v) lies in column v at row u, and (v, u) in column u at row v.
    rawUV[s] = fill[v];
    Ai0[fill[v]++] = u;
    rawVU[s] = fill[u];
    Ai0[fill[u]++] = v;
  }
  // Sum duplicates within each column: newPos maps a raw position to its slot.
  const newPos = ws.i32(raw);
  const last = ws.i32(n).fill(-1);
  const Ap = ws.i32(n + 1);
  const Ai = ws.i32(raw);
  let w = 0;
  for (let c = 0; c < n; c++) {
    const start = w;
    for (let p = cnt[c]; p < cnt[c + 1]; p++) {
      const r = Ai0[p];
      if (last[r] >= start) newPos[p] = last[r];
      else {
        last[r] = w;
        Ai[w] = r;
        newPos[p] = w++;
      }
    }
    Ap[c + 1] = w;
  }
  const slotUV = ws.i32(m);
  const slotVU = ws.i32(m);
  for (let s = 0; s < m; s++) {
    if (eu[s] < 0) {
      slotUV[s] = -1;
      slotVU[s] = -1;
    } else {
      slotUV[s] = newPos[rawUV[s]];
      slotVU[s] = newPos[rawVU[s]];
    }
  }
  const csc: ComplexCsc = { n, Ap, Ai: Ai.subarray(0, w), Axr: ws.f64(w), Axi: ws.f64(w) };

  // Elements: static stiffness and the inertia constant of λ; tapers apart.
  const { z, elemLeft, elemSegment, shaftOf } = layout;
  const ne = springs.elemCount;
  const elemK = ws.f64(ne);
  const elemC = ws.f64(ne);
  const elemTaper = ws.u8(ne);
  const elemSeg = ws.i32(ne);
  const segBase: number[] = [0];
  for (const sh of model.shafts) segBase.push(segBase[segBase.length - 1] + sh.segments.length);
  const tapers = new Map<number, { input: TaperInput; G: number; rho: number }>();
  for (let e = 0; e < ne; e++) {
    const d = elemLeft[e];
    const s = shaftOf[d];
    const sg = model.shafts[s].segments[elemSegment[e]];
    const g = segBase[s] + elemSegment[e];
    elemSeg[e] = g;
    const h = z[d + 1] - z[d];
    if (sg.taper) {
      elemTaper[e] = 1;
      tapers.set(e, { input: subTaper(sg, sg.taper, z[d], z[d + 1]), G: sg.taper.G, rho: inertia.taperDensity[g] });
      continue;
    }
    elemK[e] = sg.rigidity / h;
    const mass = inertia.perLength[g];
    elemC[e] = mass > 0 ? h * Math.sqrt(mass / sg.rigidity) : 0;
  }
  const elemClass = ws.i32(ne);
  const classOf = new Map<number, number>();
  for (let e = 0; e < ne; e++) {
    const c = elemC[e];
    if (elemTaper[e] || c === 0) {
      elemClass[e] = -1;
      continue;
    }
    let k = classOf.get(c);
    if (k === undefined) classOf.set(c, (k = classOf.size));
    elemClass[e] = k;
  }
  const classC = ws.f64(classOf.size);
  for (const [c, k] of classOf) classC[k] = c;
  const dofInertia = ws.f64(layout.dofCount);
  for (const disc of model.discs) dofInertia[layout.stationAt(disc.shaft, disc.z)] += disc.inertia;
  return {
    n,
    csc,
    dr: ws.f64(n),
    di: ws.f64(n),
    slotUV,
    slotVU,
    elemK,
    elemC,
    elemTaper,
    elemClass,
    classC,
    classLam: ws.f64(4 * classOf.size),
    elemSeg,
    elemK11r: ws.f64(ne),
    elemK11i: ws.f64(ne),
    elemK12r: ws.f64(ne),
    elemK12i: ws.f64(ne),
    dofInertia,
    tapers,
    taperK: new Map(),
  };
}

/**
 * λ cot λ and λ / sin λ of a complex λ = (a, b), into out[0..3] (re, im, re, im).
 * Sines and cosines are divided by cosh b (see the header).
 */
export function lambdaFunctions(a: number, b: number, out: Float64Array): void {
  if (Math.hypot(a, b) < SMALL_LAMBDA) {
    // λ cot λ = 1 − λ²/3, λ / sin λ = 1 + λ²/6 (next terms O(λ⁴) < 1e-32).
    const l2r = a * a - b * b;
    const l2i = 2 * a * b;
    out[0] = 1 - l2r / 3;
    out[1] = -l2i / 3;
    out[2] = 1 + l2r / 6;
    out[3] = l2i / 6;
    return;
  }
  const t = Math.tanh(b);
  const sech = Math.abs(b) > 700 ? 0 : 1 / Math.cosh(b);
  const sa = Math.sin(a);
  const ca = Math.cos(a);
  // S = sin λ / cosh b, C = cos λ / cosh b
  const Sr = sa;
  const Si = ca * t;
  const Cr = ca;
  const Ci = -sa * t;
  const den = Sr * Sr + Si * Si;
  // cot = C / S
  const cr = (Cr * Sr + Ci * Si) / den;
  const ci = (Ci * Sr - Cr * Si) / den;
  out[0] = a * cr - b * ci;
  out[1] = a * ci + b * cr;
  // 1/sin λ = sech / S
  const ir = (sech * Sr) / den;
  const ii = (-sech * Si) / den;
  out[2] = a * ir - b * ii;
  out[3] = a * ii + b * ir;
}

/** cos of a complex (a, b), into out[at], out[at + 1]. */
function ccos(a: number, b: number, out: Float64Array, at: number): void {
  out[at] = Math.cos(a) * Math.cosh(b);
  out[at + 1] = -Math.sin(a) * Math.sinh(b);
}

/** sin of a complex (a, b), into out[at], out[at + 1]. */
function csin(a: number, b: number, out: Float64Array, at: number): void {
  out[at] = Math.sin(a) * Math.cosh(b);
  out[at + 1] = Math.cos(a) * Math.sinh(b);
}

/** Work space of the per-frequency routines (one per forced-response run: nothing shared). */
export function forcedScratch(): Float64Array {
  return new Float64Array(32);
}

/**
 * Fills the reduced dynamic stiffness at Ω (rad/s) with damping ζ: csc.Axr/Axi
 * and dr/di. `w` is 1/√(1 + 2iζ) (re, im): λ = Ω·c·w for an element of constant c.
 */
export function fillDynamicStiffness(
  sys: ForcedSystem,
  springs: SpringSet,
  red: Reduction,
  omega: number,
  zeta: number,
  scratch: Float64Array,
): void {
  const { csc, dr, di, slotUV, slotVU, elemK, elemC, elemTaper } = sys;
  const { varOf, alpha } = red;
  csc.Axr.fill(0);
  csc.Axi.fill(0);
  dr.fill(0);
  di.fill(0);
  const damp = 2 * zeta;
  const [wr, wi] = invSqrtOnePlus(damp);
  const spring = new SpringCursor(springs);
  const add = (s: number, u: number, v: number, cu: number, cv: number, k11r: number, k11i: number, k12r: number, k12i: number, k22r: number, k22i: number) => {
    // Energy-consistent reduction: φ_i = cu-scaled unknown u, φ_j = cv-scaled unknown v.
    if (u >= 0 && u === v) {
      const f11 = cu * cu;
      const f12 = 2 * cu * cv;
      const f22 = cv * cv;
      dr[u] += k11r * f11 + k12r * f12 + k22r * f22;
      di[u] += k11i * f11 + k12i * f12 + k22i * f22;
      return;
    }
    if (u >= 0) {
      dr[u] += k11r * cu * cu;
      di[u] += k11i * cu * cu;
    }
    if (v >= 0) {
      dr[v] += k22r * cv * cv;
      di[v] += k22i * cv * cv;
    }
    const slot = slotUV[s];
    if (slot >= 0) {
      const f = cu * cv;
      csc.Axr[slot] += k12r * f;
      csc.Axi[slot] += k12i * f;
      const slot2 = slotVU[s];
      csc.Axr[slot2] += k12r * f;
      csc.Axi[slot2] += k12i * f;
    }
  };
  const ne = springs.elemCount;
  const { elemClass, classC, classLam } = sys;
  for (let k = 0; k < classC.length; k++) {
    lambdaFunctions(omega * classC[k] * wr, omega * classC[k] * wi, scratch);
    classLam[4 * k] = scratch[0];
    classLam[4 * k + 1] = scratch[1];
    classLam[4 * k + 2] = scratch[2];
    classLam[4 * k + 3] = scratch[3];
  }
  for (let s = 0; s < springs.count; s++) {
    spring.read(s);
    const u = varOf[spring.i];
    const v = spring.j >= 0 ? varOf[spring.j] : -1;
    if (u < 0 && v < 0) continue;
    // The spring's own coefficients p, q enter as p·α_i and q·α_j (as in assemble.ts).
    const cu = u >= 0 ? spring.p * alpha[spring.i] : 0;
    const cv = v >= 0 ? spring.q * alpha[spring.j] : 0;
    if (s < ne) {
      // A shaft element: its 2×2 in (φ_left, φ_right), with p = −1, q = 1 folded into the signs.
      let k11r: number, k11i: number, k12r: number, k12i: number, k22r: number, k22i: number;
      if (elemTaper[s]) {
        const t = taperDynamicStiffness(sys, s, omega, zeta);
        k11r = t[0];
        k11i = t[1];
        k12r = t[2];
        k12i = t[3];
        k22r = t[4];
        k22i = t[5];
      } else {
        const k = elemK[s];
        if (elemC[s] === 0) {
          // Massless: k* = k (1 + 2iζ).
          k11r = k;
          k11i = k * damp;
          k12r = -k;
          k12i = -k * damp;
        } else {
          // λ = Ω·c·w of the element's class (computed above, as lambdaFunctions(Ω·c·wr, Ω·c·wi)).
          const L = 4 * elemClass[s];
          k11r = k * (classLam[L] - damp * classLam[L + 1]);
          k11i = k * (classLam[L + 1] + damp * classLam[L]);
          k12r = -k * (classLam[L + 2] - damp * classLam[L + 3]);
          k12i = -k * (classLam[L + 3] + damp * classLam[L + 2]);
        }
        k22r = k11r;
        k22i = k11i;
        sys.elemK11r[s] = k11r;
        sys.elemK11i[s] = k11i;
        sys.elemK12r[s] = k12r;
        sys.elemK12i[s] = k12i;
      }
      // cu = −α_i, cv = α_j: the element matrix acts on (φ_i, φ_j) = (−cu·x_u, cv·x_v).
      add(s, u, v, cu, cv, k11r, k11i, -k12r, -k12i, k22r, k22i);
      continue;
    }
    const k = springs.k[s];
    // k (1 + 2iζ)·(cu·x_u + cv·x_v)²
    add(s, u, v, cu, cv, k, k * damp, k, k * damp, k, k * damp);
  }
  const w2 = omega * omega;
  const J = sys.dofInertia;
  for (let d = 0; d < J.length; d++) {
    if (J[d] === 0) continue;
    const u = varOf[d];
    if (u < 0) continue;
    dr[u] -= w2 * J[d] * alpha[d] * alpha[d];
  }
}

/** 1/√(1 + i·x) (principal root), as [re, im]. */
export function invSqrtOnePlus(x: number): [number, number] {
  // √(1 + ix) = (p, q) with p = √((|1+ix| + 1)/2), q = x/(2p)
  const mod = Math.hypot(1, x);
  const p = Math.sqrt((mod + 1) / 2);
  const q = x / (2 * p);
  const den = p * p + q * q;
  return [p / den, -q / den];
}

/** Sets uniform element e's k11, k12 (sys.elemK11r …) to its dynamic stiffness at Ω, as a fill would. */
export function elementStiffnessAt(sys: ForcedSystem, e: number, omega: number, zeta: number, wr: number, wi: number, scratch: Float64Array): void {
  const k = sys.elemK[e];
  const damp = 2 * zeta;
  const c = sys.elemC[e];
  if (c === 0) {
    sys.elemK11r[e] = k;
    sys.elemK11i[e] = k * damp;
    sys.elemK12r[e] = -k;
    sys.elemK12i[e] = -k * damp;
    return;
  }
  lambdaFunctions(omega * c * wr, omega * c * wi, scratch);
  sys.elemK11r[e] = k * (scratch[0] - damp * scratch[1]);
  sys.elemK11i[e] = k * (scratch[1] + damp * scratch[0]);
  sys.elemK12r[e] = -k * (scratch[2] - damp * scratch[3]);
  sys.elemK12i[e] = -k * (scratch[3] + damp * scratch[2]);
}

/**
 * The largest |T| along uniform element e at the Ω of the last fill, from its complex end
 * rotations. The end torques come from its stiffness, T(0+) = −(k11·φa + k12·φb) and
 * T(h−) = k12·φa + k11·φb, with no trigonometry; the sign of d|T|²/dx at the ends is
 * −Re(conj(T)·φ) there. Only an element longer than an eighth of a wavelength (π/4 in Re λ) or whose ends'
 * slopes say a maximum lies inside (+ at the start, − at the end) is searched inside by
 * `uniformInteriorPeak`.
 */
export function uniformElementPeakAt(
  sys: ForcedSystem,
  e: number,
  omega: number,
  damp: number,
  wr: number,
  wi: number,
  par: number,
  pai: number,
  pbr: number,
  pbi: number,
  scratch: Float64Array,
): number {
  const ar = sys.elemK11r[e];
  const ai = sys.elemK11i[e];
  const br = sys.elemK12r[e];
  const bi = sys.elemK12i[e];
  const T0r = -(ar * par - ai * pai + br * pbr - bi * pbi);
  const T0i = -(ar * pai + ai * par + br * pbi + bi * pbr);
  const T1r = br * par - bi * pai + ar * pbr - ai * pbi;
  const T1i = br * pai + bi * par + ar * pbi + ai * pbr;
  const ends = Math.max(Math.hypot(T0r, T0i), Math.hypot(T1r, T1i));
  const c = sys.elemC[e];
  if (c === 0 || omega === 0) return ends;
  const quarterWaves = Math.abs(omega * c * wr) / (Math.PI / 4);
  const s0 = -(T0r * par + T0i * pai);
  const s1 = -(T1r * pbr + T1i * pbi);
  if (quarterWaves <= 1 && !(s0 > 0 && s1 < 0)) return ends;
  return Math.max(ends, uniformElementPeak(sys.elemK[e], c, omega, damp, wr, wi, par, pai, pbr, pbi, scratch));
}

/**
 * The largest |T| along a uniform element and its end torques, from the
 * complex end rotations, by the closed form (see the header). k: GJ/h; c: h·√(m/GJ); w: 1/√(1+2iζ).
 * Answers max |T|; `out[0..3]` get T(0+) and T(h−) (re, im).
 */
export function uniformElementPeak(
  k: number,
  c: number,
  omega: number,
  damp: number,
  wr: number,
  wi: number,
  par: number,
  pai: number,
  pbr: number,
  pbi: number,
  out: Float64Array,
): number {
  const ksr = k;
  const ksi = k * damp;
  if (c === 0 || omega === 0) {
    const dr = pbr - par;
    const di = pbi - pai;
    const tr = ksr * dr - ksi * di;
    const ti = ksr * di + ksi * dr;
    out[0] = tr;
    out[1] = ti;
    out[2] = tr;
    out[3] = ti;
    return Math.hypot(tr, ti);
  }
  const lr = omega * c * wr;
  const li = omega * c * wi;
  lambdaFunctions(lr, li, out);
  // g = k* · λ / sin λ
  const gr = ksr * out[2] - ksi * out[3];
  const gi = ksr * out[3] + ksi * out[2];
  // T(ξ) = g·[φb cos λξ − φa cos λ(1−ξ)];  φ(ξ) = [φa sin λ(1−ξ) + φb sin λξ] / sin λ
  const sinL = out; // reuse slots 4.. for trig
  const torque = (xi: number, into: number): void => {
    ccos(lr * xi, li * xi, sinL, 8);
    ccos(lr * (1 - xi), li * (1 - xi), sinL, 10);
    const br = pbr * sinL[8] - pbi * sinL[9] - (par * sinL[10] - pai * sinL[11]);
    const bi = pbr * sinL[9] + pbi * sinL[8] - (par * sinL[11] + pai * sinL[10]);
    out[into] = gr * br - gi * bi;
    out[into + 1] = gr * bi + gi * br;
  };
  // Sign of d|T|²/dξ: −Re(conj(T)·φ·sin λ) / |sin λ|²·|…|; the positive factor |sin λ|⁻² is dropped,
  // so φ·sin λ = φa sin λ(1−ξ) + φb sin λξ is used and the result multiplied by conj(sin λ).
  csin(lr, li, sinL, 16);
  const slope = (xi: number): number => {
    torque(xi, 12);
    csin(lr * xi, li * xi, sinL, 18);
    csin(lr * (1 - xi), li * (1 - xi), sinL, 20);
    // ps = φ·sin λ
    const psr = par * sinL[20] - pai * sinL[21] + pbr * sinL[18] - pbi * sinL[19];
    const psi = par * sinL[21] + pai * sinL[20] + pbr * sinL[19] + pbi * sinL[18];
    // φ = ps / sin λ ∝ ps·conj(sin λ)
    const fr = psr * sinL[16] + psi * sinL[17];
    const fi = psi * sinL[16] - psr * sinL[17];
    return -(out[12] * fr + out[13] * fi);
  };
  torque(0, 4);
  torque(1, 6);
  const T0r = out[4];
  const T0i = out[5];
  const T1r = out[6];
  const T1i = out[7];
  let best = Math.max(Math.hypot(T0r, T0i), Math.hypot(T1r, T1i));
  const pieces = Math.max(1, Math.ceil(Math.abs(lr) / (Math.PI / 4)));
  let xa = 0;
  let sa = slope(0);
  for (let p = 1; p <= pieces; p++) {
    const xb = p / pieces;
    const sb = slope(xb);
    if (p < pieces) {
      torque(xb, 12);
      best = Math.max(best, Math.hypot(out[12], out[13]));
    }
    if (sa > 0 && sb < 0) {
      let lo = xa;
      let hi = xb;
      for (let it = 0; it < PEAK_BISECTIONS; it++) {
        const mid = 0.5 * (lo + hi);
        if (slope(mid) > 0) lo = mid;
        else hi = mid;
      }
      torque(0.5 * (lo + hi), 12);
      best = Math.max(best, Math.hypot(out[12], out[13]));
    }
    xa = xb;
    sa = sb;
  }
  out[0] = T0r;
  out[1] = T0i;
  out[2] = T1r;
  out[3] = T1i;
  return best;
}

/**
 * Runge–Kutta transfer of (φ, T) across a tapered element with `steps` steps, for the
 * initial state (φ0, T0) complex; calls `visit(x, Tr, Ti)` at every node when given.
 * Answers the end state [φr, φi, Tr, Ti].
 */
function taperMarch(
  t: { readonly input: TaperInput; readonly G: number; readonly rho: number },
  omega: number,
  damp: number,
  steps: number,
  y0: readonly [number, number, number, number],
  visit?: (x: number, Tr: number, Ti: number) => void,
): [number, number, number, number] {
  const L = t.input.length;
  const h = L / steps;
  const w2 = omega * omega;
  // 1/GJ* = 1/(G J (1 + 2iζ)) = (1 − 2iζ)/(G J (1 + 4ζ²))
  const scale = 1 / (1 + damp * damp);
  const f = (x: number, y: number[], k: number[]): void => {
    const J = polarMomentAt(t.input, x);
    const inv = scale / (t.G * J);
    // φ' = T / GJ*
    k[0] = inv * (y[2] + damp * y[3]);
    k[1] = inv * (y[3] - damp * y[2]);
    // T' = −Ω² ρ J φ
    const mw = -w2 * t.rho * J;
    k[2] = mw * y[0];
    k[3] = mw * y[1];
  };
  let y = [y0[0], y0[1], y0[2], y0[3]];
  const k1 = [0, 0, 0, 0];
  const k2 = [0, 0, 0, 0];
  const k3 = [0, 0, 0, 0];
  const k4 = [0, 0, 0, 0];
  const tmp = [0, 0, 0, 0];
  if (visit) visit(0, y[2], y[3]);
  for (let s = 0; s < steps; s++) {
    const x = s * h;
    f(x, y, k1);
    for (let i = 0; i < 4; i++) tmp[i] = y[i] + 0.5 * h * k1[i];
    f(x + 0.5 * h, tmp, k2);
    for (let i = 0; i < 4; i++) tmp[i] = y[i] + 0.5 * h * k2[i];
    f(x + 0.5 * h, tmp, k3);
    for (let i = 0; i < 4; i++) tmp[i] = y[i] + h * k3[i];
    f(x + h, tmp, k4);
    y = y.map((v, i) => v + (h / 6) * (k1[i] + 2 * k2[i] + 2 * k3[i] + k4[i]));
    if (visit) visit(x + h, y[2], y[3]);
  }
  return [y[0], y[1], y[2], y[3]];
}

/** Complex division (a / b), [re, im]. */
function cdiv(ar: number, ai: number, br: number, bi: number): [number, number] {
  const den = br * br + bi * bi;
  return [(ar * br + ai * bi) / den, (ai * br - ar * bi) / den];
}

/** [k11, k12, k22] complex of a tapered element with `steps` steps, from its transfer matrix. */
function taperStiffnessSteps(t: { readonly input: TaperInput; readonly G: number; readonly rho: number }, omega: number, damp: number, steps: number): Float64Array {
  const a = taperMarch(t, omega, damp, steps, [1, 0, 0, 0]); // (φ, T)(L) from φ(0) = 1, T(0) = 0
  const b = taperMarch(t, omega, damp, steps, [0, 0, 1, 0]); // from φ(0) = 0, T(0) = 1
  // φ(L) = t11 φ0 + t12 T0, T(L) = t21 φ0 + t22 T0
  const [t11r, t11i, t21r, t21i] = a;
  const [t12r, t12i, t22r, t22i] = b;
  // Nodal torques: at the start −T0, at the end +T(L). T0 = (φb − t11 φa)/t12.
  const [k11r, k11i] = cdiv(t11r, t11i, t12r, t12i);
  const [i12r, i12i] = cdiv(1, 0, t12r, t12i);
  const [k22r, k22i] = cdiv(t22r, t22i, t12r, t12i);
  const out = new Float64Array(6);
  out[0] = k11r;
  out[1] = k11i;
  out[2] = -i12r;
  out[3] = -i12i;
  out[4] = k22r;
  out[5] = k22i;
  return out;
}

/** The dynamic stiffness of tapered element e at Ω (cached for the last Ω in sys.taperK), with its step count in [6]. */
export function taperDynamicStiffness(sys: ForcedSystem, e: number, omega: number, zeta: number): Float64Array {
  const t = sys.tapers.get(e)!;
  const damp = 2 * zeta;
  let steps = TAPER_FIRST_STEPS;
  let coarse = taperStiffnessSteps(t, omega, damp, steps);
  for (;;) {
    const fine = taperStiffnessSteps(t, omega, damp, 2 * steps);
    let diff = 0;
    let size = 0;
    for (let i = 0; i < 6; i++) {
      diff = Math.max(diff, Math.abs(fine[i] - coarse[i]));
      size = Math.max(size, Math.abs(fine[i]));
    }
    if (diff <= TAPER_TOL * size || 2 * steps >= TAPER_MAX_STEPS) {
      const out = new Float64Array(7);
      for (let i = 0; i < 6; i++) out[i] = (16 * fine[i] - coarse[i]) / 15;
      out[6] = 2 * steps;
      sys.taperK.set(e, out);
      return out;
    }
    coarse = fine;
    steps *= 2;
  }
}

/**
 * The largest |T| and |T|·r/J along a tapered element from its end rotations at the Ω of
 * its last stiffness (sys.taperK), at the nodes of the Runge–Kutta march.
 */
export function taperElementPeak(
  sys: ForcedSystem,
  e: number,
  omega: number,
  zeta: number,
  par: number,
  pai: number,
  pbr: number,
  pbi: number,
): { torque: number; shear: number } {
  const t = sys.tapers.get(e)!;
  const K = sys.taperK.get(e)!;
  // T(0+) = −(k11 φa + k12 φb)
  const T0r = -(K[0] * par - K[1] * pai + K[2] * pbr - K[3] * pbi);
  const T0i = -(K[0] * pai + K[1] * par + K[2] * pbi + K[3] * pbr);
  let torque = 0;
  let shear = 0;
  const visit = (x: number, Tr: number, Ti: number) => {
    const a = Math.hypot(Tr, Ti);
    if (a > torque) torque = a;
    const s = (a * outerDiameterAt(t.input, x)) / 2 / polarMomentAt(t.input, x);
    if (s > shear) shear = s;
  };
  // Massless or static, T is constant, but r/J still varies along the taper: the same nodes serve.
  taperMarch(t, omega, 2 * zeta, K[6], [par, pai, T0r, T0i], visit);
  return { torque, shear };
}
