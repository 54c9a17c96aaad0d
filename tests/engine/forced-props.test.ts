/**
 * Properties of the forced response (server/engine/dynamics/forced.ts) and of its complex
 * symmetric L·D·Lᵀ (complex-ldl.ts).
 *
 * - The complex L·D·Lᵀ solves as a dense complex Gaussian elimination written here (partial
 *   pivoting, no shared code), on seeded random matrices of the form K·(1 + 2iζ) − Ω²·M.
 * - As ζ → 0 and Ω → 0 the vibratory torque of every segment tends to the static |T| under the
 *   same torque (engine statics, seeded random geared models with tapers and layered sections).
 * - A taper whose two ends are the same section goes through the numerically integrated path
 *   and must agree with the closed-form uniform element.
 * - A segment cut by an extra station (a zero torque) has the same vibratory peak.
 * - Rigid gears reflect stiffness and inertia by the ratio squared: a geared pair of massless
 *   shafts against the two-disc closed form with k_eq = 1/(1/k_a + 1/(k_b·n²)) and J2·n².
 * - The check adds the given static stress; error codes for no damping and a singular system.
 * - The walk writes an object of the schema (shared-types/forced-response.ts).
 * Tolerances are round-off allowances (common practice, no source) unless said otherwise.
 */
import { describe, expect, it } from 'vitest';
import { toFullCSC, ldlSymbolic, type SymmetricEntries } from '../../server/engine/sparse-solver.js';
import { complexLdlNumeric, complexLdlSolve } from '../../server/engine/dynamics/complex-ldl.js';
import { chebPoints, CHEB_LEVELS } from '../../server/engine/dynamics/forced-peaks.js';
import { Workspace } from '../../server/engine/workspace.js';
import { solveModel } from '../../server/engine/index.js';
import { ModelError } from '../../shared-types/errors.js';
import type { Model } from '../../shared-types/model.js';
import { randomModel, Rng, segmentSpans } from './random-models.js';
import { dynamicsOf, inertiaFromDensity, runForced } from './forced-helpers.js';
import { Value } from 'typebox/value';
import { normaliseModel } from '../../server/engine/normalise.js';
import { buildStations } from '../../server/engine/stations.js';
import { forcedResponse } from '../../server/engine/dynamics/forced.js';
import { forcedRecords, walkForcedResponse } from '../../server/engine/dynamics/forced-output.js';
import { ForcedResponse } from '../../shared-types/forced-response.js';

type C = [number, number];

/** Dense complex solve by Gaussian elimination with partial pivoting (rows of [re, im] pairs). */
function denseSolve(A: C[][], b: C[]): C[] {
  const n = b.length;
  const M = A.map((row, i) => [...row.map((x) => [x[0], x[1]] as C), [b[i][0], b[i][1]] as C]);
  const mul = (a: C, c: C): C => [a[0] * c[0] - a[1] * c[1], a[0] * c[1] + a[1] * c[0]];
  const div = (a: C, c: C): C => {
    const den = c[0] * c[0] + c[1] * c[1];
    return [(a[0] * c[0] + a[1] * c[1]) / den, (a[1] * c[0] - a[0] * c[1]) / den];
  };
  for (let k = 0; k < n; k++) {
    let p = k;
    for (let i = k + 1; i < n; i++) if (Math.hypot(...M[i][k]) > Math.hypot(...M[p][k])) p = i;
    [M[k], M[p]] = [M[p], M[k]];
    for (let i = k + 1; i < n; i++) {
      const f = div(M[i][k], M[k][k]);
      for (let j = k; j <= n; j++) {
        const t = mul(f, M[k][j]);
        M[i][j] = [M[i][j][0] - t[0], M[i][j][1] - t[1]];
      }
    }
  }
  const x: C[] = new Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s: C = [M[i][n][0], M[i][n][1]];
    for (let j = i + 1; j < n; j++) {
      const t = mul(M[i][j], x[j]);
      s = [s[0] - t[0], s[1] - t[1]];
    }
    x[i] = div(s, M[i][i]);
  }
  return x;
}

describe('complex symmetric L·D·Lᵀ against dense complex elimination', () => {
  it.each(Array.from({ length: 20 }, (_, i) => 9100 + i))('seed %i', (seed) => {
    const rng = new Rng(seed);
    const n = rng.int(2, 40);
    // K: springs of a random tree plus a few loop edges, some grounded; M: positive masses.
    const edges: Array<[number, number, number]> = [];
    for (let v = 1; v < n; v++) edges.push([rng.int(0, v - 1), v, rng.range(0.5, 5)]);
    for (let e = 0; e < Math.min(3, n - 2); e++) {
      const a = rng.int(0, n - 1);
      const b = rng.int(0, n - 1);
      if (a !== b) edges.push([a, b, rng.range(0.5, 5)]);
    }
    const zeta = rng.range(0.001, 0.1);
    const w2 = rng.range(0.1, 3);
    const A: C[][] = Array.from({ length: n }, () => Array.from({ length: n }, () => [0, 0] as C));
    const addK = (i: number, j: number, k: number) => {
      A[i][j][0] += k;
      A[i][j][1] += 2 * zeta * k;
    };
    for (const [a, b, k] of edges) {
      addK(a, a, k);
      addK(b, b, k);
      addK(a, b, -k);
      addK(b, a, -k);
    }
    addK(0, 0, rng.range(0.5, 5));
    for (let i = 0; i < n; i++) A[i][i][0] -= w2 * rng.range(0.2, 2);
    // The same matrix as diagonal + off-diagonal entries, in the solver's storage.
    const offR: number[] = [];
    const offC: number[] = [];
    for (let j = 0; j < n; j++) for (let i = j + 1; i < n; i++) if (A[i][j][0] !== 0 || A[i][j][1] !== 0) {
      offR.push(i);
      offC.push(j);
    }
    const b: C[] = Array.from({ length: n }, () => [rng.range(-1, 1), rng.range(-1, 1)] as C);
    const want = denseSolve(A, b);
    const ws = new Workspace();
    ws.session(() => {
      const entries: SymmetricEntries = {
        n,
        diag: new Float64Array(n),
        rows: Int32Array.from(offR),
        cols: Int32Array.from(offC),
        vals: new Float64Array(offR.length).fill(1),
        count: offR.length,
      };
      const pattern = toFullCSC(entries, ws);
      const sym = ldlSymbolic(pattern, ws);
      const Axr = new Float64Array(pattern.Ai.length);
      const Axi = new Float64Array(pattern.Ai.length);
      for (let c = 0; c < n; c++) {
        for (let p = pattern.Ap[c]; p < pattern.Ap[c + 1]; p++) {
          Axr[p] = A[pattern.Ai[p]][c][0];
          Axi[p] = A[pattern.Ai[p]][c][1];
        }
      }
      const dr = Float64Array.from(A.map((r, i) => r[i][0]));
      const di = Float64Array.from(A.map((r, i) => r[i][1]));
      const f = complexLdlNumeric(sym, { n, Ap: pattern.Ap, Ai: pattern.Ai, Axr, Axi }, dr, di, ws);
      const xr = new Float64Array(n);
      const xi = new Float64Array(n);
      complexLdlSolve(sym, f, Float64Array.from(b.map((v) => v[0])), Float64Array.from(b.map((v) => v[1])), xr, xi, new Float64Array(n), new Float64Array(n));
      let scale = 0;
      for (const v of want) scale = Math.max(scale, Math.hypot(v[0], v[1]));
      for (let i = 0; i < n; i++) {
        expect(Math.abs(xr[i] - want[i][0]), `re x[${i}]`).toBeLessThan(1e-9 * scale);
        expect(Math.abs(xi[i] - want[i][1]), `im x[${i}]`).toBeLessThan(1e-9 * scale);
      }
      // Another matrix of the pattern (another Ω) factorised into this factor's storage, its work
      // arrays reused, is to the bit the fresh factorisation of that matrix.
      const dr2 = Float64Array.from(dr, (v, i) => v - 0.37 * (1 + (i % 3)));
      const csc = { n, Ap: pattern.Ap, Ai: pattern.Ai, Axr, Axi };
      const fresh = complexLdlNumeric(sym, csc, dr2, di, ws);
      const freshCopy = [fresh.Dr, fresh.Di, fresh.Lxr, fresh.Lxi].map((a) => Array.from(a));
      const reused = complexLdlNumeric(sym, csc, dr2, di, ws, f);
      expect(reused.Dr).toBe(f.Dr);
      expect([reused.Dr, reused.Di, reused.Lxr, reused.Lxi].map((a) => Array.from(a))).toEqual(freshCopy);
    });
  });
});

/** Every material of a model with a density (kg/m³). */
function densities(model: Model, rho: number): Record<string, number> {
  return Object.fromEntries(model.materials.map((m) => [m.id, rho]));
}

describe('ζ → 0 and Ω → 0: the static solve under the same torque', () => {
  it.each(Array.from({ length: 30 }, (_, i) => 9200 + i))('seed %i', (seed) => {
    const base = randomModel(seed, { loads: false, imposed: false, shapes: true });
    const rng = new Rng(seed + 7);
    const shaft = rng.pick(base.shafts);
    const spans = segmentSpans(base, shaft.id);
    const z = rng.pick(spans).to;
    const amplitude = rng.range(10, 500);
    const model: Model = { ...base, torques: [{ id: 'P', shaft: shaft.id, at: z, torque: amplitude }] };
    const statics = solveModel(model);
    const s = base.shafts.indexOf(shaft);
    const forced = runForced(
      model,
      dynamicsOf({ shaft: 0, min: 1e-4, max: 1e-4 }, 1e-12, [{ id: 'E', shaft: s, z, amplitude, order: 1 }]),
      densities(base, 7800),
    );
    let g = 0;
    let scale = 0;
    for (const sr of statics.shafts) for (const sg of sr.segments) scale = Math.max(scale, sg.maxAbsTorque);
    for (const sr of statics.shafts) {
      for (const sg of sr.segments) {
        expect(Math.abs(forced.peakTorque[0][g] - sg.maxAbsTorque), `${sr.id}[${sg.index}]`).toBeLessThanOrEqual(1e-7 * scale + 1e-12);
        g++;
      }
    }
  });
});

const G = 80e9;
const RHO = 7800;

function oneShaft(segments: unknown[], extra: Partial<Model> = {}): Model {
  return {
    format: 'shaftnet/1',
    name: 'shaft',
    materials: [{ id: 'steel', G, allowableShear: 60e6 }],
    sections: [
      { id: 'd50', shape: 'solid', d: 0.05 },
      { id: 'h50', shape: 'hollow', d: 0.05, di: 0.03 },
    ],
    shafts: [{ id: 'a', segments }],
    supports: [{ id: 'A', shaft: 'a', at: 0, kind: 'fixed' }],
    ...extra,
  } as Model;
}

describe('tapers and cuts', () => {
  const L = 0.9;
  const dyn = (z: number) => dynamicsOf({ shaft: 0, min: 500, max: 9000 }, 0.03, [{ id: 'E', shaft: 0, z, amplitude: 80, order: 1 }]);
  it('a taper between equal sections (integrated) agrees with the uniform closed form', () => {
    for (const sec of ['d50', 'h50']) {
      const uniform = runForced(oneShaft([{ length: L, section: sec, material: 'steel' }], { discs: [{ id: 'D', shaft: 'a', at: L, inertia: 0.02 }] }), dyn(L), { steel: RHO }, { gridSpeeds: 30 });
      const taper = runForced(
        oneShaft([{ length: L, section: sec, sectionEnd: sec, material: 'steel' }], { discs: [{ id: 'D', shaft: 'a', at: L, inertia: 0.02 }] }),
        dyn(L),
        { steel: RHO },
        { gridSpeeds: 30 },
      );
      for (let i = 0; i < 30; i++) {
        const u = uniform.torque[0][0][i];
        // The fixed end carries the largest |T| here; the taper reads |T| at its integration nodes.
        expect(Math.abs(taper.torque[0][0][i] - u) / u, `speed ${i}`).toBeLessThan(1e-8);
        expect(Math.abs(taper.shear[0][0][i] - uniform.shear[0][0][i]) / uniform.shear[0][0][i]).toBeLessThan(1e-8);
      }
      expect(Math.abs(taper.peakTorque[0][0] - uniform.peakTorque[0][0]) / uniform.peakTorque[0][0]).toBeLessThan(1e-8);
    }
  });

  it('a segment cut by a station (a zero torque) keeps its vibratory peak', () => {
    const whole = runForced(oneShaft([{ length: L, section: 'd50', material: 'steel' }]), dyn(L), { steel: RHO }, { gridSpeeds: 50 });
    const cut = runForced(oneShaft([{ length: L, section: 'd50', material: 'steel' }], { torques: [{ id: 'Z', shaft: 'a', at: 0.37, torque: 0 }] }), dyn(L), { steel: RHO }, { gridSpeeds: 50 });
    for (let i = 0; i < 50; i++) expect(Math.abs(cut.torque[0][0][i] - whole.torque[0][0][i]) / whole.torque[0][0][i]).toBeLessThan(1e-9);
    expect(Math.abs(cut.peakTorque[0][0] - whole.peakTorque[0][0]) / whole.peakTorque[0][0]).toBeLessThan(1e-9);
    expect(Math.abs(cut.peakSpeed[0][0] - whole.peakSpeed[0][0]) / whole.peakSpeed[0][0]).toBeLessThan(1e-6);
  });

  it('the check adds the static stress to the peak vibratory stress', () => {
    const run = runForced(oneShaft([{ length: L, section: 'd50', material: 'steel' }]), dyn(L), { steel: RHO }, { gridSpeeds: 20, staticShear: (n) => new Float64Array(n).fill(12e6) });
    expect(run.checks).toHaveLength(1);
    const c = run.checks[0];
    const J = (Math.PI * 0.05 ** 4) / 32;
    expect(Math.abs(c.vibratory - (run.peakTorque[1][0] * 0.025) / J) / c.vibratory).toBeLessThan(1e-12);
    expect(c.value).toBe(c.vibratory + 12e6);
    expect(c.limit).toBe(60e6);
  });
});

describe('a gear pair reflects stiffness and inertia by the ratio squared', () => {
  it.each([
    ['rigid mesh', null, null],
    ['compliant mesh and coupling', 4e8, 3e4],
  ] as const)('%s: the two-disc closed form of the system reduced to shaft a', (_name, meshK, couplingK) => {
    const ra = 0.05;
    const rb = 0.125;
    const d = 0.04;
    const J = (Math.PI * d ** 4) / 32;
    const La = 0.6;
    const Lb = 0.8;
    const ka = (G * J) / La;
    const kb = (G * J) / Lb;
    const J1 = 0.3;
    const J2 = 2.5;
    // φb = −(ra/rb)·φa: shaft b's stiffness and inertia seen on a scale by n² = (ra/rb)².
    const n2 = (ra / rb) ** 2;
    // In series on shaft a's scale: shaft a, the mesh (tangential k·ra²), shaft b and the coupling (× n²).
    const keq = 1 / (1 / ka + (meshK === null ? 0 : 1 / (meshK * ra * ra)) + 1 / (kb * n2) + (couplingK === null ? 0 : 1 / (couplingK * n2)));
    const J2r = J2 * n2;
    const wn = Math.sqrt((keq * (J1 + J2r)) / (J1 * J2r));
    const model: Model = {
      format: 'shaftnet/1',
      name: 'geared pair',
      materials: [{ id: 'steel', G }],
      sections: [{ id: 's', shape: 'solid', d }],
      shafts: [
        { id: 'a', segments: [{ length: La, section: 's', material: 'steel' }] },
        { id: 'b', segments: [{ length: Lb, section: 's', material: 'steel' }] },
        { id: 'c', segments: [{ length: 0.1, section: 's', material: 'steel' }] },
      ],
      gearMeshes: [{ id: 'G', a: { shaft: 'a', at: La, radius: ra }, b: { shaft: 'b', at: 0, radius: rb }, sense: 'opposite', ...(meshK === null ? {} : { stiffness: meshK }) }],
      // Shaft c holds disc 2 and joins shaft b by the coupling; c is massless and carries no torque
      // across its length (the disc sits at its coupled end).
      couplings: [{ id: 'C', a: { shaft: 'b', at: Lb }, b: { shaft: 'c', at: 0 }, ...(couplingK === null ? {} : { stiffness: couplingK }) }],
      discs: [
        { id: 'D1', shaft: 'a', at: 0, inertia: J1 },
        { id: 'D2', shaft: 'c', at: 0, inertia: J2 },
      ],
    } as Model;
    const zeta = 0.015;
    const F = 40;
    const run = runForced(model, dynamicsOf({ shaft: 0, min: 0.6 * wn, max: 1.4 * wn }, zeta, [{ id: 'E', shaft: 0, z: 0, amplitude: F, order: 1 }]), {}, { gridSpeeds: 30 });
    // Shaft a carries T = F·(J2r/(J1+J2r))·|1+2iζ|/|r² − 1 − 2iζ| (two-disc receptance, see
    // tests/reference/forced-response.test.ts); shaft b carries T·rb/ra.
    for (let i = 0; i < 30; i++) {
      const r = run.speeds[i] / wn;
      const Ta = (F * (J2r / (J1 + J2r)) * Math.hypot(1, 2 * zeta)) / Math.hypot(r * r - 1, 2 * zeta);
      expect(Math.abs(run.torque[0][0][i] - Ta) / Ta).toBeLessThan(1e-9);
      expect(Math.abs(run.torque[0][1][i] - (Ta * rb) / ra) / ((Ta * rb) / ra)).toBeLessThan(1e-9);
    }
    expect(Math.abs(run.peakSpeed[0][0] - wn) / wn).toBeLessThan(1e-6);
  });
});

describe('errors', () => {
  const model = oneShaft([{ length: 1, section: 'd50', material: 'steel' }]);
  it('SN_DYN_NO_DAMPING names /dynamics/damping', () => {
    expect.assertions(2);
    try {
      runForced(model, dynamicsOf({ shaft: 0, min: 10, max: 20 }, 0, [{ id: 'E', shaft: 0, z: 1, amplitude: 1, order: 1 }]), { steel: RHO });
    } catch (err) {
      expect((err as ModelError).issues[0].code).toBe('SN_DYN_NO_DAMPING');
      expect((err as ModelError).issues[0].pointer).toBe('/dynamics/damping');
    }
  });
  it('SN_DYN_FORCED_SINGULAR for a free shaft without inertia', () => {
    const free = { ...model, supports: [] } as Model;
    expect.assertions(2);
    try {
      runForced(free, dynamicsOf({ shaft: 0, min: 10, max: 20 }, 0.02, [{ id: 'E', shaft: 0, z: 1, amplitude: 1, order: 1 }]), {});
    } catch (err) {
      expect((err as ModelError).issues[0].code).toBe('SN_DYN_FORCED_SINGULAR');
      expect((err as ModelError).issues[0].shafts).toEqual(['a']);
    }
  });
});

describe('the written forced response', () => {
  /** A plain object writer over records that are their key lists (output.ts's writers do the same with compiled records). */
  class KeysWriter {
    result: unknown;
    private stack: Array<{ keys: readonly string[] | null; obj: Record<string, unknown>; arr: unknown[]; field: number }> = [];
    private put(v: unknown): void {
      const top = this.stack[this.stack.length - 1];
      if (!top) this.result = v;
      else if (top.keys === null) top.arr.push(v);
      else top.obj[top.keys[top.field++]] = v;
    }
    open(keys: readonly string[]): void {
      this.stack.push({ keys, obj: {}, arr: [], field: 0 });
    }
    list(): void {
      this.stack.push({ keys: null, obj: {}, arr: [], field: 0 });
    }
    close(): void {
      const top = this.stack.pop()!;
      this.put(top.keys === null ? top.arr : top.obj);
    }
    num(x: number): void {
      this.put(x);
    }
    optNum(x: number | null): void {
      this.put(x);
    }
    str(s: string): void {
      this.put(s);
    }
    bool(b: boolean): void {
      this.put(b);
    }
    absent(): void {
      this.stack[this.stack.length - 1].field++;
    }
    series(a: Float64Array, from: number, to: number): void {
      this.put(Array.from(a.subarray(from, to)));
    }
  }

  it('follows the schema, names segments "<shaft>[<index>]", puts the sum first and the worst check first', () => {
    const model = oneShaft(
      [
        { length: 0.4, section: 'd50', material: 'steel' },
        { length: 0.5, section: 'h50', material: 'steel' },
      ],
      { discs: [{ id: 'D', shaft: 'a', at: 0.9, inertia: 0.03 }] },
    );
    const resolved = normaliseModel(model);
    const ws = new Workspace();
    const written = ws.session(() => {
      const layout = buildStations(resolved, ws);
      const fr = forcedResponse(
        {
          model: resolved,
          layout,
          dynamics: dynamicsOf({ shaft: 0, min: 200, max: 4000 }, 0.02, [
            { id: 'E1', shaft: 0, z: 0.9, amplitude: 20, order: 1 },
            { id: 'E2', shaft: 0, z: 0.4, amplitude: 5, order: 3 },
          ]),
          inertia: inertiaFromDensity(resolved, () => RHO),
          staticShear: null,
        },
        ws,
        { gridSpeeds: 12 },
      )!;
      const w = new KeysWriter();
      walkForcedResponse(fr, resolved, w, forcedRecords((...keys) => keys));
      return w.result as ForcedResponse;
    });
    expect(Value.Check(ForcedResponse, written)).toBe(true);
    expect(written.speeds).toHaveLength(12);
    expect(written.segments.map((s) => s.item)).toEqual(['a[0]', 'a[1]']);
    expect(written.excitations.map((e) => e.id)).toEqual(['E1', 'E2']);
    // The sum response is the sum of the excitations' amplitudes at every speed.
    for (let g = 0; g < 2; g++) {
      for (let i = 0; i < 12; i++) {
        const sum = written.excitations[0].segments[g].torque[i] + written.excitations[1].segments[g].torque[i];
        expect(Math.abs(written.segments[g].torque[i] - sum)).toBeLessThanOrEqual(1e-12 * sum);
      }
    }
    expect(written.checks).toHaveLength(2);
    expect(written.checks[0].utilisation).toBeGreaterThanOrEqual(written.checks[1].utilisation);
    // No static part given: the check is the vibratory stress alone, and says so.
    for (const c of written.checks) {
      expect(c.static).toBeNull();
      expect(c.value).toBe(c.vibratory);
    }
  });
});

describe('peak refinement against a dense grid of exact solves', () => {
  // Segments of two sections and three lengths (several classes of h·√(m/GJ) in one fill), two
  // discs, two excitations of different orders: every curve (each excitation and the sum).
  const model = oneShaft(
    [
      { length: 0.3, section: 'd50', material: 'steel' },
      { length: 0.2, section: 'h50', material: 'steel' },
      { length: 0.4, section: 'd50', material: 'steel' },
    ],
    { discs: [{ id: 'D1', shaft: 'a', at: 0.5, inertia: 0.01 }, { id: 'D2', shaft: 'a', at: 0.9, inertia: 0.03 }] },
  );
  const min = 200;
  const max = 3000;
  const zeta = 0.01;
  const dyn = dynamicsOf({ shaft: 0, min, max }, zeta, [
    { id: 'E1', shaft: 0, z: 0.9, amplitude: 50, order: 1 },
    { id: 'E2', shaft: 0, z: 0.5, amplitude: 20, order: 3 },
  ]);
  it('each refined peak is at least every exactly solved value, and above the densest by no more than its spacing can miss', () => {
    const refined = runForced(model, dyn, { steel: RHO });
    const n = 40001;
    const dense = runForced(model, dyn, { steel: RHO }, { gridSpeeds: n, refine: false });
    const step = (max - min) / (n - 1);
    // A resonance peak read off a grid of spacing Δ is low by at most ≈ ½·(Δ/2 / (ζ·ω))² relative
    // (the single-mode receptance near its peak, closed form); here the narrowest half-width ζ·ω is
    // at least ζ·min (2 rad/s): 3.1e-4; 1e-3 allowed.
    const missed = 1e-3;
    expect(0.5 * (step / 2 / (zeta * min)) ** 2).toBeLessThan(missed);
    let peaksInside = 0;
    for (let c = 0; c < refined.curves; c++) {
      for (let g = 0; g < refined.segments; g++) {
        const series = dense.torque[c][g];
        let best = 0;
        for (let i = 1; i < n; i++) if (series[i] > series[best]) best = i;
        const R = refined.peakTorque[c][g];
        const D = series[best];
        expect(R, `curve ${c} segment ${g}`).toBeGreaterThanOrEqual(D * (1 - 1e-9));
        expect(R, `curve ${c} segment ${g}`).toBeLessThanOrEqual(D * (1 + missed));
        // Its speed within the dense grid's spacing of the densest reading's (a peak inside the range).
        if (best > 0 && best < n - 1) {
          peaksInside++;
          expect(Math.abs(refined.peakSpeed[c][g] - dense.speeds[best]), `curve ${c} segment ${g}`).toBeLessThanOrEqual(step);
        }
      }
    }
    expect(peaksInside).toBeGreaterThan(0);
  });
});

describe('Chebyshev points of the refinement levels nest', () => {
  // A level's points are every other point of the next (cos(jπ/(m−1)) = cos(2jπ/(2m−2)), exact in
  // binary: the products differ by a power of two), so a doubling reuses every solve made.
  it.each([
    [50, 51.37844611528822],
    [0.1, 0.30000000000000004],
    [1234.5, 1299.0000001],
  ])('on [%d, %d]', (lo, hi) => {
    for (let l = 0; l + 1 < CHEB_LEVELS.length; l++) {
      const m = CHEB_LEVELS[l];
      expect(CHEB_LEVELS[l + 1]).toBe(2 * m - 1);
      const coarse = chebPoints(lo, hi, m);
      const fine = chebPoints(lo, hi, 2 * m - 1);
      for (let j = 0; j < m; j++) expect(fine[2 * j], `level ${l} point ${j}`).toBe(coarse[j]);
      for (let j = 1; j < fine.length; j++) expect(fine[j]).toBeGreaterThan(fine[j - 1]);
    }
  });
});
