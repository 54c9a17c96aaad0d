/**
 * Section properties of the non-circular shapes: Saint-Venant torsion with free warping.
 *
 * Each shape gives three quantities kept apart (contract, "More section shapes"):
 * - torsion constant J (m⁴): stiffness, T = G·J·θ (θ = dφ/dz, rad/m);
 * - polar moment of area Ip (m⁴): rotary inertia only, ρ·Ip per length;
 * - torsional modulus Wt (m³): peak stress, τmax = T / Wt;
 * and the plastic modulus Zp (m³) with T_p = τ_y·Zp (contract, "Overload").
 *
 * Formulas (b ≤ h the short and long sides; a ≥ c the semi-axes of the ellipse):
 * - rectangle, exact series (Timoshenko & Goodier, Theory of Elasticity, torsion of a
 *   rectangular bar; from memory):
 *     J = β·h·b³,  β = (1/3)·(1 − (192/π⁵)(b/h)·Σ_{n odd} tanh(nπh/2b)/n⁵)
 *     τmax = G·θ·b·k at the middle of the long side, k = 1 − (8/π²)·Σ_{n odd} 1/(n² cosh(nπh/2b)),
 *     so Wt = J / (b·k); Ip = b·h·(b² + h²)/12; Zp = b²(3h − b)/6 (contract).
 *   Both sums are taken without overflow for slender bars: Σ tanh(x_n)/n⁵ = λ(5) − Σ (1 − tanh x_n)/n⁵
 *   with λ(5) = Σ_{n odd} n⁻⁵ = (31/32)·ζ(5), 1 − tanh x = 2e^{−2x}/(1 + e^{−2x}) and
 *   1/cosh x = 2e^{−x}/(1 + e^{−2x}); only decaying exponentials are evaluated. Tail bound: the terms
 *   after n are below 2e^{−x_n}·r/(n²(1 − r)) with r = e^{−πh/b} ≤ e^{−π} (a geometric series), and the
 *   loop stops once that bound is under 1e-17 of the sum's leading term, far inside the 1e-12 asked.
 * - ellipse (closed form, same source): J = π a³c³/(a² + c²), τmax = 2T/(π a c²) at the ends of
 *   the minor axis, Wt = π a c²/2, Ip = π a c (a² + c²)/4. Plastic modulus: not given by the
 *   contract, so null (the overload phase must say so).
 * - rectangularTube (outside width w, height h, wall t), thin-walled closed (Bredt–Batho) on the
 *   wall's centre line: A_m = (w − t)(h − t), s = 2((w − t) + (h − t)), J = 4A_m²·t/s,
 *   τ = T/(2A_m·t), Wt = 2A_m·t, Zp = 2A_m·t (contract); Ip of the exact hollow rectangle
 *   (binding reading). Warning when t > min(w − t, h − t)/10.
 * - thinOpen (walls of length b_i, thickness t_i): J = Σ b t³/3, τmax = T·t_max/J so Wt = J/t_max,
 *   Zp = Σ b t²/2 (contract); Ip as given (inertia only) or null. Warning for each wall with
 *   b < 10t, and always the caution that restrained warping is not modelled.
 * - custom: the values given.
 *
 * Inputs are SI (m). Validation with pointers belongs to normalise.ts; `shapeProblems` lists the
 * fields out of range so it can name them, and `sectionProperties` throws a RangeError on them.
 */

/** Σ_{n odd} n⁻⁵ = (1 − 2⁻⁵)·ζ(5); ζ(5) = 1.036927755143369926331365486457… */
const LAMBDA5 = (31 / 32) * 1.0369277551433699;

/** Series tail bound relative to the sum, dimensionless: far below the 1e-12 the contract asks. */
const SERIES_TOL = 1e-17;

export type ShapeInput =
  | { readonly shape: 'rectangle'; readonly width: number; readonly height: number }
  | { readonly shape: 'ellipse'; readonly width: number; readonly height: number }
  | { readonly shape: 'rectangularTube'; readonly width: number; readonly height: number; readonly wall: number }
  | {
      readonly shape: 'thinOpen';
      readonly walls: readonly { readonly length: number; readonly thickness: number }[];
      readonly polarMoment?: number;
    }
  | {
      readonly shape: 'custom';
      readonly torsionConstant: number;
      readonly torsionalModulus: number;
      readonly polarMoment?: number;
      readonly plasticTorqueModulus?: number;
    };

/** A reason to read a result with care; `field` is relative to the section (e.g. `walls/1`). */
export interface ShapeWarning {
  readonly kind: 'thinWallStretched' | 'openSectionWarping';
  readonly field: string | null;
  readonly message: string;
}

/** A field out of range, relative to the section (e.g. `wall`, `walls/0/thickness`). */
export interface ShapeProblem {
  readonly field: string;
  readonly message: string;
}

export interface ShapeProperties {
  /** Torsion constant J, m⁴: T = G·J·θ. */
  readonly torsionConstant: number;
  /** Polar second moment of area, m⁴ (rotary inertia); null where only the user could give it. */
  readonly polarMoment: number | null;
  /** Torsional modulus Wt, m³: τmax = T / Wt. */
  readonly torsionalModulus: number;
  /** Plastic modulus, m³: T_p = τ_y · this; null where the contract gives no formula. */
  readonly plasticModulus: number | null;
  /** Where τmax sits, m from the centroid (x along the width); null where it has no single place. */
  readonly peakAt: { readonly x: number; readonly y: number } | null;
  readonly warnings: readonly ShapeWarning[];
}

/** The rectangle's series coefficients for aspect h/b ≥ 1: J = β·h·b³, τmax = T/(α·h·b²), τmax = G θ b k. */
export interface RectangleCoefficients {
  readonly beta: number;
  readonly alpha: number;
  readonly k: number;
  /** Odd terms summed in each series. */
  readonly terms: number;
}

/** β, α and k of a rectangle with long side h and short side b (aspect = h/b ≥ 1; Infinity allowed). */
export function rectangleCoefficients(aspect: number): RectangleCoefficients {
  if (!(aspect >= 1)) throw new RangeError(`aspect h/b must be ≥ 1, got ${aspect}`);
  if (aspect === Infinity) return { beta: 1 / 3, alpha: 1 / 3, k: 1, terms: 0 };
  const r = Math.exp(-Math.PI * aspect); // ratio of successive odd terms' exponentials, ≤ e^{−π}
  let sTanh = 0; // Σ (1 − tanh x_n)/n⁵
  let sCosh = 0; // Σ 1/(n² cosh x_n)
  let terms = 0;
  for (let n = 1; ; n += 2) {
    const x = (n * Math.PI * aspect) / 2;
    const e1 = Math.exp(-x);
    const e2 = e1 * e1;
    const n2 = n * n;
    sTanh += (2 * e2) / (1 + e2) / (n2 * n2 * n);
    sCosh += (2 * e1) / (1 + e2) / n2;
    terms++;
    // The rest of Σ 1/(n² cosh) is below 2e^{−x}·r/(n²(1 − r)); the tanh sum decays faster still.
    const tail = (2 * e1 * r) / (n2 * (1 - r));
    if (tail <= SERIES_TOL * sCosh || e1 === 0) break;
  }
  const beta = (1 - (192 / Math.PI ** 5) * (LAMBDA5 - sTanh) / aspect) / 3;
  const k = 1 - (8 / (Math.PI * Math.PI)) * sCosh;
  return { beta, alpha: beta / k, k, terms };
}

/** Fields out of range (empty when the shape is valid). Lengths in m. */
export function shapeProblems(s: ShapeInput): ShapeProblem[] {
  const out: ShapeProblem[] = [];
  const pos = (field: string, v: number | undefined, name: string): void => {
    if (v !== undefined && !(Number.isFinite(v) && v > 0)) out.push({ field, message: `${name} must be a positive length, got ${v}` });
  };
  switch (s.shape) {
    case 'rectangle':
    case 'ellipse':
      pos('width', s.width, 'width');
      pos('height', s.height, 'height');
      break;
    case 'rectangularTube':
      pos('width', s.width, 'width');
      pos('height', s.height, 'height');
      pos('wall', s.wall, 'wall');
      if (out.length === 0 && 2 * s.wall >= Math.min(s.width, s.height))
        out.push({ field: 'wall', message: `wall ${s.wall} m must be under half the smaller outside dimension ${Math.min(s.width, s.height)} m` });
      break;
    case 'thinOpen':
      if (s.walls.length === 0) out.push({ field: 'walls', message: 'an open section needs at least one wall' });
      s.walls.forEach((w, i) => {
        pos(`walls/${i}/length`, w.length, 'wall length');
        pos(`walls/${i}/thickness`, w.thickness, 'wall thickness');
      });
      pos('polarMoment', s.polarMoment, 'polar moment');
      break;
    case 'custom':
      pos('torsionConstant', s.torsionConstant, 'torsion constant');
      pos('torsionalModulus', s.torsionalModulus, 'torsional modulus');
      pos('polarMoment', s.polarMoment, 'polar moment');
      pos('plasticTorqueModulus', s.plasticTorqueModulus, 'plastic torque modulus');
      break;
  }
  return out;
}

/** J, Ip, Wt, plastic modulus, peak place and warnings of a shape (SI). */
export function sectionProperties(s: ShapeInput): ShapeProperties {
  const problems = shapeProblems(s);
  if (problems.length > 0) throw new RangeError(problems.map((p) => `${p.field}: ${p.message}`).join('; '));
  switch (s.shape) {
    case 'rectangle':
      return rectangle(s.width, s.height);
    case 'ellipse':
      return ellipse(s.width, s.height);
    case 'rectangularTube':
      return rectangularTube(s.width, s.height, s.wall);
    case 'thinOpen':
      return thinOpen(s.walls, s.polarMoment);
    case 'custom':
      return {
        torsionConstant: s.torsionConstant,
        polarMoment: s.polarMoment ?? null,
        torsionalModulus: s.torsionalModulus,
        plasticModulus: s.plasticTorqueModulus ?? null,
        peakAt: null,
        warnings: [],
      };
  }
}

function rectangle(width: number, height: number): ShapeProperties {
  const b = Math.min(width, height);
  const h = Math.max(width, height);
  const c = rectangleCoefficients(h / b);
  const J = c.beta * h * b ** 3;
  return {
    torsionConstant: J,
    polarMoment: (width * height * (width * width + height * height)) / 12,
    torsionalModulus: J / (b * c.k),
    plasticModulus: (b * b * (3 * h - b)) / 6,
    // The middle of a long side: the long side runs along x when width ≥ height.
    peakAt: width >= height ? { x: 0, y: height / 2 } : { x: width / 2, y: 0 },
    warnings: [],
  };
}

function ellipse(width: number, height: number): ShapeProperties {
  const a = Math.max(width, height) / 2;
  const c = Math.min(width, height) / 2;
  return {
    torsionConstant: (Math.PI * a ** 3 * c ** 3) / (a * a + c * c),
    polarMoment: (Math.PI * (width / 2) * (height / 2) * ((width / 2) ** 2 + (height / 2) ** 2)) / 4,
    torsionalModulus: (Math.PI * a * c * c) / 2,
    plasticModulus: null,
    // The ends of the minor axis.
    peakAt: width >= height ? { x: 0, y: height / 2 } : { x: width / 2, y: 0 },
    warnings: [],
  };
}

function rectangularTube(width: number, height: number, wall: number): ShapeProperties {
  const wm = width - wall;
  const hm = height - wall;
  const Am = wm * hm;
  const perimeter = 2 * (wm + hm);
  const wi = width - 2 * wall;
  const hi = height - 2 * wall;
  const warnings: ShapeWarning[] = [];
  if (wall > Math.min(wm, hm) / 10)
    warnings.push({
      kind: 'thinWallStretched',
      field: 'wall',
      message: `wall ${wall} m is thicker than a tenth of the smaller centre-line dimension ${Math.min(wm, hm)} m: thin-wall theory stretched`,
    });
  return {
    torsionConstant: (4 * Am * Am * wall) / perimeter,
    polarMoment: (width * height * (width * width + height * height) - wi * hi * (wi * wi + hi * hi)) / 12,
    torsionalModulus: 2 * Am * wall,
    plasticModulus: 2 * Am * wall,
    peakAt: null,
    warnings,
  };
}

function thinOpen(walls: readonly { readonly length: number; readonly thickness: number }[], polarMoment: number | undefined): ShapeProperties {
  let J = 0;
  let Zp = 0;
  let tMax = 0;
  const warnings: ShapeWarning[] = [];
  walls.forEach((w, i) => {
    J += (w.length * w.thickness ** 3) / 3;
    Zp += (w.length * w.thickness ** 2) / 2;
    tMax = Math.max(tMax, w.thickness);
    if (w.length < 10 * w.thickness)
      warnings.push({
        kind: 'thinWallStretched',
        field: `walls/${i}`,
        message: `wall ${i} is shorter than ten thicknesses (${w.length} m < 10 × ${w.thickness} m): thin-wall theory stretched`,
      });
  });
  warnings.push({
    kind: 'openSectionWarping',
    field: null,
    message: 'open section: restrained warping (at supports, steps and loads) is not modelled; free warping assumed',
  });
  return { torsionConstant: J, polarMoment: polarMoment ?? null, torsionalModulus: J / tMax, plasticModulus: Zp, peakAt: null, warnings };
}
