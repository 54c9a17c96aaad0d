/**
 * Property tests of the engine on seeded random shaft systems (random-models.ts)
 * and on the demo. Each property is computed here from the model and the
 * solution, not taken from the engine's own summaries.
 *
 * Tolerances are relative to a scale named at each check; they are round-off
 * allowances (double precision, eps ≈ 2.2e-16, on well-conditioned systems of
 * a few dozen unknowns), common practice, no source.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { Model } from '../../shared-types/model.js';
import type { ShaftResult, Solution, Station } from '../../shared-types/solution.js';
import { solveModel } from '../../server/engine/index.js';
import {
  gearRadius,
  MIN_GAP,
  pointTorqueValue,
  randomModel,
  rigidityOf,
  ringsOf,
  ringJ,
  Rng,
  segmentSpans,
  si,
  withUnitStrings,
  type RandomModelOptions,
} from './random-models.js';

const demo = JSON.parse(readFileSync(new URL('../../server/demos/mixer-drive.json', import.meta.url), 'utf8')) as Model;

/** Two z within this are one station, m (positions are on a 0.1 mm grid, stations ≥ 4 mm apart). */
const Z_TOL = 1e-9;
/** Floor of every scale, so an all-zero result compares exactly. */
const TINY = 1e-300;

const seeds = (base: number, n: number) => Array.from({ length: n }, (_, i) => base + i);
const maxAbs = (xs: Iterable<number>) => {
  let m = 0;
  for (const x of xs) m = Math.max(m, Math.abs(x));
  return m;
};

function shaftResult(sol: Solution, id: string): ShaftResult {
  const s = sol.shafts.find((x) => x.id === id);
  if (!s) throw new Error(`solution has no shaft ${id}`);
  return s;
}

function stationAt(sr: ShaftResult, z: number): Station {
  let best: Station | undefined;
  for (const st of sr.stations) if (!best || Math.abs(st.z - z) < Math.abs(best.z - z)) best = st;
  if (!best || Math.abs(best.z - z) > Z_TOL) throw new Error(`shaft ${sr.id} has no station at z = ${z}`);
  return best;
}

const rotationAt = (sol: Solution, shaft: string, z: number) => stationAt(shaftResult(sol, shaft), z).rotation;

/** A torque applied at one point of a shaft: loads, reactions, connection torques. */
interface PointLoad {
  shaft: string;
  z: number;
  torque: number;
  what: string;
}

/** Every concentrated torque on every shaft: the model's point torques and the solution's reactions and connection torques. */
function pointLoads(model: Model, sol: Solution): PointLoad[] {
  const out: PointLoad[] = [];
  for (const t of model.torques ?? []) out.push({ shaft: t.shaft, z: si(t.at, 'length'), torque: pointTorqueValue(t), what: `torque ${t.id}` });
  for (const r of sol.reactions) {
    const s = (model.supports ?? []).find((x) => x.id === r.support);
    if (!s) throw new Error(`reaction for unknown support ${r.support}`);
    out.push({ shaft: s.shaft, z: si(s.at, 'length'), torque: r.torque, what: `reaction ${r.support}` });
  }
  for (const g of sol.gearMeshes) {
    const m = (model.gearMeshes ?? []).find((x) => x.id === g.gearMesh);
    if (!m) throw new Error(`result for unknown mesh ${g.gearMesh}`);
    out.push({ shaft: m.a.shaft, z: si(m.a.at, 'length'), torque: g.torqueA, what: `mesh ${m.id} a` });
    out.push({ shaft: m.b.shaft, z: si(m.b.at, 'length'), torque: g.torqueB, what: `mesh ${m.id} b` });
  }
  for (const c of sol.couplings) {
    const m = (model.couplings ?? []).find((x) => x.id === c.coupling);
    if (!m) throw new Error(`result for unknown coupling ${c.coupling}`);
    out.push({ shaft: m.a.shaft, z: si(m.a.at, 'length'), torque: c.torqueA, what: `coupling ${m.id} a` });
    out.push({ shaft: m.b.shaft, z: si(m.b.at, 'length'), torque: c.torqueB, what: `coupling ${m.id} b` });
  }
  return out;
}

interface Distributed {
  from: number;
  to: number;
  start: number;
  end: number;
}

function distributedOn(model: Model, shaft: string): Distributed[] {
  return (model.distributedTorques ?? [])
    .filter((d) => d.shaft === shaft)
    .map((d) => ({
      from: si(d.from, 'length'),
      to: si(d.to, 'length'),
      start: si(d.start, 'torquePerLength'),
      end: si(d.end, 'torquePerLength'),
    }));
}

/** Resultant of a linear distributed torque, N·m: (start + end)/2 × (to − from). */
const resultant = (d: Distributed) => ((d.start + d.end) / 2) * (d.to - d.from);

/** t(z) of the loads active on the interval around `mid` (load ends are stations, so a load covers an interval or not). */
function tAt(loads: Distributed[], z: number, mid: number): number {
  let t = 0;
  for (const d of loads) {
    if (d.from <= mid && mid <= d.to && d.to > d.from) t += d.start + ((d.end - d.start) * (z - d.from)) / (d.to - d.from);
  }
  return t;
}

/** T(z) on [z1, z2] from T(z1+): T = T1 − ∫ t, exact by the trapezoid rule since t is linear. */
function torqueInside(loads: Distributed[], z1: number, T1: number, z: number, mid: number): number {
  return T1 - ((z - z1) * (tAt(loads, z1, mid) + tAt(loads, z, mid))) / 2;
}

/** ∫ T/GJ from z1 to z, exact by Simpson's rule since T is at most quadratic. */
function twistInside(loads: Distributed[], z1: number, T1: number, z: number, mid: number, GJ: number): number {
  const zm = (z1 + z) / 2;
  return ((z - z1) / 6) * (T1 + 4 * torqueInside(loads, z1, T1, zm, mid) + torqueInside(loads, z1, T1, z, mid)) / GJ;
}

/** The largest magnitude among applied torques, distributed resultants, reactions and connection torques, N·m. */
function torqueScale(model: Model, sol: Solution): number {
  const dist = (model.distributedTorques ?? []).map((d) => {
    const x = { from: si(d.from, 'length'), to: si(d.to, 'length'), start: si(d.start, 'torquePerLength'), end: si(d.end, 'torquePerLength') };
    return Math.max(Math.abs(resultant(x)), (Math.abs(x.start) + Math.abs(x.end)) * (x.to - x.from));
  });
  return Math.max(TINY, maxAbs(pointLoads(model, sol).map((p) => p.torque)), maxAbs(dist));
}

const rotationScale = (sol: Solution) => Math.max(TINY, maxAbs(sol.shafts.flatMap((s) => s.stations.map((st) => st.rotation))));

/** The systems most properties run on: random ones of every flavour, plus the demo. */
function systems(base: number, n: number, options: RandomModelOptions = {}): Array<[string, Model]> {
  return seeds(base, n).map((seed) => [`seed ${seed}`, randomModel(seed, options)] as [string, Model]);
}

describe('the generator', () => {
  it('makes systems that solve without a ModelError, with meshes, couplings, loops, layers and rigid ties among them', () => {
    const seen = { rigidMesh: 0, compliantMesh: 0, rigidCoupling: 0, compliantCoupling: 0, layered: 0, spring: 0, power: 0, loops: 0 };
    for (const [name, model] of systems(1, 200)) {
      expect(() => solveModel(model), name).not.toThrow();
      for (const g of model.gearMeshes ?? []) g.stiffness === undefined ? seen.rigidMesh++ : seen.compliantMesh++;
      for (const c of model.couplings ?? []) c.stiffness === undefined ? seen.rigidCoupling++ : seen.compliantCoupling++;
      seen.layered += model.sections.filter((s) => s.shape === 'layered').length;
      seen.spring += (model.supports ?? []).filter((s) => s.kind === 'spring').length;
      seen.power += (model.torques ?? []).filter((t) => t.power !== undefined).length;
      const connections = (model.gearMeshes ?? []).length + (model.couplings ?? []).length;
      if (connections >= model.shafts.length) seen.loops++;
    }
    for (const [what, count] of Object.entries(seen)) expect(count, what).toBeGreaterThan(5);
  });
});

describe('equilibrium of every shaft', () => {
  const cases: Array<[string, Model]> = [['demo', demo], ...systems(1000, 200)];
  it.each(cases)('%s: Σ applied + ∫ distributed + reactions + connection torques = 0 on each shaft', (_name, model) => {
    const sol = solveModel(model);
    const loads = pointLoads(model, sol);
    // Scale: the largest torque in the balance (round-off of a sum grows with its largest term).
    const scale = torqueScale(model, sol);
    for (const shaft of model.shafts) {
      const sum =
        loads.filter((p) => p.shaft === shaft.id).reduce((s, p) => s + p.torque, 0) +
        distributedOn(model, shaft.id).reduce((s, d) => s + resultant(d), 0);
      expect(Math.abs(sum), `shaft ${shaft.id}: residual ${sum}, scale ${scale}`).toBeLessThanOrEqual(1e-9 * scale);
    }
    expect(sol.equilibrium.maxResidual).toBeGreaterThanOrEqual(0);
    expect(sol.equilibrium.maxResidual).toBeLessThanOrEqual(1e-9 * scale);
    expect(sol.equilibrium.shafts.map((s) => s.shaft).sort()).toEqual(model.shafts.map((s) => s.id).sort());
    for (const s of sol.equilibrium.shafts) expect(Math.abs(s.residual)).toBeLessThanOrEqual(sol.equilibrium.maxResidual);
  });
});

describe('connection and support laws', () => {
  it.each([['demo', demo] as [string, Model], ...systems(2000, 150)])('%s: gaps, forces and reactions follow the kinematics of the contract', (_name, model) => {
    const sol = solveModel(model);
    const phiScale = rotationScale(sol);
    const tScale = torqueScale(model, sol);
    for (const m of model.gearMeshes ?? []) {
      const r = sol.gearMeshes.find((x) => x.gearMesh === m.id);
      expect(r, m.id).toBeDefined();
      if (!r) continue;
      const ra = gearRadius(m, 'a');
      const rb = gearRadius(m, 'b');
      const s = m.sense === 'same' ? 1 : -1;
      const offset = m.offset === undefined ? 0 : si(m.offset, 'length');
      const pa = rotationAt(sol, m.a.shaft, si(m.a.at, 'length'));
      const pb = rotationAt(sol, m.b.shaft, si(m.b.at, 'length'));
      // g = r_a φ_a − s r_b φ_b − offset (model format, kinematics of a mesh).
      const g = ra * pa - s * rb * pb - offset;
      const gScale = Math.max(TINY, ra * phiScale + rb * phiScale + Math.abs(offset));
      expect(Math.abs(r.radiusA - ra)).toBeLessThanOrEqual(1e-14 * ra);
      expect(Math.abs(r.radiusB - rb)).toBeLessThanOrEqual(1e-14 * rb);
      expect(Math.abs(r.gap - g), `${m.id} gap`).toBeLessThanOrEqual(1e-9 * gScale);
      if (m.stiffness === undefined) {
        expect(Math.abs(g), `${m.id} rigid gap`).toBeLessThanOrEqual(1e-9 * gScale);
      } else {
        const k = si(m.stiffness, 'linearStiffness');
        expect(Math.abs(r.force - k * g), `${m.id} F = k g`).toBeLessThanOrEqual(1e-9 * k * gScale);
      }
      // Torque −F r_a on shaft a and +s F r_b on shaft b.
      expect(Math.abs(r.torqueA + r.force * ra), `${m.id} torqueA`).toBeLessThanOrEqual(1e-12 * tScale);
      expect(Math.abs(r.torqueB - s * r.force * rb), `${m.id} torqueB`).toBeLessThanOrEqual(1e-12 * tScale);
    }
    for (const c of model.couplings ?? []) {
      const r = sol.couplings.find((x) => x.coupling === c.id);
      expect(r, c.id).toBeDefined();
      if (!r) continue;
      const misfit = c.misfit === undefined ? 0 : si(c.misfit, 'angle');
      // c = φ_a − φ_b − misfit.
      const twist = rotationAt(sol, c.a.shaft, si(c.a.at, 'length')) - rotationAt(sol, c.b.shaft, si(c.b.at, 'length')) - misfit;
      const cScale = 2 * phiScale + Math.abs(misfit);
      expect(Math.abs(r.twist - twist), `${c.id} twist`).toBeLessThanOrEqual(1e-9 * cScale);
      expect(Math.abs(r.torqueA + r.torqueB), `${c.id} torqueA = −torqueB`).toBeLessThanOrEqual(1e-12 * tScale);
      if (c.stiffness === undefined) {
        expect(Math.abs(twist), `${c.id} rigid`).toBeLessThanOrEqual(1e-9 * cScale);
      } else {
        const k = si(c.stiffness, 'rotationalStiffness');
        expect(Math.abs(r.torqueA + k * twist), `${c.id} torqueA = −k c`).toBeLessThanOrEqual(1e-9 * k * cScale);
      }
    }
    expect(sol.reactions.map((r) => r.support).sort()).toEqual((model.supports ?? []).map((s) => s.id).sort());
    for (const s of model.supports ?? []) {
      const r = sol.reactions.find((x) => x.support === s.id);
      if (!r) continue;
      const phi = rotationAt(sol, s.shaft, si(s.at, 'length'));
      expect(r.shaft).toBe(s.shaft);
      expect(r.kind).toBe(s.kind);
      expect(Math.abs(r.rotation - phi), `${s.id} rotation`).toBeLessThanOrEqual(1e-12 * phiScale);
      if (s.kind === 'fixed') {
        const prescribed = s.rotation === undefined ? 0 : si(s.rotation, 'angle');
        expect(Math.abs(phi - prescribed), `${s.id} φ = rotation`).toBeLessThanOrEqual(1e-12 * phiScale);
      } else {
        const k = si(s.stiffness, 'rotationalStiffness');
        expect(Math.abs(r.torque + k * phi), `${s.id} torque = −k φ`).toBeLessThanOrEqual(1e-9 * k * phiScale);
      }
    }
  });
});

describe('internal torque and rotation along each shaft', () => {
  it.each([['demo', demo] as [string, Model], ...systems(3000, 200)])(
    '%s: stations, jumps T(z−) − T(z+) = torques there, T = T(z1+) − ∫t and Δφ = ∫T/GJ between stations',
    (_name, model) => {
      const sol = solveModel(model);
      const loads = pointLoads(model, sol);
      const tScale = torqueScale(model, sol);
      for (const shaft of model.shafts) {
        const sr = shaftResult(sol, shaft.id);
        const spans = segmentSpans(model, shaft.id);
        const length = spans[spans.length - 1].to;
        const dist = distributedOn(model, shaft.id);
        const mine = loads.filter((p) => p.shaft === shaft.id);
        expect(Math.abs(sr.length - length)).toBeLessThanOrEqual(1e-12 * length);

        // Stations: sorted, distinct, and present at every point the contract lists.
        const zs = sr.stations.map((s) => s.z);
        for (let k = 1; k < zs.length; k++) expect(zs[k], `${shaft.id} stations sorted`).toBeGreaterThan(zs[k - 1]);
        const expected = [
          ...spans.flatMap((s) => [s.from, s.to]),
          ...mine.map((p) => p.z),
          ...dist.flatMap((d) => [d.from, d.to]),
          ...(model.discs ?? []).filter((d) => d.shaft === shaft.id).map((d) => si(d.at, 'length')),
        ];
        for (const z of expected) expect(() => stationAt(sr, z)).not.toThrow();

        // Jumps: T(z−) − T(z+) = Σ concentrated torques at z; T(0+) = −Σ at 0; T(L−) = Σ at L.
        const first = sr.stations[0];
        const last = sr.stations[sr.stations.length - 1];
        expect(first.torqueLeft).toBeNull();
        expect(last.torqueRight).toBeNull();
        for (const st of sr.stations) {
          const applied = mine.filter((p) => Math.abs(p.z - st.z) <= Z_TOL).reduce((s, p) => s + p.torque, 0);
          const jump = (st.torqueLeft ?? 0) - (st.torqueRight ?? 0);
          expect(Math.abs(jump - applied), `${shaft.id} jump at z = ${st.z}: ${jump} vs ${applied}`).toBeLessThanOrEqual(1e-9 * tScale);
        }

        // Between stations: T falls by ∫t, and φ grows by ∫T/GJ (closed forms above).
        const phiSpan = Math.max(TINY, maxAbs(zs.map((_, k) => sr.stations[k].rotation)));
        for (let k = 0; k + 1 < sr.stations.length; k++) {
          const a = sr.stations[k];
          const b = sr.stations[k + 1];
          const mid = (a.z + b.z) / 2;
          const span = spans.find((s) => s.from <= mid && mid <= s.to);
          if (!span) throw new Error(`no segment at ${mid}`);
          const GJ = rigidityOf(model, span.segment);
          const T1 = a.torqueRight as number;
          const T2 = torqueInside(dist, a.z, T1, b.z, mid);
          expect(Math.abs((b.torqueLeft as number) - T2), `${shaft.id} T(${b.z}−)`).toBeLessThanOrEqual(1e-9 * tScale);
          const dphi = twistInside(dist, a.z, T1, b.z, mid, GJ);
          const twistScale = Math.max(phiSpan, (tScale * (b.z - a.z)) / GJ);
          expect(Math.abs(b.rotation - a.rotation - dphi), `${shaft.id} Δφ on [${a.z}, ${b.z}]`).toBeLessThanOrEqual(1e-9 * twistScale);
        }
      }
    },
  );
});

describe('exact interior of segments', () => {
  it.each([['demo', demo] as [string, Model], ...systems(4000, 100)])(
    '%s: diagram T, φ and shear match the closed forms, maxAbsTorque is the exact peak',
    (_name, model) => {
      const sol = solveModel(model);
      const tScale = torqueScale(model, sol);
      const phiScale = rotationScale(sol);
      for (const shaft of model.shafts) {
        const sr = shaftResult(sol, shaft.id);
        const spans = segmentSpans(model, shaft.id);
        const dist = distributedOn(model, shaft.id);
        const { z, torque, rotation, shear } = sr.diagram;
        expect(torque.length).toBe(z.length);
        expect(rotation.length).toBe(z.length);
        expect(shear.length).toBe(z.length);
        expect(Math.abs(z[0] - sr.stations[0].z)).toBeLessThanOrEqual(Z_TOL);
        expect(Math.abs(z[z.length - 1] - sr.stations[sr.stations.length - 1].z)).toBeLessThanOrEqual(Z_TOL);
        let interior = 0;
        for (let i = 0; i < z.length; i++) {
          if (i > 0) expect(z[i], `${shaft.id} diagram z sorted`).toBeGreaterThanOrEqual(z[i - 1]);
          const k = sr.stations.findIndex((st) => Math.abs(st.z - z[i]) <= Z_TOL);
          if (k >= 0) {
            // A breakpoint: T is T(z−) or T(z+) of the station (a jump is two points at one z).
            const st = sr.stations[k];
            const d = Math.min(
              st.torqueLeft === null ? Infinity : Math.abs(torque[i] - st.torqueLeft),
              st.torqueRight === null ? Infinity : Math.abs(torque[i] - st.torqueRight),
            );
            expect(d, `${shaft.id} diagram T at station ${st.z}`).toBeLessThanOrEqual(1e-12 * tScale);
            expect(Math.abs(rotation[i] - st.rotation)).toBeLessThanOrEqual(1e-12 * phiScale);
            continue;
          }
          interior++;
          const a = [...sr.stations].reverse().find((st) => st.z < z[i]) as Station;
          const b = sr.stations.find((st) => st.z > z[i]) as Station;
          const mid = (a.z + b.z) / 2;
          const span = spans.find((s) => s.from <= mid && mid <= s.to);
          if (!span) throw new Error(`no segment at ${mid}`);
          const GJ = rigidityOf(model, span.segment);
          const T = torqueInside(dist, a.z, a.torqueRight as number, z[i], mid);
          expect(Math.abs(torque[i] - T), `${shaft.id} T(${z[i]}) = ${torque[i]}, closed form ${T}`).toBeLessThanOrEqual(1e-9 * tScale);
          const phi = a.rotation + twistInside(dist, a.z, a.torqueRight as number, z[i], mid, GJ);
          expect(Math.abs(rotation[i] - phi), `${shaft.id} φ(${z[i]})`).toBeLessThanOrEqual(1e-9 * phiScale);
          const rings = ringsOf(model, span.segment);
          if (rings.length === 1) {
            // τ = T r / J at the outer fibre of a solid or hollow section.
            const tau = (T * rings[0].rOuter) / ringJ(rings[0]);
            expect(Math.abs(shear[i] - tau), `${shaft.id} τ(${z[i]})`).toBeLessThanOrEqual((1e-9 * tScale * rings[0].rOuter) / ringJ(rings[0]));
          }
        }
        // Where T is curved (a distributed torque that varies), the diagram must sample the inside.
        if (dist.some((d) => d.start !== d.end && d.to > d.from)) expect(interior, `${shaft.id}: interior diagram points`).toBeGreaterThan(0);

        // maxAbsTorque: the exact peak of |T| over each segment, and no diagram point above it.
        sr.segments.forEach((seg, j) => {
          const span = spans[j];
          expect(Math.abs(seg.from - span.from)).toBeLessThanOrEqual(Z_TOL);
          expect(Math.abs(seg.to - span.to)).toBeLessThanOrEqual(Z_TOL);
          let peak = 0;
          const inside = sr.stations.filter((st) => st.z >= span.from - Z_TOL && st.z <= span.to + Z_TOL);
          for (let k = 0; k + 1 < inside.length; k++) {
            const a = inside[k];
            const b = inside[k + 1];
            const mid = (a.z + b.z) / 2;
            const T1 = a.torqueRight as number;
            peak = Math.max(peak, Math.abs(T1), Math.abs(torqueInside(dist, a.z, T1, b.z, mid)));
            // An interior extremum where t(z) = 0 (t is linear on the interval).
            const t1 = tAt(dist, a.z, mid);
            const t2 = tAt(dist, b.z, mid);
            if (t1 * t2 < 0) {
              const zr = a.z + ((b.z - a.z) * t1) / (t1 - t2);
              peak = Math.max(peak, Math.abs(torqueInside(dist, a.z, T1, zr, mid)));
            }
          }
          expect(Math.abs(seg.maxAbsTorque - peak), `${shaft.id} segment ${j} maxAbsTorque ${seg.maxAbsTorque} vs ${peak}`).toBeLessThanOrEqual(
            1e-9 * tScale,
          );
          for (let i = 0; i < z.length; i++) {
            if (z[i] > span.from + Z_TOL && z[i] < span.to - Z_TOL) {
              expect(Math.abs(torque[i])).toBeLessThanOrEqual(seg.maxAbsTorque + 1e-12 * tScale);
            }
          }
          const GJ = rigidityOf(model, span.segment);
          expect(Math.abs(seg.torsionalRigidity - GJ)).toBeLessThanOrEqual(1e-12 * GJ);
          expect(Math.abs(seg.maxTwistRate - seg.maxAbsTorque / GJ)).toBeLessThanOrEqual((1e-12 * tScale) / GJ);
          const twist = stationAt(sr, span.to).rotation - stationAt(sr, span.from).rotation;
          expect(Math.abs(seg.twist - twist)).toBeLessThanOrEqual(1e-12 * phiScale);
        });
      }
    },
  );

  it.each(systems(4500, 30))('%s: diagramPoints 0 keeps the breakpoints only', (_name, model) => {
    const sol = solveModel(model, { diagramPoints: 0 });
    for (const sr of sol.shafts) {
      for (const z of sr.diagram.z) expect(() => stationAt(sr, z)).not.toThrow();
      for (const st of sr.stations) expect(sr.diagram.z.some((z) => Math.abs(z - st.z) <= Z_TOL)).toBe(true);
    }
  });
});

describe('layered sections', () => {
  it('per-layer peak shear is G_i r_i T / ΣGJ, so layer ratios equal G_i r_i ratios', () => {
    let checked = 0;
    for (const [name, model] of [['demo', demo] as [string, Model], ...systems(5000, 100, { layered: true })]) {
      const sol = solveModel(model);
      for (const shaft of model.shafts) {
        const sr = shaftResult(sol, shaft.id);
        shaft.segments.forEach((segment, j) => {
          const rings = ringsOf(model, segment);
          const res = sr.segments[j];
          expect(res.layers.map((l) => l.material), `${name} ${shaft.id}/${j}`).toEqual(rings.map((r) => r.material));
          const GJ = rigidityOf(model, segment);
          rings.forEach((ring, i) => {
            expect(Math.abs(res.layers[i].outerRadius - ring.rOuter)).toBeLessThanOrEqual(1e-14 * ring.rOuter);
            // τ_i = G_i r_i T / ΣGJ (compatible twist rate, model format).
            const tau = (ring.G * ring.rOuter * res.maxAbsTorque) / GJ;
            expect(Math.abs(res.layers[i].maxShear - tau), `${name} ${shaft.id}/${j} layer ${i}`).toBeLessThanOrEqual(1e-12 * Math.max(tau, TINY));
          });
          if (rings.length > 1 && res.maxAbsTorque > 0) {
            for (let i = 1; i < rings.length; i++) {
              const ratio = res.layers[i].maxShear / res.layers[0].maxShear;
              const want = (rings[i].G * rings[i].rOuter) / (rings[0].G * rings[0].rOuter);
              expect(Math.abs(ratio - want), `${name} ${shaft.id}/${j} ratio ${ratio} vs ${want}`).toBeLessThanOrEqual(1e-12 * want);
            }
            checked++;
          }
        });
      }
    }
    expect(checked).toBeGreaterThan(20);
  });
});

describe('section properties of every segment', () => {
  it('a solid bar: J = π·d⁴/32, G·J, and k = G·J/L (closed forms, Saint-Venant torsion of a circular bar)', () => {
    const d = 0.05; // m
    const L = 1.25; // m
    const G = 79.3e9; // Pa
    const model = {
      format: 'shaftnet/1',
      name: 'Solid bar (invented)',
      materials: [{ id: 'steel', G }],
      sections: [{ id: 'd50', shape: 'solid', d }],
      shafts: [{ id: 'bar', segments: [{ length: L, section: 'd50', material: 'steel' }] }],
      supports: [{ id: 'A', shaft: 'bar', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 'bar', at: L, torque: 500 }],
    };
    const seg = solveModel(model).shafts[0].segments[0];
    const J = (Math.PI * d ** 4) / 32;
    expect(Math.abs(seg.torsionConstant - J)).toBeLessThanOrEqual(1e-14 * J);
    expect(Math.abs(seg.torsionalRigidity - G * J)).toBeLessThanOrEqual(1e-14 * G * J);
    expect(Math.abs(seg.stiffness - (G * J) / L)).toBeLessThanOrEqual(1e-14 * ((G * J) / L));
    // The end twist under the end torque is T/k (a cantilever), so the stiffness is the one the solve used.
    expect(Math.abs(seg.twist - 500 / seg.stiffness)).toBeLessThanOrEqual(1e-12 * (500 / seg.stiffness));
  });

  it('random systems: J = Σ π(r_o⁴ − r_i⁴)/2 over the rings, G·J = Σ G_i·J_i, k = G·J/(to − from)', () => {
    let layered = 0;
    for (const [name, model] of [['demo', demo] as [string, Model], ...systems(7000, 60, { layered: true })]) {
      const sol = solveModel(model);
      for (const shaft of model.shafts) {
        const sr = shaftResult(sol, shaft.id);
        segmentSpans(model, shaft.id).forEach((span, j) => {
          const res = sr.segments[j];
          const rings = ringsOf(model, span.segment);
          if (rings.length > 1) layered++;
          const J = rings.reduce((sum, r) => sum + ringJ(r), 0);
          const GJ = rigidityOf(model, span.segment);
          const where = `${name} ${shaft.id}/${j}`;
          expect(Math.abs(res.torsionConstant - J), where).toBeLessThanOrEqual(1e-12 * J);
          expect(Math.abs(res.torsionalRigidity - GJ), where).toBeLessThanOrEqual(1e-12 * GJ);
          // The segment's own ends (to − from), as the solution reports them.
          const k = res.torsionalRigidity / (res.to - res.from);
          expect(Math.abs(res.stiffness - k), where).toBeLessThanOrEqual(1e-15 * k);
          expect(Math.abs(res.stiffness - GJ / (span.to - span.from)), where).toBeLessThanOrEqual(1e-9 * k);
        });
      }
    }
    expect(layered).toBeGreaterThan(20);
  });
});

describe('Maxwell–Betti reciprocity', () => {
  it.each(seeds(6000, 60))('seed %i: φ_j under a unit torque at i equals φ_i under a unit torque at j', (seed) => {
    const base = randomModel(seed, { loads: false, imposed: false });
    const rng = new Rng(seed + 1);
    const fixed = (base.supports ?? []).filter((s) => s.kind === 'fixed').map((s) => ({ shaft: s.shaft, z: si(s.at, 'length') }));
    const candidates: Array<{ shaft: string; z: number }> = [];
    for (const shaft of base.shafts) {
      for (const span of segmentSpans(base, shaft.id)) candidates.push({ shaft: shaft.id, z: span.from }, { shaft: shaft.id, z: span.to });
    }
    for (const c of [...(base.gearMeshes ?? []), ...(base.couplings ?? [])]) {
      candidates.push({ shaft: c.a.shaft, z: si(c.a.at, 'length') }, { shaft: c.b.shaft, z: si(c.b.at, 'length') });
    }
    for (const shaft of base.shafts) {
      for (const span of segmentSpans(base, shaft.id)) candidates.push({ shaft: shaft.id, z: Math.round(((span.from + span.to) / 2) * 10000) / 10000 });
    }
    const free = candidates.filter((c) => !fixed.some((f) => f.shaft === c.shaft && Math.abs(f.z - c.z) <= Z_TOL));
    const i = rng.pick(free);
    const j = rng.pick(free);
    // Both points carry a torque in both solves (one of them zero), so both are stations each time.
    const load = (unit: { shaft: string; z: number }, other: { shaft: string; z: number }): Model => ({
      ...base,
      torques: [
        { id: 'unit', shaft: unit.shaft, at: unit.z, torque: 1 },
        { id: 'zero', shaft: other.shaft, at: other.z, torque: 0 },
      ],
    });
    const si_ = solveModel(load(i, j));
    const sj = solveModel(load(j, i));
    const fii = rotationAt(si_, i.shaft, i.z);
    const fjj = rotationAt(sj, j.shaft, j.z);
    const fji = rotationAt(si_, j.shaft, j.z);
    const fij = rotationAt(sj, i.shaft, i.z);
    // The flexibility matrix is positive definite (K symmetric positive definite on the free stations).
    expect(fii).toBeGreaterThan(0);
    expect(fjj).toBeGreaterThan(0);
    // Scale: |f_ij| ≤ √(f_ii f_jj) ≤ max(f_ii, f_jj).
    expect(Math.abs(fij - fji), `f_ij ${fij}, f_ji ${fji}`).toBeLessThanOrEqual(1e-10 * Math.max(fii, fjj));
  });
});

/** Everything in a solution that is linear in the loads, keyed by name, at the stations of `at`. */
function linearParts(sol: Solution, at: Array<{ shaft: string; z: number }>): { rotation: Map<string, number>; torque: Map<string, number> } {
  const rotation = new Map<string, number>();
  const torque = new Map<string, number>();
  for (const p of at) {
    const st = stationAt(shaftResult(sol, p.shaft), p.z);
    rotation.set(`${p.shaft}@${p.z}`, st.rotation);
    if (st.torqueLeft !== null) torque.set(`T- ${p.shaft}@${p.z}`, st.torqueLeft);
    if (st.torqueRight !== null) torque.set(`T+ ${p.shaft}@${p.z}`, st.torqueRight);
  }
  for (const r of sol.reactions) torque.set(`reaction ${r.support}`, r.torque);
  for (const g of sol.gearMeshes) {
    torque.set(`mesh ${g.gearMesh} a`, g.torqueA);
    torque.set(`mesh ${g.gearMesh} b`, g.torqueB);
  }
  for (const c of sol.couplings) {
    torque.set(`coupling ${c.coupling} a`, c.torqueA);
    torque.set(`coupling ${c.coupling} b`, c.torqueB);
  }
  return { rotation, torque };
}

/** Segment ends, supports and connection points: stations every variant of a model keeps. */
function structuralPoints(model: Model): Array<{ shaft: string; z: number }> {
  const out: Array<{ shaft: string; z: number }> = [];
  for (const shaft of model.shafts) for (const s of segmentSpans(model, shaft.id)) out.push({ shaft: shaft.id, z: s.from }, { shaft: shaft.id, z: s.to });
  for (const s of model.supports ?? []) out.push({ shaft: s.shaft, z: si(s.at, 'length') });
  for (const c of [...(model.gearMeshes ?? []), ...(model.couplings ?? [])]) {
    out.push({ shaft: c.a.shaft, z: si(c.a.at, 'length') }, { shaft: c.b.shaft, z: si(c.b.at, 'length') });
  }
  return out;
}

function expectSameMaps(got: Map<string, number>, want: Map<string, number>, tol: number, what: string): void {
  expect([...got.keys()].sort(), what).toEqual([...want.keys()].sort());
  const scale = Math.max(TINY, maxAbs(want.values()), maxAbs(got.values()));
  for (const [key, w] of want) {
    const g = got.get(key) as number;
    expect(Math.abs(g - w), `${what} ${key}: got ${g}, want ${w}`).toBeLessThanOrEqual(tol * scale);
  }
}

/**
 * Superposition and homogeneity on one model (linearity of the statics, no source needed): the loads
 * split at random into A and B solve to the sum of their solutions, and every load times c = −2.5
 * (an arbitrary factor) to c times the solution.
 */
function expectLinear(model: Model, seed: number): void {
  const rng = new Rng(seed + 7);
  const inA = new Set<string>();
  for (const t of [...(model.torques ?? []), ...(model.distributedTorques ?? [])]) if (rng.chance(0.5)) inA.add(t.id);
  const only = (keep: (id: string) => boolean, factor = 1): Model => ({
    ...model,
    torques: (model.torques ?? []).filter((t) => keep(t.id)).map((t) => (t.torque !== undefined ? { ...t, torque: factor * (t.torque as number) } : { ...t, power: factor * (t.power as number) })),
    distributedTorques: (model.distributedTorques ?? [])
      .filter((d) => keep(d.id))
      .map((d) => ({ ...d, start: factor * (d.start as number), end: factor * (d.end as number) })),
  });
  const points = structuralPoints(model);
  const both = linearParts(solveModel(model), points);
  const a = linearParts(solveModel(only((id) => inA.has(id))), points);
  const b = linearParts(solveModel(only((id) => !inA.has(id))), points);
  const sum = (x: Map<string, number>, y: Map<string, number>) => new Map([...x].map(([k, v]) => [k, v + (y.get(k) as number)]));
  expectSameMaps(sum(a.rotation, b.rotation), both.rotation, 1e-10, 'rotation');
  expectSameMaps(sum(a.torque, b.torque), both.torque, 1e-10, 'torque');

  // Homogeneity: c = −2.5 is an arbitrary factor.
  const c = -2.5;
  const scaled = linearParts(solveModel(only(() => true, c)), points);
  const times = (x: Map<string, number>) => new Map([...x].map(([k, v]) => [k, c * v]));
  expectSameMaps(scaled.rotation, times(both.rotation), 1e-10, 'scaled rotation');
  expectSameMaps(scaled.torque, times(both.torque), 1e-10, 'scaled torque');
}

describe('superposition', () => {
  it.each(seeds(7000, 60))('seed %i: solution(A + B) = solution(A) + solution(B), and solution(c A) = c solution(A)', (seed) => {
    expectLinear(randomModel(seed, { imposed: false }), seed);
  });
});

describe('splitting a segment', () => {
  it.each(seeds(8000, 80))('seed %i: two pieces of one section and material change nothing at the original stations', (seed) => {
    const model = randomModel(seed);
    const rng = new Rng(seed + 3);
    const original = solveModel(model);
    const k = rng.int(0, model.shafts.length - 1);
    const shaft = model.shafts[k];
    const j = rng.int(0, shaft.segments.length - 1);
    const span = segmentSpans(model, shaft.id)[j];
    const taken = shaftResult(original, shaft.id).stations.map((s) => s.z);
    let cut = NaN;
    for (let tries = 0; tries < 100 && !(cut > 0); tries++) {
      const z = Math.round(rng.range(span.from, span.to) * 10000) / 10000; // 0.1 mm grid
      if (taken.every((t) => Math.abs(t - z) >= MIN_GAP / 2)) cut = z;
    }
    expect(cut, 'found a place to cut').toBeGreaterThan(0);
    const seg = shaft.segments[j];
    const first = cut - span.from;
    const split = structuredClone(model);
    split.shafts[k].segments.splice(j, 1, { ...seg, length: first }, { ...seg, length: (seg.length as number) - first });

    const after = solveModel(split);
    const points = original.shafts.flatMap((s) => s.stations.map((st) => ({ shaft: s.id, z: st.z })));
    const x = linearParts(original, points);
    const y = linearParts(after, points);
    expectSameMaps(y.rotation, x.rotation, 1e-10, 'rotation');
    expectSameMaps(y.torque, x.torque, 1e-10, 'torque');
    expect(shaftResult(after, shaft.id).stations.length).toBe(shaftResult(original, shaft.id).stations.length + 1);
  });
});

describe('unit strings equal SI numbers', () => {
  it.each(seeds(9000, 80))('seed %i: the same model in random units gives the same solution', (seed) => {
    const model = randomModel(seed);
    const typed = withUnitStrings(model, seed + 11);
    const x = solveModel(model);
    const y = solveModel(typed);
    expect(y.shafts.map((s) => s.stations.length)).toEqual(x.shafts.map((s) => s.stations.length));
    const flat = (sol: Solution) => {
      const rotation = new Map<string, number>();
      const torque = new Map<string, number>();
      sol.shafts.forEach((s) =>
        s.stations.forEach((st, i) => {
          rotation.set(`${s.id}#${i}`, st.rotation);
          if (st.torqueLeft !== null) torque.set(`T- ${s.id}#${i}`, st.torqueLeft);
          if (st.torqueRight !== null) torque.set(`T+ ${s.id}#${i}`, st.torqueRight);
        }),
      );
      sol.shafts.forEach((s) => s.segments.forEach((g, j) => torque.set(`max ${s.id}/${j}`, g.maxAbsTorque)));
      for (const r of sol.reactions) torque.set(`reaction ${r.support}`, r.torque);
      for (const g of sol.gearMeshes) torque.set(`mesh ${g.gearMesh}`, g.torqueA);
      for (const c of sol.couplings) torque.set(`coupling ${c.coupling}`, c.torqueA);
      return { rotation, torque };
    };
    const a = flat(x);
    const b = flat(y);
    // 1e-12: each typed value reads back within an ulp or two of the SI number.
    expectSameMaps(b.rotation, a.rotation, 1e-12, 'rotation');
    expectSameMaps(b.torque, a.torque, 1e-12, 'torque');
  });

  it('the demo written in SI numbers solves as the demo', () => {
    // SI values of the demo's strings, converted by hand: 79.3 GPa = 79.3e9 Pa, 1450 rpm = 1450·2π/60 rad/s, 0.5 deg = 0.5π/180 rad, …
    const model = structuredClone(demo);
    model.materials[0].G = 79.3e9;
    model.materials[1].E = 110e9;
    model.sections[0].d = 0.04;
    model.sections[1].d = 0.05;
    model.sections[1].di = 0.038;
    (model.sections[2].layers ?? [])[0].d = 0.03;
    (model.sections[2].layers ?? [])[1].d = 0.045;
    model.shafts[0].segments[0].length = 0.25;
    model.shafts[0].segments[1].length = 0.4;
    model.shafts[1].segments[0].length = 0.3;
    model.shafts[2].segments[0].length = 0.2;
    const [, B, K, T] = model.supports ?? [];
    B.at = 0.65;
    K.at = 0.3;
    K.stiffness = 12e3;
    T.at = 0.2;
    const [motor, pump] = model.torques ?? [];
    motor.at = 0.1;
    motor.torque = 350;
    pump.at = 0.5;
    pump.power = -15e3;
    pump.speed = (1450 * 2 * Math.PI) / 60;
    const drag = (model.distributedTorques ?? [])[0];
    Object.assign(drag, { from: 0.25, to: 0.65, start: -40, end: -10 });
    const g = (model.gearMeshes ?? [])[0];
    Object.assign(g, { stiffness: 400e3, offset: 0.05e-3 });
    Object.assign(g.a, { at: 0.6, radius: 0.04 });
    Object.assign(g.b, { at: 0.05, radius: 0.12 });
    const c = (model.couplings ?? [])[0];
    Object.assign(c, { stiffness: 8e3, misfit: (0.5 * Math.PI) / 180 });
    c.a.at = 0.3;
    const x = solveModel(demo);
    const y = solveModel(model);
    const rel = (p: number, q: number) => Math.abs(p - q) / Math.max(Math.abs(p), Math.abs(q), TINY);
    x.reactions.forEach((r, i) => expect(rel(r.torque, y.reactions[i].torque), r.support).toBeLessThanOrEqual(1e-12));
    expect(rel(x.gearMeshes[0].force, y.gearMeshes[0].force)).toBeLessThanOrEqual(1e-12);
    expect(rel(x.couplings[0].torqueA, y.couplings[0].torqueA)).toBeLessThanOrEqual(1e-12);
  });
});

describe('sparse and dense solvers agree', () => {
  it.each([['demo', demo] as [string, Model], ...systems(10000, 80, { shafts: [1, 8] })])('%s', (_name, model) => {
    const x = solveModel(model);
    const y = solveModel(model, { solver: 'dense' });
    expect(x.stats.stations).toBeLessThan(300);
    const points = x.shafts.flatMap((s) => s.stations.map((st) => ({ shaft: s.id, z: st.z })));
    const a = linearParts(x, points);
    const b = linearParts(y, points);
    expectSameMaps(b.rotation, a.rotation, 1e-10, 'rotation');
    expectSameMaps(b.torque, a.torque, 1e-10, 'torque');
    // Force scale: the largest torque in the solution over the mesh's radius (a mesh that carries nothing has a round-off force).
    const tScale = Math.max(TINY, maxAbs(a.torque.values()));
    x.gearMeshes.forEach((g, i) => expect(Math.abs(g.force - y.gearMeshes[i].force), g.gearMesh).toBeLessThanOrEqual((1e-10 * tScale) / g.radiusA));
  });
});

// ---------------------------------------------------------------------------
// The same properties with non-circular sections, tapered segments and stress raisers
// (randomModel's `shapes` option). Tolerances as above: round-off allowances, common practice, no source.

const withShapes: RandomModelOptions = { shapes: true };

/** The middle section of a tapered segment cut at `first` from its start: diameters interpolated linearly. */
function taperMiddle(model: Model, seg: Model['shafts'][number]['segments'][number], first: number, id: string): Model['sections'][number] {
  const a = model.sections.find((s) => s.id === seg.section);
  const b = model.sections.find((s) => s.id === seg.sectionEnd);
  if (!a || !b) throw new Error('taper without its sections');
  const f = first / (seg.length as number);
  const lerp = (x: number, y: number) => x + (y - x) * f;
  return a.shape === 'hollow'
    ? { id, shape: 'hollow', d: lerp(a.d as number, b.d as number), di: lerp(a.di as number, b.di as number) }
    : { id, shape: 'solid', d: lerp(a.d as number, b.d as number) };
}

describe('with new shapes, tapers and stress raisers', () => {
  it('the generator makes systems that solve, with every shape, both kinds of taper and both kinds of raiser among them', () => {
    const seen = { rectangle: 0, ellipse: 0, rectangularTube: 0, thinOpen: 0, custom: 0, solidTaper: 0, hollowTaper: 0, shoulder: 0, factor: 0 };
    for (const [name, model] of systems(11000, 120, withShapes)) {
      const sol = solveModel(model);
      expect(sol.format, name).toBe('shaftnet-solution/1');
      for (const shaft of model.shafts) {
        for (const seg of shaft.segments) {
          const sec = model.sections.find((s) => s.id === seg.section);
          if (seg.sectionEnd !== undefined) sec?.shape === 'hollow' ? seen.hollowTaper++ : seen.solidTaper++;
          else if (sec && sec.shape in seen) seen[sec.shape as keyof typeof seen]++;
        }
      }
      for (const r of model.stressRaisers ?? []) seen[r.kind]++;
      expect(sol.stressRaisers?.length ?? 0, name).toBe((model.stressRaisers ?? []).length);
    }
    for (const [what, count] of Object.entries(seen)) expect(count, what).toBeGreaterThan(5);
  });

  it.each(systems(12000, 120, withShapes))('%s: equilibrium of every shaft', (_name, model) => {
    const sol = solveModel(model);
    const loads = pointLoads(model, sol);
    const scale = torqueScale(model, sol);
    for (const shaft of model.shafts) {
      const sum =
        loads.filter((p) => p.shaft === shaft.id).reduce((s, p) => s + p.torque, 0) +
        distributedOn(model, shaft.id).reduce((s, d) => s + resultant(d), 0);
      expect(Math.abs(sum), `shaft ${shaft.id}`).toBeLessThanOrEqual(1e-9 * scale);
    }
    expect(sol.equilibrium.maxResidual).toBeLessThanOrEqual(1e-9 * scale);
  });

  it.each(seeds(13000, 60))('seed %i: Maxwell–Betti reciprocity', (seed) => {
    const base = randomModel(seed, { loads: false, imposed: false, shapes: true });
    const rng = new Rng(seed + 1);
    const fixed = (base.supports ?? []).filter((s) => s.kind === 'fixed').map((s) => ({ shaft: s.shaft, z: si(s.at, 'length') }));
    const candidates: Array<{ shaft: string; z: number }> = [];
    for (const shaft of base.shafts) {
      for (const span of segmentSpans(base, shaft.id)) {
        candidates.push({ shaft: shaft.id, z: span.to }, { shaft: shaft.id, z: Math.round(((span.from + span.to) / 2) * 10000) / 10000 });
      }
    }
    const free = candidates.filter((c) => !fixed.some((f) => f.shaft === c.shaft && Math.abs(f.z - c.z) <= Z_TOL));
    const i = rng.pick(free);
    const j = rng.pick(free);
    const load = (unit: { shaft: string; z: number }, other: { shaft: string; z: number }): Model => ({
      ...base,
      torques: [
        { id: 'unit', shaft: unit.shaft, at: unit.z, torque: 1 },
        { id: 'zero', shaft: other.shaft, at: other.z, torque: 0 },
      ],
    });
    const a = solveModel(load(i, j));
    const b = solveModel(load(j, i));
    const fii = rotationAt(a, i.shaft, i.z);
    const fjj = rotationAt(b, j.shaft, j.z);
    expect(fii).toBeGreaterThan(0);
    expect(fjj).toBeGreaterThan(0);
    expect(Math.abs(rotationAt(b, i.shaft, i.z) - rotationAt(a, j.shaft, j.z))).toBeLessThanOrEqual(1e-10 * Math.max(fii, fjj));
  });

  it.each(seeds(14000, 60))('seed %i: superposition and homogeneity', (seed) => {
    expectLinear(randomModel(seed, { imposed: false, shapes: true }), seed);
  });

  it.each(seeds(15000, 80))('seed %i: splitting a segment (a taper into two sub-tapers) changes nothing at the original stations', (seed) => {
    const model = randomModel(seed, withShapes);
    const rng = new Rng(seed + 3);
    const original = solveModel(model);
    // Prefer a tapered segment when the model has one.
    const tapered = model.shafts.flatMap((s, k) => s.segments.map((g, j) => [k, j, g.sectionEnd !== undefined] as const)).filter((x) => x[2]);
    const [k, j] = tapered.length > 0 ? rng.pick(tapered) : [rng.int(0, model.shafts.length - 1), 0];
    const shaft = model.shafts[k];
    const span = segmentSpans(model, shaft.id)[j];
    const taken = shaftResult(original, shaft.id).stations.map((s) => s.z);
    let cut = NaN;
    for (let tries = 0; tries < 100 && !(cut > 0); tries++) {
      const z = Math.round(rng.range(span.from, span.to) * 10000) / 10000;
      if (taken.every((t) => Math.abs(t - z) >= MIN_GAP / 2)) cut = z;
    }
    expect(cut, 'found a place to cut').toBeGreaterThan(0);
    const seg = shaft.segments[j];
    const first = cut - span.from;
    const split = structuredClone(model);
    if (seg.sectionEnd === undefined) {
      split.shafts[k].segments.splice(j, 1, { ...seg, length: first }, { ...seg, length: (seg.length as number) - first });
    } else {
      const mid = taperMiddle(model, seg, first, 'cutSection');
      split.sections.push(mid);
      split.shafts[k].segments.splice(j, 1, { ...seg, length: first, sectionEnd: mid.id }, { ...seg, section: mid.id, length: (seg.length as number) - first });
    }
    const after = solveModel(split);
    const points = original.shafts.flatMap((s) => s.stations.map((st) => ({ shaft: s.id, z: st.z })));
    expectSameMaps(linearParts(after, points).rotation, linearParts(original, points).rotation, 1e-10, 'rotation');
    expectSameMaps(linearParts(after, points).torque, linearParts(original, points).torque, 1e-10, 'torque');
    // The peak stress and twist of the whole are those of its two pieces.
    const before = shaftResult(original, shaft.id).segments[j];
    const pieces = shaftResult(after, shaft.id).segments.slice(j, j + 2);
    const peak = Math.max(...pieces.map((p) => p.layers[p.layers.length - 1].maxShear));
    // Scale: the largest stress in the system (a shaft that carries nothing has round-off stresses of it).
    const stressScale = Math.max(TINY, ...original.shafts.flatMap((s) => s.segments.flatMap((g) => g.layers.map((l) => l.maxShear))));
    expect(Math.abs(peak - before.layers[before.layers.length - 1].maxShear)).toBeLessThanOrEqual(1e-10 * stressScale);
    expect(Math.abs(pieces[0].twist + pieces[1].twist - before.twist)).toBeLessThanOrEqual(1e-10 * rotationScale(original));
  });

  it.each(systems(16000, 80, { shafts: [1, 8], shapes: true }))('%s: sparse and dense solvers agree', (_name, model) => {
    const x = solveModel(model);
    const y = solveModel(model, { solver: 'dense' });
    const points = x.shafts.flatMap((s) => s.stations.map((st) => ({ shaft: s.id, z: st.z })));
    expectSameMaps(linearParts(y, points).rotation, linearParts(x, points).rotation, 1e-10, 'rotation');
    expectSameMaps(linearParts(y, points).torque, linearParts(x, points).torque, 1e-10, 'torque');
    // Scale: the largest local peak or layer stress of the system.
    const stressScale = Math.max(TINY, ...(x.stressRaisers ?? []).map((r) => r.localPeak), ...x.shafts.flatMap((s) => s.segments.flatMap((g) => g.layers.map((l) => l.maxShear))));
    (x.stressRaisers ?? []).forEach((r, i) => expect(Math.abs(r.localPeak - (y.stressRaisers ?? [])[i].localPeak), r.id).toBeLessThanOrEqual(1e-10 * stressScale));
  });

  it.each(seeds(17000, 40))('seed %i: unit strings equal SI numbers for the new fields', (seed) => {
    const model = randomModel(seed, withShapes);
    const x = solveModel(model);
    const y = solveModel(withUnitStrings(model, seed + 11));
    expect(y.shafts.map((s) => s.stations.length)).toEqual(x.shafts.map((s) => s.stations.length));
    const points = x.shafts.flatMap((s) => s.stations.map((st) => ({ shaft: s.id, z: st.z })));
    expectSameMaps(linearParts(y, points).rotation, linearParts(x, points).rotation, 1e-12, 'rotation');
  });
});
