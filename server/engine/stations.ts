/**
 * Stations: the points along each shaft where the solution is sampled exactly.
 *
 * Every segment end, support, point torque, end of a distributed torque, gear,
 * coupling, disc, stress raiser and dynamic excitation becomes a station; consecutive stations of a shaft bound an
 * element of one segment (uniform, or a sub-taper of a tapered one) and linear distributed torque. Each station has
 * one rotation unknown (a "dof"), numbered shaft by shaft, z ascending.
 */
import type { ResolvedModel } from './normalise.js';
import type { Workspace } from './workspace.js';

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
export function buildStations(model: ResolvedModel, ws: Workspace): StationLayout {
  const nShafts = model.shafts.length;
  // Two passes over the points of every shaft: count them, then write them into one typed array.
  const start = ws.i32(nShafts + 1);
  const points = (visit: (s: number, z: number) => void) => {
    model.shafts.forEach((shaft, s) => {
      visit(s, 0);
      for (const seg of shaft.segments) visit(s, seg.z1);
    });
    for (const p of model.supports) visit(p.shaft, p.z);
    for (const p of model.torques) visit(p.shaft, p.z);
    for (const p of model.discs) visit(p.shaft, p.z);
    for (const p of model.raisers) visit(p.shaft, p.z);
    if (model.dynamics) for (const p of model.dynamics.excitations) visit(p.shaft, p.z);
    for (const d of model.distributed) {
      visit(d.shaft, d.from);
      visit(d.shaft, d.to);
    }
    for (const g of model.meshes) {
      visit(g.a.shaft, g.a.z);
      visit(g.b.shaft, g.b.z);
    }
    for (const c of model.couplings) {
      visit(c.a.shaft, c.a.z);
      visit(c.b.shaft, c.b.z);
    }
  };
  points((s) => start[s + 1]++);
  for (let s = 0; s < nShafts; s++) start[s + 1] += start[s];
  const all = ws.f64(start[nShafts]);
  const fill = ws.i32Copy(start, nShafts);
  points((s, z) => (all[fill[s]++] = z));

  // Each shaft's range holds its segment ends first (0 and every z1: ascending, as lengths are
  // positive), then the other points. Sort the others only, then merge the two ascending runs,
  // keeping one station of points closer than the tolerance.
  const shaftStart = ws.i32(nShafts + 1);
  const merged = ws.f64(start[nShafts]);
  for (let s = 0; s < nShafts; s++) {
    const ends = start[s] + 1 + model.shafts[s].segments.length;
    let a = start[s];
    let b = ends;
    if (!ascending(all, a, ends)) {
      all.subarray(a, start[s + 1]).sort(); // cannot happen for a normalised model; kept as a guard
      b = start[s + 1];
    } else if (!ascending(all, b, start[s + 1])) all.subarray(b, start[s + 1]).sort();
    const aEnd = b;
    const bEnd = start[s + 1];
    const tol = MERGE_TOLERANCE * model.shafts[s].length;
    const base = shaftStart[s];
    let n = base;
    while (a < aEnd || b < bEnd) {
      const v = b >= bEnd || (a < aEnd && all[a] <= all[b]) ? all[a++] : all[b++];
      if (n === base || v - merged[n - 1] > tol) merged[n++] = v;
    }
    // The last station is the shaft's end exactly, whatever point merged into it.
    merged[n - 1] = model.shafts[s].length;
    shaftStart[s + 1] = n;
  }
  const dofCount = shaftStart[nShafts];
  const z = ws.f64(dofCount);
  z.set(merged.subarray(0, dofCount));
  const shaftOf = ws.i32(dofCount);
  const elemCount = dofCount - nShafts;
  const elemLeft = ws.i32(elemCount);
  const elemSegment = ws.i32(elemCount);
  let e = 0;
  for (let s = 0; s < nShafts; s++) {
    const base = shaftStart[s];
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

  const { elemT1, elemT2 } = distributedIntensities(model, z, elemCount, stationAt, ws);
  return { dofCount, shaftStart, z, shaftOf, elemLeft, elemSegment, elemT1, elemT2, stationAt };
}

/**
 * The distributed torque at the left (elemT1) and right (elemT2) end of every element, N·m/m:
 * the sum over the model's distributed torques (a load combination passes its factored ones).
 */
export function distributedIntensities(
  model: Pick<ResolvedModel, 'distributed'>,
  z: Float64Array,
  elemCount: number,
  stationAt: StationLayout['stationAt'],
  ws: Workspace,
): { elemT1: Float64Array; elemT2: Float64Array } {
  // Element index of a left dof: dof k on shaft s is element k − s.
  const elemT1 = ws.f64(elemCount);
  const elemT2 = ws.f64(elemCount);
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

  return { elemT1, elemT2 };
}

/** True when a[from … to − 1] never decreases. */
function ascending(a: Float64Array, from: number, to: number): boolean {
  for (let k = from + 1; k < to; k++) if (a[k] < a[k - 1]) return false;
  return true;
}
