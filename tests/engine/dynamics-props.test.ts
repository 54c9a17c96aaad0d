/**
 * Properties of the natural frequencies on seeded random geared systems (common practice, no source:
 * what an exact method must satisfy): the Wittrick–Williams count below any trial frequency equals the
 * number of roots found below it (none missed); frequencies do not change when a segment is split;
 * modes are orthogonal with respect to the mass operator; energy shares sum to one.
 */
import { describe, expect, it } from 'vitest';
import { normaliseModel, solveModel } from '../../server/engine/index.js';
import { buildStations } from '../../server/engine/stations.js';
import { elasticParts, findMechanisms } from '../../server/engine/assemble.js';
import { reduceConstraints } from '../../server/engine/constraints.js';
import { DynamicSystem } from '../../server/engine/dynamics/system.js';
import { findModes } from '../../server/engine/dynamics/frequencies.js';
import { Workspace } from '../../server/engine/workspace.js';
import type { Model } from '../../shared-types/model.js';
import { mulberry32, randomModel } from './random-models.js';

/** Relative agreement of frequencies computed two ways (the contract's 1e-9, with room for both). */
const FREQ_TOL = 2e-9;

/** A random grounded geared system with the shafts' own inertia, a few discs, and dynamics asking `modes`. */
function dynamicModel(seed: number, modes: number): Model {
  const base = randomModel(seed, { loads: false, imposed: false, loops: 'sometimes', layered: true });
  const rng = mulberry32(seed * 7919 + 1);
  const discs = base.shafts.map((s, i) => ({ id: `inertia${i}`, shaft: s.id, at: 0, inertia: 1e-3 + 0.05 * rng() }));
  return {
    ...base,
    materials: base.materials.map((m) => ({ ...m, density: 2000 + 8000 * rng() })),
    discs: [...(base.discs ?? []), ...discs],
    dynamics: { modes },
  };
}

/** The dynamic system of a model, as the pipeline builds it, and its rigid-body groups. */
function systemOf(raw: unknown): { sys: DynamicSystem; groups: number[][] } {
  const model = normaliseModel(raw);
  const ws = new Workspace();
  const layout = buildStations(model, ws);
  const parts = elasticParts(model, layout, ws);
  const red = reduceConstraints(layout.dofCount, parts.edges, () => '', ws);
  return { sys: new DynamicSystem(model, layout, parts.springs, red), groups: findMechanisms(parts.springs, red, ws) };
}

describe('natural frequencies of random geared systems', () => {
  it('40 systems: the count below trial frequencies equals the roots found below them', () => {
    let checked = 0;
    for (let seed = 1; seed <= 40; seed++) {
      const raw = dynamicModel(seed, 8);
      const { sys, groups } = systemOf(raw);
      const { modes } = findModes(sys, normaliseModel(raw).dynamics!, groups, () => []);
      expect(modes.length).toBe(8);
      const top = modes[modes.length - 1].omega;
      // Trial frequencies between and around the roots (never on one).
      const rng = mulberry32(seed);
      for (let k = 0; k < 12; k++) {
        const trial = top * (0.02 + 0.97 * rng());
        const below = modes.filter((m) => m.omega < trial).length;
        if (modes.some((m) => Math.abs(m.omega - trial) < 1e-6 * trial)) continue;
        expect(sys.countBelow(trial)).toBe(below);
        checked++;
      }
      // Just below and above each root: the count steps there.
      for (const m of modes) {
        if (m.rigid) continue;
        const first = modes.findIndex((x) => Math.abs(x.omega - m.omega) <= 1e-9 * m.omega);
        const same = modes.filter((x) => Math.abs(x.omega - m.omega) <= 1e-9 * m.omega).length;
        expect(sys.countBelow(m.omega * (1 - 1e-8))).toBe(first);
        expect(sys.countBelow(m.omega * (1 + 1e-8))).toBe(first + same);
      }
    }
    expect(checked).toBeGreaterThan(300);
  });

  it('20 systems: splitting a segment in two changes no frequency', () => {
    let splits = 0;
    let meshes = 0;
    for (let seed = 101; seed <= 120; seed++) {
      const raw = dynamicModel(seed, 6);
      const rng = mulberry32(seed);
      const s = Math.floor(rng() * raw.shafts.length);
      const shaft = raw.shafts[s];
      const j = Math.floor(rng() * shaft.segments.length);
      const seg = shaft.segments[j];
      // Lengths are numbers in SI in the random models' base form; split at a random fraction.
      const length = typeof seg.length === 'number' ? seg.length : Number.NaN;
      if (!Number.isFinite(length) || seg.sectionEnd !== undefined) continue;
      const f = 0.2 + 0.6 * rng();
      const split = {
        ...raw,
        shafts: raw.shafts.map((sh, k) =>
          k !== s ? sh : { ...sh, segments: [...sh.segments.slice(0, j), { ...seg, length: f * length }, { ...seg, length: (1 - f) * length }, ...sh.segments.slice(j + 1)] },
        ),
      };
      splits++;
      meshes += (raw.gearMeshes ?? []).length;
      const a = solveModel(raw).modes ?? [];
      const b = solveModel(split).modes ?? [];
      expect(b.length).toBe(a.length);
      a.forEach((m, k) => expect(Math.abs(b[k].angularFrequency - m.angularFrequency)).toBeLessThanOrEqual(FREQ_TOL * m.angularFrequency));
    }
    // The draws did split segments of geared systems.
    expect(splits).toBeGreaterThan(12);
    expect(meshes).toBeGreaterThan(10);
  });

  it('20 systems: modes are orthogonal with respect to the exact mass operator; energy shares sum to 1', () => {
    for (let seed = 201; seed <= 220; seed++) {
      const raw = dynamicModel(seed, 6);
      const { sys, groups } = systemOf(raw);
      const { modes } = findModes(sys, normaliseModel(raw).dynamics!, groups, () => []);
      const n = sys.n;
      // ∫ m·φi·φj + Σ J·φi·φj of two exact modes at ωi ≠ ωj is xjᵀ(K(ωi) − K(ωj))·xi / (ωj² − ωi²)
      // (integration by parts over each element); at one frequency it is xᵀ·M(ω)·x.
      const kx = (w: number, x: Float64Array) => {
        sys.assemble(w * w);
        return sys.multiply(x, new Float64Array(n), false);
      };
      const mass = (w: number, x: Float64Array) => {
        sys.assemble(w * w);
        const mx = sys.multiply(x, new Float64Array(n), true);
        return x.reduce((s, v, u) => s + v * mx[u], 0);
      };
      const dot = (a: Float64Array, b: Float64Array) => a.reduce((s, v, u) => s + v * b[u], 0);
      for (let i = 0; i < modes.length; i++) {
        for (let j = i + 1; j < modes.length; j++) {
          const [a, b] = [modes[i], modes[j]];
          if (a.interior.length > 0 || b.interior.length > 0) continue;
          const mi = mass(a.omega, a.x);
          const mj = mass(b.omega, b.x);
          let cross: number;
          if (Math.abs(b.omega - a.omega) <= 1e-9 * b.omega) {
            sys.assemble(a.omega * a.omega);
            cross = dot(b.x, sys.multiply(a.x, new Float64Array(n), true));
          } else {
            cross = (dot(b.x, kx(a.omega, a.x)) - dot(b.x, kx(b.omega, a.x))) / (b.omega ** 2 - a.omega ** 2);
          }
          expect(Math.abs(cross) / Math.sqrt(mi * mj)).toBeLessThanOrEqual(1e-6);
        }
      }
      for (const m of solveModel(raw).modes ?? []) {
        expect(Math.abs(m.energy.kinetic.reduce((s, x) => s + x.share, 0) - 1)).toBeLessThanOrEqual(1e-12);
        if (m.energy.strain !== null) expect(Math.abs(m.energy.strain.reduce((s, x) => s + x.share, 0) - 1)).toBeLessThanOrEqual(1e-12);
        const rot = m.shafts.flatMap((s) => s.rotation);
        expect(Math.max(...rot)).toBeCloseTo(1, 12);
        expect(Math.min(...rot)).toBeGreaterThanOrEqual(-1 - 1e-12);
      }
    }
  });

  it('maxFrequency finds exactly the modes the count puts below it', () => {
    const raw = dynamicModel(301, 10);
    const lowest = solveModel(raw).modes ?? [];
    const cut = 0.5 * (lowest[6].angularFrequency + lowest[7].angularFrequency);
    const upTo = solveModel({ ...raw, dynamics: { maxFrequency: cut, modes: 2 } }).modes ?? [];
    expect(upTo).toHaveLength(7);
    upTo.forEach((m, k) => expect(Math.abs(m.angularFrequency - lowest[k].angularFrequency)).toBeLessThanOrEqual(FREQ_TOL * m.angularFrequency));
  });
});
