/**
 * Refining the peaks of many response curves at once, between two grid speeds.
 *
 * One complex solve gives every curve at its speed, but the curves (each segment, each
 * excitation, the sum) peak at slightly different speeds near a resonance, so refining each
 * by its own solves costs a solve per curve and step. Instead, on a bracket the complex
 * rotations φ(s) at every station (and the rotation difference Δφ across every element,
 * interpolated apart so a stiff element keeps its digits) are interpolated in speed: they
 * are analytic in s on the real axis (the poles of the damped response lie off it, at
 * Ω ≈ ω_n·(1 + iζ)), so polynomial interpolation at Chebyshev points of the second kind
 * converges geometrically. A piece starts with the first count of CHEB_LEVELS and doubles its
 * intervals (the points nest: no solve is lost) while it is not accepted, then is halved (up
 * to MAX_SPLITS times). It is accepted when the last two Chebyshev coefficients of every
 * interpolated quantity are below INTERP_TOL of its size over the piece, or when doubling the
 * points no longer shrinks a small tail (the solves' own round-off is reached): a resonance
 * sharper than the bracket gets more points, then short pieces, around it. Brackets that overlap share their pieces. Each curve is then
 * maximised on the interpolant
 * (element torques recovered exactly from the interpolated rotations) by Brent's method to
 * the peak tolerance in speed, with no further solve. Every Chebyshev point is an exact
 * solve, and its values are candidates too.
 */

/**
 * Chebyshev points per piece, by level: a piece starts with the first count and doubles its
 * intervals (second-kind points nest: every earlier solve is kept) while the tail keeps
 * shrinking, before it is halved (geometric convergence: 17 reach 1e-10 where the nearest pole
 * lies a third of a piece or more off the real axis).
 */
export const CHEB_LEVELS: readonly number[] = [9, 17, 33];
/**
 * Relative size of the last two Chebyshev coefficients under which a piece is accepted: about the
 * relative round-off of the complex solves on a stiff, lightly damped drivetrain (measured on the
 * benchmark model: the tails level off near 1e-10 however short the piece).
 */
export const INTERP_TOL = 1e-10;
/** Most halvings of a bracket around a sharp resonance (a piece of 1/256 of the bracket), each after its points were doubled to the last level. */
export const MAX_SPLITS = 8;
/** Most Brent iterations for one peak. */
const MAX_BRENT_ITERATIONS = 100;

/** Chebyshev points of the second kind on [lo, hi], ascending (ends included). */
export function chebPoints(lo: number, hi: number, m: number): Float64Array {
  const x = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    const t = -Math.cos((j * Math.PI) / (m - 1));
    x[j] = j === 0 ? lo : j === m - 1 ? hi : 0.5 * (lo + hi) + 0.5 * (hi - lo) * t;
  }
  return x;
}

/** Barycentric weights of the second-kind points: (−1)^j, halved at the ends (Berrut & Trefethen, SIAM Review 46, 2004). */
export function baryWeights(m: number): Float64Array {
  const w = new Float64Array(m);
  for (let j = 0; j < m; j++) w[j] = (j % 2 ? -1 : 1) * (j === 0 || j === m - 1 ? 0.5 : 1);
  return w;
}

/** The coefficients c_j with p(s) = Σ c_j·f_j (barycentric formula of the second kind), into out. */
export function baryCoefficients(nodes: Float64Array, w: Float64Array, s: number, out: Float64Array): void {
  const m = nodes.length;
  let sum = 0;
  for (let j = 0; j < m; j++) {
    const d = s - nodes[j];
    if (d === 0) {
      out.fill(0);
      out[j] = 1;
      return;
    }
    out[j] = w[j] / d;
    sum += out[j];
  }
  for (let j = 0; j < m; j++) out[j] /= sum;
}

/** Weighted cosines for chebTail: c1[j], c2[j] for the last two coefficients at m points. */
export function chebTailTables(m: number): { readonly c1: Float64Array; readonly c2: Float64Array } {
  const c1 = new Float64Array(m);
  const c2 = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    const theta = (j * Math.PI) / (m - 1);
    const half = j === 0 || j === m - 1 ? 0.5 : 1;
    c1[j] = half * Math.cos((m - 1) * theta);
    c2[j] = half * Math.cos((m - 2) * theta);
  }
  return { c1, c2 };
}

/**
 * |a_{m−1}| + |a_{m−2}| of the Chebyshev series through the values f[j][index] at the ascending
 * second-kind points: a_k = (2/(m−1))·Σ″ f_j·T_k(x_j) (halved for k = m − 1), with
 * T_k(−cos θ) = (−1)^k·cos(kθ) (the sign does not change the size).
 */
export function chebTail(f: readonly Float64Array[], index: number, t: { readonly c1: Float64Array; readonly c2: Float64Array }): number {
  const m = f.length;
  let a1 = 0;
  let a2 = 0;
  for (let j = 0; j < m; j++) {
    const v = f[j][index];
    a1 += v * t.c1[j];
    a2 += v * t.c2[j];
  }
  return (2 / (m - 1)) * (0.5 * Math.abs(a1) + Math.abs(a2));
}

/**
 * The largest value of f on [a, b] near x (f(x) = fx known) by Brent's method for a minimum
 * applied to −f (golden section with parabolic steps; Brent, "Algorithms for Minimization
 * without Derivatives", 1973, procedure localmin), to tolRel relative in x. The ends,
 * whose values fa and fb are known, are candidates too (a peak at the end of the range).
 * Answers [value, where].
 */
export function brentMax(f: (x: number) => number, a: number, fa: number, b: number, fb: number, x: number, fx: number, tolRel: number): [number, number] {
  const C = (3 - Math.sqrt(5)) / 2;
  let lo = a;
  let hi = b;
  let v = x;
  let w = x;
  let fv = -fx;
  let fw = -fx;
  let fxx = -fx;
  let d = 0;
  let e = 0;
  for (let it = 0; it < MAX_BRENT_ITERATIONS; it++) {
    const m = 0.5 * (lo + hi);
    const tol = tolRel * Math.abs(x) * 0.25 + 1e-300;
    const t2 = 2 * tol;
    if (Math.abs(x - m) <= t2 - 0.5 * (hi - lo)) break;
    let useGolden = true;
    if (Math.abs(e) > tol) {
      // Parabola through x, w, v.
      let r = (x - w) * (fxx - fv);
      let q = (x - v) * (fxx - fw);
      let p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p;
      else q = -q;
      r = e;
      e = d;
      if (Math.abs(p) < Math.abs(0.5 * q * r) && p > q * (lo - x) && p < q * (hi - x)) {
        d = p / q;
        const u = x + d;
        if (u - lo < t2 || hi - u < t2) d = x < m ? tol : -tol;
        useGolden = false;
      }
    }
    if (useGolden) {
      e = x < m ? hi - x : lo - x;
      d = C * e;
    }
    const u = Math.abs(d) >= tol ? x + d : x + (d > 0 ? tol : -tol);
    const fu = -f(u);
    if (fu <= fxx) {
      if (u < x) hi = x;
      else lo = x;
      v = w;
      fv = fw;
      w = x;
      fw = fxx;
      x = u;
      fxx = fu;
    } else {
      if (u < x) lo = u;
      else hi = u;
      if (fu <= fw || w === x) {
        v = w;
        fv = fw;
        w = u;
        fw = fu;
      } else if (fu <= fv || v === x || v === w) {
        v = u;
        fv = fu;
      }
    }
  }
  let best: [number, number] = [-fxx, x];
  if (fa > best[0]) best = [fa, a];
  if (fb > best[0]) best = [fb, b];
  return best;
}

