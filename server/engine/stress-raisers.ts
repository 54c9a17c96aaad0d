/**
 * Stress raisers: the local peak Kts·τ_nominal beside the nominal shear stress.
 *
 * `shoulder`: the torsional stress-concentration factor of a filleted shoulder between
 * diameters D > d with fillet radius r, from the published polynomial fit of the torsion chart for
 * a stepped round bar with a shoulder fillet:
 *   Pilkey & Pilkey, Peterson's Stress Concentration Factors, 3rd ed. (Wiley, 2008), chapter 3
 *   "Shoulder fillets", torsion of a stepped bar of circular cross section, Chart 3.12 (chart
 *   number as public implementations of the fit cite it; the book itself was not at hand).
 *   Coefficients as reproduced at
 *   https://www.amesweb.info/StressConcentrationFactor/SteppedShaftWithShoulderFillet.aspx,
 *   whose text drops the minus signs; the signs below are those of signed public copies of the
 *   same fit, and they reproduce the chart-read values in tests/reference/stress-raisers.test.ts:
 *     h = (D − d)/2,  valid for 0.25 ≤ h/r ≤ 4.0,
 *     C1 =  0.905 + 0.783·√(h/r) − 0.075·h/r
 *     C2 = −0.437 − 1.969·√(h/r) + 0.553·h/r
 *     C3 =  1.557 + 1.073·√(h/r) − 0.578·h/r
 *     C4 = −1.061 + 0.171·√(h/r) + 0.086·h/r
 *     Kts = C1 + C2·(2h/D) + C3·(2h/D)² + C4·(2h/D)³,
 *   with the nominal stress on the smaller diameter, τ_nom = 16T/(π d³) (solid round bar).
 * Outside 0.25 ≤ h/r ≤ 4.0 the fit is refused: `shoulderRangeProblem` says which input to change.
 *
 * `factor`: a user's factor (a keyseat, a cross hole, a spline run-out), taken as given (≥ 1).
 */

/** The fit's range of validity in h/r, dimensionless (same source). */
export const SHOULDER_FIT_RANGE = { min: 0.25, max: 4.0 } as const;

/**
 * Relative slack at the range's ends, dimensionless: h = (D − d)/2 and the unit conversions
 * before it round, so a step typed exactly at h/r = 4 arrives as 4.000000000000001.
 */
const RANGE_SLACK = 1e-12;

export interface ShoulderInput {
  /** Larger diameter, m. */
  readonly D: number;
  /** Smaller diameter, m. */
  readonly d: number;
  /** Fillet radius, m. */
  readonly r: number;
}

/** Why the fit cannot be used: the input to change (`fillet` or `step`) and what is wrong. */
export interface ShoulderProblem {
  readonly field: 'fillet' | 'step';
  readonly message: string;
}

/** null when the fit applies; otherwise the input outside its range. */
export function shoulderRangeProblem(s: ShoulderInput): ShoulderProblem | null {
  if (!(Number.isFinite(s.D) && Number.isFinite(s.d) && s.d > 0 && s.D > s.d))
    return { field: 'step', message: `a shoulder needs two diameters D > d > 0 (got D = ${s.D} m, d = ${s.d} m)` };
  if (!(Number.isFinite(s.r) && s.r > 0)) return { field: 'fillet', message: `fillet radius must be positive, got ${s.r} m` };
  const hr = (s.D - s.d) / 2 / s.r;
  if (hr < SHOULDER_FIT_RANGE.min * (1 - RANGE_SLACK))
    return {
      field: 'fillet',
      message: `fillet ${s.r} m is too large for the step: h/r = ${hr.toPrecision(4)} is below the fit's ${SHOULDER_FIT_RANGE.min} (h = (D − d)/2 = ${(s.D - s.d) / 2} m)`,
    };
  if (hr > SHOULDER_FIT_RANGE.max * (1 + RANGE_SLACK))
    return {
      field: 'fillet',
      message: `fillet ${s.r} m is too small for the step: h/r = ${hr.toPrecision(4)} is above the fit's ${SHOULDER_FIT_RANGE.max} (h = (D − d)/2 = ${(s.D - s.d) / 2} m)`,
    };
  return null;
}

/** Kts of a shoulder fillet in torsion (dimensionless); throws a RangeError outside the fit's range. */
export function shoulderFactor(s: ShoulderInput): number {
  const p = shoulderRangeProblem(s);
  if (p) throw new RangeError(`${p.field}: ${p.message}`);
  const h = (s.D - s.d) / 2;
  const hr = h / s.r;
  const q = Math.sqrt(hr);
  const c1 = 0.905 + 0.783 * q - 0.075 * hr;
  const c2 = -0.437 - 1.969 * q + 0.553 * hr;
  const c3 = 1.557 + 1.073 * q - 0.578 * hr;
  const c4 = -1.061 + 0.171 * q + 0.086 * hr;
  const x = (2 * h) / s.D;
  return c1 + x * (c2 + x * (c3 + x * c4));
}

/** Nominal shear stress on the smaller diameter of a solid bar, τ = 16T/(π d³), Pa. */
export function nominalShear(torque: number, d: number): number {
  return (16 * torque) / (Math.PI * d ** 3);
}

/** The local peak K·τ_nominal, Pa (signed as the nominal stress); K ≥ 1 (a user's factor or Kts). */
export function localPeak(factor: number, nominal: number): number {
  if (!(Number.isFinite(factor) && factor >= 1)) throw new RangeError(`a stress concentration factor must be ≥ 1, got ${factor}`);
  return factor * nominal;
}
