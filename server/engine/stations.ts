/**
 * Stations: the points along each shaft where the solution is sampled exactly.
 *
 * Every segment end, support, point torque, end of a distributed torque, gear,
 * coupling and disc becomes a station; consecutive stations of a shaft bound an
 * element of uniform section and linear distributed torque. Each station has
 * one rotation unknown (a "dof"), numbered shaft by shaft, z ascending.
 */
import type { ResolvedModel } from './normalise.js';
import { f64, i32 } from './arena.js';

export interface StationLayout {
  readonly dofCount: number;
  /** First dof of each shaft; shaftStart[s + 1] − shaftStart[s] stations on shaft s. */
  readonly shaftStart: Int32Array;
  /** z of each dof on its shaft, m. */
  readonly z: Float64Array;
  /** Shaft of each dof. */
  readonly shaftOf: Int32Array;
  /** Element e joins dof elemLeft[e] and elemLeft[e] + 1. */
  readonly elemLeft: Int32Array;
  /** Index (within its shaft) of the segment that holds element e. */
  readonly elemSegment: Int32Array;
  /** Distributed torque at the left and right end of element e, N·m/m. */
  readonly elemT1: Float64Array;
  readonly elemT2: Float64Array;
  /** The dof at point z on shaft s (z must be a station). */
  stationAt(shaft: number, z: number): number;
}

/** Two points closer than this fraction of the shaft length are one station. */
const MERGE_TOLERANCE = 1e-12;

/** Builds the stations and elements of every shaft. */
export function buildStations(model: ResolvedModel): StationLayout {
  const nShafts = model.shafts.length;
  const points: number[][] = model.shafts.map(() => []);
  const add = (s: number, z: number) => points[s].push(z);
  model.shafts.forEach((shaft, s) => {
    add(s, 0);
    for (const seg of shaft.segments) add(s, seg.z1);
  });
  for (const p of model.supports) add(p.shaft, p.z);
  for (const p of model.torques) add(p.shaft, p.z);
  for (const p of model.discs) add(p.shaft, p.z);
  for (const d of model.distributed) {
    add(d.shaft, d.from);
    add(d.shaft, d.to);
  }
  for (const g of model.meshes) {
    add(g.a.shaft, g.a.z);
    add(g.b.shaft, g.b.z);
  }
  for (const c of model.couplings) {
    add(c.a.shaft, c.a.z);
    add(c.b.shaft, c.b.z);
  }

  const shaftStart = i32(nShafts + 1);
  const merged: Float64Array[] = [];
  for (let s = 0; s < nShafts; s++) {
    const sorted = f64(points[s].length);
    sorted.set(points[s]);
    sorted.sort();
    const tol = MERGE_TOLERANCE * model.shafts[s].length;
    let n = 0;
    for (let k = 0; k < sorted.length; k++) {
      if (n === 0 || sorted[k] - sorted[n - 1] > tol) sorted[n++] = sorted[k];
    }
    // The last station is the shaft's end exactly, whatever point merged into it.
    sorted[n - 1] = model.shafts[s].length;
    merged.push(sorted.subarray(0, n));
    shaftStart[s + 1] = shaftStart[s] + n;
  }
  const dofCount = shaftStart[nShafts];
  const z = f64(dofCount);
  const shaftOf = i32(dofCount);
  const elemCount = dofCount - nShafts;
  const elemLeft = i32(elemCount);
  const elemSegment = i32(elemCount);
  let e = 0;
  for (let s = 0; s < nShafts; s++) {
    const base = shaftStart[s];
    z.set(merged[s], base);
    shaftOf.fill(s, base, shaftStart[s + 1]);
    const segments = model.shafts[s].segments;
    let seg = 0;
    for (let k = base; k < shaftStart[s + 1] - 1; k++) {
      const mid = 0.5 * (z[k] + z[k + 1]);
      while (seg < segments.length - 1 && mid > segments[seg].z1) seg++;
      elemLeft[e] = k;
      elemSegment[e] = seg;
      e++;
    }
  }

  const stationAt = (shaft: number, zq: number): number => {
    let lo = shaftStart[shaft];
    let hi = shaftStart[shaft + 1] - 1;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (z[mid] < zq) lo = mid + 1;
      else hi = mid;
    }
    // lo is the first station with z ≥ zq; the nearer of it and its left neighbour is the one merged with zq.
    if (lo > shaftStart[shaft] && zq - z[lo - 1] < z[lo] - zq) return lo - 1;
    return lo;
  };

  // Element index of a left dof: dof k on shaft s is element k − s.
  const elemT1 = f64(elemCount);
  const elemT2 = f64(elemCount);
  for (const d of model.distributed) {
    if (d.to <= d.from) continue; // a zero-length load carries nothing
    const first = stationAt(d.shaft, d.from);
    const last = stationAt(d.shaft, d.to);
    const slope = (d.end - d.start) / (d.to - d.from);
    for (let k = first; k < last; k++) {
      const el = k - d.shaft;
      elemT1[el] += d.start + slope * (z[k] - d.from);
      elemT2[el] += d.start + slope * (z[k + 1] - d.from);
    }
  }

  return { dofCount, shaftStart, z, shaftOf, elemLeft, elemSegment, elemT1, elemT2, stationAt };
}
