/**
 * Dynamic stiffness of one shaft element: the exact relation between the end rotations and the end
 * torques of a segment vibrating harmonically at circular frequency ω, with its distributed inertia
 * m = ρ·Ip per length (kg·m) and its rigidity GJ (N·m²).
 *
 * Uniform element of length h. Free vibration obeys GJ·φ'' + ω²·m·φ = 0, so with
 * β = ω·h·√(m/GJ) (dimensionless) and k0 = GJ/h the end torques are K(ω)·[φa, φb] with
 *   K = k0·[[f, −g], [−g, f]],   f = β·cot β,   g = β / sin β
 * (the classical dynamic stiffness of a uniform torsional member; it follows from the closed-form
 * solution φ(ξ) = (φa·sin β(1 − ξ) + φb·sin βξ) / sin β, ξ = z/h). As β → 0 it tends to the static
 * stiffness minus ω² times the consistent mass (mh/3, mh/6). For ω² < 0 (a shift below zero, used
 * only to find rigid-body modes) β = iγ and f = γ·coth γ, g = γ / sinh γ.
 *
 * Mass form. For the exact shape, ∫ m·φ² dz = [φa, φb]·M·[φa, φb] with M = −∂K/∂(ω²), so the
 * kinetic energy is ½ω²·φᵀMφ and the strain energy ½·(φᵀKφ + ω²·φᵀMφ) (integrate GJ·φ'² by parts).
 * With x = β², ∂/∂(ω²) = (h²m/GJ)·∂/∂x, and M = mh·[[−f'(x), g'(x)], [g'(x), −f'(x)]].
 * Near x = 0 f, g and their derivatives come from their Taylor series (|x| < SERIES_X keeps the
 * first omitted term below 1e-16 and avoids the cancellation of the closed forms there):
 *   β cot β = 1 − x/3 − x²/45 − 2x³/945 − x⁴/4725 …,   β / sin β = 1 + x/6 + 7x²/360 + 31x³/15120 + 127x⁴/604800 …
 * (Abramowitz & Stegun 4.3.70 and 4.3.68, series of cot and csc).
 *
 * Clamped element. With both ends held the element still vibrates, at β = nπ; the number below
 * ω, ⌊β/π⌋, is its share of the Wittrick–Williams count J0.
 *
 * Tapered element (circular, one material: J(z) = Ip(z), so m/GJ = ρ/G all along). No elementary
 * closed form for a hollow taper: the transfer matrix of [φ, T] (φ' = T/GJ, T' = −ω²mφ) is
 * integrated by the classical fourth-order Runge–Kutta rule on N and on 2N steps and the two
 * combined by Richardson's extrapolation (16·Y₂ₙ − Yₙ)/15, with N grown with β and the taper's
 * steepness so that a step spans at most 1/TAPER_STEPS_PER_RAD of a radian of the wave; the integrals
 * ∫m·y_i·y_j of the two fundamental solutions ride along. With P the transfer matrix (det P = 1):
 *   K = [[p11/p12, −1/p12], [−1/p12, p22/p12]];  the clamped count is the number of sign changes
 * of the solution with φ(0) = 0 on (0, h] (Sturm's oscillation theorem).
 */
import { polarMomentAt, type TaperInput } from '../taper.js';

/** |β²| below which the series are used, dimensionless (x⁵/…, the first omitted term, stays below 1e-19). */
const SERIES_X = 4e-4;
/** Least Runge–Kutta steps of a tapered element (before Richardson's doubling). */
const TAPER_MIN_STEPS = 96;
/** Steps per radian of β: a step spans at most 1/24 rad of the wave (error after extrapolation ~1e-12). */
const TAPER_STEPS_PER_RAD = 24;

/** The six numbers of an element at one ω²: K = [[a1, b], [b, a2]] and M = [[m1, mb], [mb, m2]], and its clamped count. */
export interface ElementDyn {
  a1: number;
  a2: number;
  b: number;
  m1: number;
  m2: number;
  mb: number;
  /** Clamped-element natural frequencies below ω (J0 share). */
  clamped: number;
}

/**
 * The uniform element (k0 = GJ/h, c = h²·m/GJ, mh = m·h) at ω² = w2, into `out`.
 * A massless element (c = 0) is a spring: K = k0·[[1, −1], [−1, 1]], M = 0.
 */
export function uniformDyn(k0: number, c: number, mh: number, w2: number, out: ElementDyn): ElementDyn {
  if (c === 0 || w2 === 0) {
    out.a1 = k0;
    out.a2 = k0;
    out.b = -k0;
    out.m1 = mh / 3;
    out.m2 = mh / 3;
    out.mb = mh / 6;
    out.clamped = 0;
    return out;
  }
  const x = c * w2;
  let f: number;
  let g: number;
  let fp: number;
  let gp: number;
  let clamped = 0;
  if (Math.abs(x) < SERIES_X) {
    f = 1 - x * (1 / 3 + x * (1 / 45 + x * (2 / 945)));
    g = 1 + x * (1 / 6 + x * (7 / 360 + x * (31 / 15120)));
    fp = -(1 / 3 + x * (2 / 45 + x * (6 / 945 + x * (4 / 4725))));
    gp = 1 / 6 + x * (14 / 360 + x * (93 / 15120 + x * (508 / 604800)));
  } else if (x > 0) {
    const beta = Math.sqrt(x);
    const s = Math.sin(beta);
    const co = Math.cos(beta);
    f = (beta * co) / s;
    g = beta / s;
    fp = (co / s - beta / (s * s)) / (2 * beta);
    gp = (1 / s - (beta * co) / (s * s)) / (2 * beta);
    clamped = Math.floor(beta / Math.PI);
  } else {
    const gam = Math.sqrt(-x);
    // For large γ, sinh and cosh overflow: their ratios do not.
    const e = Math.exp(-2 * gam);
    const coth = (1 + e) / (1 - e);
    const csch = (2 * Math.exp(-gam)) / (1 - e);
    f = gam * coth;
    g = gam * csch;
    fp = -(coth - gam * csch * csch) / (2 * gam);
    gp = -(csch - gam * coth * csch) / (2 * gam);
  }
  out.a1 = k0 * f;
  out.a2 = out.a1;
  out.b = -k0 * g;
  out.m1 = -mh * fp;
  out.m2 = out.m1;
  out.mb = mh * gp;
  out.clamped = clamped;
  return out;
}

/**
 * φ at ξ ∈ [0, 1] of a uniform element (c = h²m/GJ) with end rotations φa, φb at ω² = w2: the
 * closed form (φa·sin β(1 − ξ) + φb·sin βξ) / sin β; linear where β is tiny or not real.
 */
export function uniformShape(c: number, w2: number, phiA: number, phiB: number, xi: number): number {
  const x = c * w2;
  if (!(x > SERIES_X)) return phiA + (phiB - phiA) * xi;
  const beta = Math.sqrt(x);
  const s = Math.sin(beta);
  return (phiA * Math.sin(beta * (1 - xi)) + phiB * Math.sin(beta * xi)) / s;
}

/** A tapered element: its geometry (from the element's start), shear modulus and density. */
export interface TaperDynInput {
  readonly input: TaperInput;
  readonly G: number;
  readonly density: number;
}

/** The tapered element at ω² = w2, into `out` (see the header: RK4 with Richardson's extrapolation). */
export function taperDyn(t: TaperDynInput, w2: number, out: ElementDyn): ElementDyn {
  const h = t.input.length;
  const { dA, dB } = t.input;
  const diA = t.input.diA ?? 0;
  const diB = t.input.diB ?? 0;
  const beta = Math.sqrt(Math.abs(w2) * (t.density / t.G)) * h;
  // Steepness: the relative change of the outer diameter over the element.
  const steep = Math.abs(dB - dA) / Math.min(dA, dB) + (diA > 0 ? Math.abs(diB - diA) / Math.min(diA, diB) : 0);
  const n = Math.ceil(TAPER_MIN_STEPS + TAPER_STEPS_PER_RAD * beta + TAPER_MIN_STEPS * steep);
  const coarse = integrateTaper(t, w2, n, null);
  const fine = integrateTaper(t, w2, 2 * n, out);
  const rich = (a: number, b: number) => (16 * b - a) / 15;
  const p11 = rich(coarse[0], fine[0]);
  const p12 = rich(coarse[2], fine[2]);
  const p22 = rich(coarse[3], fine[3]);
  const i11 = rich(coarse[4], fine[4]);
  const i12 = rich(coarse[5], fine[5]);
  const i22 = rich(coarse[6], fine[6]);
  out.a1 = p11 / p12;
  out.a2 = p22 / p12;
  out.b = -1 / p12;
  const r = p11 / p12;
  out.m1 = i11 - 2 * i12 * r + i22 * r * r;
  out.mb = (i12 - i22 * r) / p12;
  out.m2 = i22 / (p12 * p12);
  return out;
}

/**
 * [φ1, T1, φ2, T2, ∫mφ1², ∫mφ1φ2, ∫mφ2²] at the element's end, from [1, 0] and [0, 1] at its start,
 * by n RK4 steps; with `count`, the sign changes of φ2 go into count.clamped.
 */
function integrateTaper(t: TaperDynInput, w2: number, n: number, count: ElementDyn | null): number[] {
  const h = t.input.length;
  const step = h / n;
  const G = t.G;
  const rho = t.density;
  const ip = (z: number) => polarMomentAt(t.input, z);
  let y = [1, 0, 0, 1, 0, 0, 0];
  const deriv = (z: number, s: number[]): number[] => {
    const J = ip(z);
    const gj = G * J;
    const m = rho * J;
    return [s[1] / gj, -w2 * m * s[0], s[3] / gj, -w2 * m * s[2], m * s[0] * s[0], m * s[0] * s[2], m * s[2] * s[2]];
  };
  const add = (a: number[], b: number[], f: number) => a.map((v, k) => v + f * b[k]);
  let changes = 0;
  let prev = 0;
  for (let k = 0; k < n; k++) {
    const z = k * step;
    const k1 = deriv(z, y);
    const k2 = deriv(z + step / 2, add(y, k1, step / 2));
    const k3 = deriv(z + step / 2, add(y, k2, step / 2));
    const k4 = deriv(z + step, add(y, k3, step));
    y = y.map((v, j) => v + (step / 6) * (k1[j] + 2 * k2[j] + 2 * k3[j] + k4[j]));
    const phi2 = y[2];
    if (k > 0 && phi2 !== 0 && prev !== 0 && phi2 > 0 !== prev > 0) changes++;
    if (phi2 !== 0) prev = phi2;
  }
  if (count) count.clamped = w2 > 0 ? changes : 0;
  return y;
}
