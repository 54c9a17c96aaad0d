/**
 * Tapered segments: a section that varies linearly along the segment, solid to solid (d linear)
 * or hollow to hollow (outer diameter and bore each linear). One material, shear modulus G (Pa).
 *
 * With z ∈ [0, L] (m), J(z) = π (d_o(z)⁴ − d_i(z)⁴)/32 (m⁴), g(z) = 1/J(z) and F(z) = ∫₀ᶻ g:
 * - flexibility f = F(L)/G (rad/(N·m)), stiffness k = 1/f (N·m/rad);
 * - exact shape function N(z) = F(z)/F(L) (the rotation of the unloaded segment is
 *   φa + (φb − φa)·N(z), since G·J·φ' = T is constant);
 * - distributed torque t(z) = ta + (tb − ta)·z/L (N·m/m), Q(z) = ∫₀ᶻ t; equilibrium T' = −t gives
 *   T(z) = T(0+) − Q(z) and G·J·φ' = T. The consistent nodal loads f_a = ∫ t(1 − N), f_b = ∫ t N
 *   become, by parts, f_a = ∫₀ᴸ Q·g dz / F(L) and f_b = Q(L) − f_a; with them the nodal rotations of
 *   the assembled system are exact, and inside the segment
 *     T(0+) = k·(φb − φa) + f_a,   φ(z) = φa + (T(0+)·F(z) − ∫₀ᶻ Q·g) / G,
 *     τ(z) = T(z)·r_o(z)/J(z) (outer fibre, Pa).
 *   (Sign convention as recover.ts: T = G·J·φ', G·J·φ'' = −t for a uniform element.)
 *
 * Integrals. Solid: F(z) in closed form (Gere & Goodno, torsion of a tapered bar, from memory):
 *   ∫₀ᶻ dζ/d(ζ)⁴ = z·(d² + d·dA + dA²)/(3·dA³·d³), d = d(z), written without the difference
 *   1/dA³ − 1/d³ so that a nearly uniform taper loses no digits (dA = dB gives z/dA⁴ exactly).
 * Hollow, and the load moments ∫ Q·g: adaptive Gauss–Legendre. Each panel is accepted when the
 * 20-point rule and the sum of the 20-point rules on its halves agree to INTEGRAL_TOL of ∫|f|;
 * the integrands are smooth and their poles lie off [0, L] (the wall and the diameters stay
 * positive), so the rule converges geometrically. Proof by test: against the exact primitive of
 * 1/(p·q·(p² + q²)) (tests/reference/taper.test.ts) to 1e-13.
 *
 * Peak stress. Solid: τ ∝ (T0 − Q(z))/d(z)³, and dτ/dz = 0 is the quadratic
 *   (c·s/2)·z² + (2s·ta − c·dA)·z − (ta·dA + 3s·T0) = 0   (s = d', c = t'),
 * so the peak is the largest |τ| among the ends and the roots inside (exact). Hollow: |τ| is sampled
 * at PEAK_SAMPLES + 1 points; around every sampled local maximum (ends included) a golden-section
 * search on the neighbouring bracket converges z to 1e-13·L, so the peak value (flat at an interior
 * maximum) is exact to far better than 1e-12 relative. (dτ/dz has at most six roots there.)
 */

/** Relative agreement asked of a Gauss–Legendre panel, dimensionless. */
const INTEGRAL_TOL = 1e-15;
/** Round-off floor of a panel's two estimates, relative to ∫|f| over it (≈ 40 roundings of eps). */
const ROUNDOFF = 1e-14;
/** Deepest panel halving (at most 2¹² panels: a bound on the work, never reached by these integrands). */
const MAX_DEPTH = 12;
/** Samples of |τ| along the segment before the golden-section refinement. */
const PEAK_SAMPLES = 64;
/** Golden-section bracket width at which the search stops, relative to L. */
const PEAK_TOL = 1e-13;

export interface TaperInput {
  /** Length, m. */
  readonly length: number;
  /** Outer diameters at the start (A) and end (B), m. */
  readonly dA: number;
  readonly dB: number;
  /** Bores at the start and end, m (0 or absent: solid). Both zero or both positive. */
  readonly diA?: number;
  readonly diB?: number;
}

/** A field out of range, named as in the input (`dB`, `diA`, …). */
export interface TaperProblem {
  readonly field: keyof TaperInput;
  readonly message: string;
}

/** Fields out of range (empty when the taper is valid). */
export function taperProblems(t: TaperInput): TaperProblem[] {
  const out: TaperProblem[] = [];
  const need = (field: keyof TaperInput, v: number, positive: boolean): void => {
    if (!Number.isFinite(v) || (positive ? v <= 0 : v < 0)) out.push({ field, message: `${field} must be ${positive ? 'positive' : 'zero or positive'}, got ${v}` });
  };
  need('length', t.length, true);
  need('dA', t.dA, true);
  need('dB', t.dB, true);
  const diA = t.diA ?? 0;
  const diB = t.diB ?? 0;
  need('diA', diA, false);
  need('diB', diB, false);
  if ((diA > 0) !== (diB > 0)) out.push({ field: diA > 0 ? 'diB' : 'diA', message: 'a taper is solid at both ends or hollow at both ends' });
  if (diA > 0 && diA >= t.dA) out.push({ field: 'diA', message: `bore ${diA} m must be smaller than the outer diameter ${t.dA} m` });
  if (diB > 0 && diB >= t.dB) out.push({ field: 'diB', message: `bore ${diB} m must be smaller than the outer diameter ${t.dB} m` });
  return out;
}

function check(t: TaperInput): void {
  const p = taperProblems(t);
  if (p.length > 0) throw new RangeError(p.map((x) => `${x.field}: ${x.message}`).join('; '));
}

function isSolid(t: TaperInput): boolean {
  return !((t.diA ?? 0) > 0);
}

/** Outer diameter at z, m. */
export function outerDiameterAt(t: TaperInput, z: number): number {
  return t.dA + ((t.dB - t.dA) * z) / t.length;
}

/** Bore at z, m (0 for a solid taper). */
export function boreAt(t: TaperInput, z: number): number {
  const a = t.diA ?? 0;
  const b = t.diB ?? 0;
  return a + ((b - a) * z) / t.length;
}

/** Polar moment J(z) = π (d_o⁴ − d_i⁴)/32, m⁴ (factored so that a thin wall keeps its digits). */
export function polarMomentAt(t: TaperInput, z: number): number {
  const o = outerDiameterAt(t, z);
  const i = boreAt(t, z);
  return (Math.PI / 32) * (o - i) * (o + i) * (o * o + i * i);
}

// Gauss–Legendre nodes and weights on [−1, 1], by Newton's method on P_n (full double precision).
function gaussLegendre(n: number): { readonly x: Float64Array; readonly w: Float64Array } {
  const x = new Float64Array(n);
  const w = new Float64Array(n);
  for (let i = 0; i < Math.ceil(n / 2); i++) {
    let r = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1;
      let p1 = r;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * r * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      dp = (n * (r * p1 - p0)) / (r * r - 1);
      const dr = p1 / dp;
      r -= dr;
      if (Math.abs(dr) <= 1e-16) break;
    }
    x[i] = -r;
    x[n - 1 - i] = r;
    w[i] = w[n - 1 - i] = 2 / ((1 - r * r) * dp * dp);
  }
  return { x, w };
}

const GL20 = gaussLegendre(20);

/** 20-point rule on [a, b]: the integral and the integral of |f| (the size the tolerance is relative to). */
function gl(f: (z: number) => number, a: number, b: number): { readonly value: number; readonly size: number } {
  const m = (a + b) / 2;
  const h = (b - a) / 2;
  let s = 0;
  let sa = 0;
  for (let i = 0; i < 20; i++) {
    const v = GL20.w[i]! * f(m + h * GL20.x[i]!);
    s += v;
    sa += Math.abs(v);
  }
  return { value: s * h, size: Math.abs(sa * h) };
}

/**
 * ∫_a^b f by adaptive 20-point Gauss–Legendre (see the header). The tolerance is relative to
 * ∫|f|, not to the result, so an integral that cancels to nearly zero still stops; and a panel
 * whose two estimates differ by no more than their round-off (ROUNDOFF·∫|f| over it) is accepted.
 */
export function integrate(f: (z: number) => number, a: number, b: number): number {
  if (a === b) return 0;
  const whole = gl(f, a, b);
  const scale = whole.size;
  const rec = (lo: number, hi: number, est: number, depth: number): number => {
    const mid = (lo + hi) / 2;
    const left = gl(f, lo, mid);
    const right = gl(f, mid, hi);
    const both = left.value + right.value;
    const diff = Math.abs(both - est);
    if (diff <= INTEGRAL_TOL * scale || diff <= ROUNDOFF * (left.size + right.size) || depth >= MAX_DEPTH) return both;
    return rec(lo, mid, left.value, depth + 1) + rec(mid, hi, right.value, depth + 1);
  };
  return rec(a, b, whole.value, 0);
}

/** F(z) = ∫₀ᶻ dζ / J(ζ), m⁻³. */
export function inverseMomentIntegral(t: TaperInput, z: number): number {
  check(t);
  if (isSolid(t)) {
    const a = t.dA;
    const d = outerDiameterAt(t, z);
    return (32 / Math.PI) * ((z * (d * d + d * a + a * a)) / (3 * a ** 3 * d ** 3));
  }
  return integrate((s) => 1 / polarMomentAt(t, s), 0, z);
}

/** Flexibility f = ∫₀ᴸ dz/(G J), rad/(N·m). */
export function taperFlexibility(t: TaperInput, G: number): number {
  return inverseMomentIntegral(t, t.length) / G;
}

/** Stiffness k = 1/f, N·m/rad. */
export function taperStiffness(t: TaperInput, G: number): number {
  return 1 / taperFlexibility(t, G);
}

/** Exact shape function N(z) = F(z)/F(L), from 0 at the start to 1 at the end. */
export function shapeFunction(t: TaperInput, z: number): number {
  return inverseMomentIntegral(t, z) / inverseMomentIntegral(t, t.length);
}

/** Q(z) = ∫₀ᶻ t for t linear from ta to tb over L, N·m. */
function loadIntegral(L: number, ta: number, tb: number, z: number): number {
  return ta * z + ((tb - ta) * z * z) / (2 * L);
}

/** ∫₀ᶻ Q·g, (N·m)·m⁻³·m. */
function loadMoment(t: TaperInput, ta: number, tb: number, z: number): number {
  if (ta === 0 && tb === 0) return 0;
  return integrate((s) => loadIntegral(t.length, ta, tb, s) / polarMomentAt(t, s), 0, z);
}

/** Consistent nodal loads of t(z) = ta + (tb − ta)·z/L (N·m/m): f_a = ∫ t(1 − N), f_b = ∫ t N, N·m. */
export function consistentLoads(t: TaperInput, ta: number, tb: number, FL?: number): { readonly fa: number; readonly fb: number } {
  // FL: F(L) when the caller has it already (G / stiffness), to save an integral.
  const F = FL ?? inverseMomentIntegral(t, t.length);
  const fa = loadMoment(t, ta, tb, t.length) / F;
  return { fa, fb: loadIntegral(t.length, ta, tb, t.length) - fa };
}

export interface TaperState {
  /** T(0+), N·m. */
  readonly torqueStart: number;
  /** T(L−), N·m. */
  readonly torqueEnd: number;
  torqueAt(z: number): number;
  /** φ(z), rad. */
  rotationAt(z: number): number;
  /** τ(z) = T r_o / J at the outer fibre, Pa (signed as T). */
  shearAt(z: number): number;
  /** The largest |τ| along the segment and where, m from the start. */
  readonly peak: { readonly z: number; readonly shear: number };
}

/**
 * The exact state inside a tapered segment from its nodal rotations (rad) and its distributed
 * torque (N·m/m, linear from ta at the start to tb at the end).
 */
export function taperState(t: TaperInput, G: number, phiA: number, phiB: number, ta = 0, tb = 0): TaperState {
  check(t);
  const L = t.length;
  const FL = inverseMomentIntegral(t, L);
  const k = G / FL;
  const fa = loadMoment(t, ta, tb, L) / FL;
  return taperStateFromTorque(t, G, phiA, phiB, k * (phiB - phiA) + fa, ta, tb);
}

/**
 * The same state from T(0+) (N·m) when the caller has it already (the element's end torque of
 * the recovery): nothing is integrated until a rotation inside is asked for.
 */
export function taperStateFromTorque(t: TaperInput, G: number, phiA: number, phiB: number, T0: number, ta = 0, tb = 0): TaperState {
  const L = t.length;
  const torqueAt = (z: number): number => T0 - loadIntegral(L, ta, tb, z);
  const shearAt = (z: number): number => (torqueAt(z) * outerDiameterAt(t, z)) / 2 / polarMomentAt(t, z);
  const rotationAt = (z: number): number => {
    if (z <= 0) return phiA;
    if (z >= L) return phiB;
    return phiA + (T0 * inverseMomentIntegral(t, z) - loadMoment(t, ta, tb, z)) / G;
  };
  const absShear = (z: number): number => Math.abs(shearAt(z));
  const peak = isSolid(t) ? solidPeak(absShear, L, t.dA, (t.dB - t.dA) / L, ta, (tb - ta) / L, T0) : peakAbs(absShear, L);
  return { torqueStart: T0, torqueEnd: torqueAt(L), torqueAt, rotationAt, shearAt, peak };
}

/** Largest |τ| of a solid taper: the ends and the roots of dτ/dz inside (see the header). */
function solidPeak(
  absShear: (z: number) => number,
  L: number,
  dA: number,
  s: number,
  ta: number,
  c: number,
  T0: number,
): { readonly z: number; readonly shear: number } {
  const candidates = [0, L, ...quadraticRoots((c * s) / 2, 2 * s * ta - c * dA, -(ta * dA + 3 * s * T0))];
  let z = 0;
  let shear = -1;
  for (const x of candidates) {
    if (!(x >= 0 && x <= L)) continue;
    const v = absShear(x);
    if (v > shear) {
      shear = v;
      z = x;
    }
  }
  return { z, shear };
}

/** Real roots of a·x² + b·x + c = 0 (a may be 0), without cancellation. */
function quadraticRoots(a: number, b: number, c: number): number[] {
  if (a === 0) return b === 0 ? [] : [-c / b];
  const disc = b * b - 4 * a * c;
  if (disc < 0) return [];
  const q = -0.5 * (b + Math.sign(b || 1) * Math.sqrt(disc));
  return q === 0 ? [0] : [q / a, c / q];
}

/** The largest value of a continuous f ≥ 0 on [0, L] and where (sampling + golden section). */
export function peakAbs(f: (z: number) => number, L: number): { readonly z: number; readonly shear: number } {
  const n = PEAK_SAMPLES;
  const v = new Float64Array(n + 1);
  for (let i = 0; i <= n; i++) v[i] = f((L * i) / n);
  let bestZ = 0;
  let best = -1;
  for (let i = 0; i <= n; i++) {
    const left = i > 0 ? v[i - 1]! : -Infinity;
    const right = i < n ? v[i + 1]! : -Infinity;
    if (v[i]! < left || v[i]! < right) continue;
    // A sampled local maximum: refine on its neighbouring bracket (ends stay candidates too).
    const lo = (L * Math.max(0, i - 1)) / n;
    const hi = (L * Math.min(n, i + 1)) / n;
    const cand = golden(f, lo, hi, PEAK_TOL * L);
    for (const c of [cand, { z: (L * i) / n, value: v[i]! }]) {
      if (c.value > best) {
        best = c.value;
        bestZ = c.z;
      }
    }
  }
  return { z: bestZ, shear: best };
}

function golden(f: (z: number) => number, lo: number, hi: number, tol: number): { z: number; value: number } {
  const g = (Math.sqrt(5) - 1) / 2;
  let a = lo;
  let b = hi;
  let c = b - g * (b - a);
  let d = a + g * (b - a);
  let fc = f(c);
  let fd = f(d);
  while (b - a > tol) {
    if (fc >= fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - g * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + g * (b - a);
      fd = f(d);
    }
  }
  const z = (a + b) / 2;
  const fz = f(z);
  const fl = f(lo);
  const fh = f(hi);
  if (fl >= fz && fl >= fh) return { z: lo, value: fl };
  if (fh >= fz) return { z: hi, value: fh };
  return { z, value: fz };
}
