/**
 * Shared helpers of the reference suite: closed-form section properties, exact
 * unit definitions, lookups into a solution, and the comparisons. Nothing here
 * imports engine code or the project's unit table: the expected values of the
 * suite are computed from the inputs on their own.
 */
import { expect } from 'vitest';
import { solveModel } from '../../server/engine/index.js';
import type {
  CouplingResult,
  GearMeshResult,
  LayerResult,
  ReactionResult,
  SegmentResult,
  ShaftResult,
  Solution,
  Station,
} from '../../shared-types/solution.js';

// Exact definitions (NIST SP 811): 1 in = 0.0254 m, 1 lbf = 0.45359237 kg × 9.80665 m/s²,
// 1 hp = 550 ft·lbf/s, 1 rpm = 2π/60 rad/s.
export const IN = 0.0254; // m
export const FT = 12 * IN; // m
export const LBF = 0.45359237 * 9.80665; // N
export const LBF_IN = LBF * IN; // N·m
export const LBF_FT = LBF * FT; // N·m
export const PSI = LBF / (IN * IN); // Pa
export const HP = 550 * LBF_FT; // W
export const RPM = (2 * Math.PI) / 60; // rad/s
export const DEG = Math.PI / 180; // rad

/** Which solver path a test runs. */
export type SolverName = 'sparse' | 'dense';
export const SOLVERS: readonly SolverName[] = ['sparse', 'dense'];

/** Polar second moment of area of a solid circle, m⁴: J = π d⁴ / 32. */
export function jSolid(d: number): number {
  return (Math.PI * d ** 4) / 32;
}

/** Polar second moment of area of an annulus, m⁴: J = π (d⁴ − di⁴) / 32. */
export function jHollow(d: number, di: number): number {
  return (Math.PI * (d ** 4 - di ** 4)) / 32;
}

/** Torsional stiffness of a uniform segment, N·m/rad: k = G J / L. */
export function stiffness(G: number, J: number, L: number): number {
  return (G * J) / L;
}

/**
 * Solves with the named solver (sparse is the engine's default), lazily: the
 * solve runs on first use inside a test, so an engine error fails that test
 * rather than the whole file at collection.
 */
export function solve(model: unknown, solver: SolverName = 'sparse'): Solution {
  let cache: Solution | undefined;
  const get = (): Solution => (cache ??= solver === 'sparse' ? solveModel(model) : solveModel(model, { solver: 'dense' }));
  return new Proxy({} as Solution, {
    get: (_t, p) => Reflect.get(get(), p),
    has: (_t, p) => Reflect.has(get(), p),
    ownKeys: () => Reflect.ownKeys(get()),
    getOwnPropertyDescriptor: (_t, p) => Reflect.getOwnPropertyDescriptor(get(), p),
  });
}

/**
 * |actual − expected| ≤ rel·max(|expected|, scale). `scale` is the size of the
 * problem (an applied torque, a rotation) and stops a zero expectation from
 * demanding an exact zero.
 */
export function expectClose(actual: number | null | undefined, expected: number, rel = 1e-9, scale = 0): void {
  expect(typeof actual, 'value present').toBe('number');
  const a = actual as number;
  expect(Number.isFinite(a), `finite: ${a}`).toBe(true);
  const tol = rel * Math.max(Math.abs(expected), scale);
  expect(Math.abs(a - expected), `expected ${expected}, got ${a} (tolerance ${tol})`).toBeLessThanOrEqual(tol);
}

/**
 * Compares with a published number at the publication's rounding: `halfUnit`
 * is half of the last printed digit (0.005 for a value printed to 2 decimals),
 * in the unit of `published`. `toUnit` converts the engine's SI value first.
 */
export function expectPublished(actualSI: number | null | undefined, published: number, halfUnit: number, toUnit = 1): void {
  expect(typeof actualSI, 'value present').toBe('number');
  const a = (actualSI as number) / toUnit;
  // 1e-9 relative slack only for floating-point noise at an exact half.
  const tol = halfUnit * (1 + 1e-9);
  expect(Math.abs(a - published), `published ${published}, got ${a} (± ${halfUnit})`).toBeLessThanOrEqual(tol);
}

/** Largest per-shaft torque residual must be tiny next to the applied torque. */
export function expectEquilibrium(sol: Solution, appliedTorque: number, rel = 1e-9): void {
  expect(Number.isFinite(sol.equilibrium.maxResidual)).toBe(true);
  expect(sol.equilibrium.maxResidual).toBeGreaterThanOrEqual(0);
  expect(sol.equilibrium.maxResidual).toBeLessThanOrEqual(rel * Math.abs(appliedTorque));
}

export function reaction(sol: Solution, support: string): ReactionResult {
  const r = sol.reactions.find((x) => x.support === support);
  if (!r) throw new Error(`no reaction for support ${support}`);
  return r;
}

export function shaft(sol: Solution, id: string): ShaftResult {
  const s = sol.shafts.find((x) => x.id === id);
  if (!s) throw new Error(`no shaft ${id}`);
  return s;
}

/** The station at z (within 1e-12 m). */
export function station(sol: Solution, shaftId: string, z: number): Station {
  const st = shaft(sol, shaftId).stations.find((x) => Math.abs(x.z - z) <= 1e-12 + 1e-12 * Math.abs(z));
  if (!st) throw new Error(`no station at z=${z} on shaft ${shaftId}`);
  return st;
}

/** The segment at a position in the shaft's list (the model's order). */
export function segment(sol: Solution, shaftId: string, position: number): SegmentResult {
  const s = shaft(sol, shaftId).segments[position];
  if (!s) throw new Error(`no segment ${position} on shaft ${shaftId}`);
  return s;
}

export function layer(seg: SegmentResult, material: string): LayerResult {
  const l = seg.layers.find((x) => x.material === material);
  if (!l) throw new Error(`no layer of ${material} in segment ${seg.index}`);
  return l;
}

export function gearMesh(sol: Solution, id: string): GearMeshResult {
  const g = sol.gearMeshes.find((x) => x.gearMesh === id);
  if (!g) throw new Error(`no gear mesh ${id}`);
  return g;
}

export function coupling(sol: Solution, id: string): CouplingResult {
  const c = sol.couplings.find((x) => x.coupling === id);
  if (!c) throw new Error(`no coupling ${id}`);
  return c;
}

/** A model skeleton in format shaftnet/1; the caller fills in the rest. */
export function model(name: string, parts: Record<string, unknown>): Record<string, unknown> {
  return { format: 'shaftnet/1', name, ...parts };
}
