/**
 * The calculation sheet (GET /api/models/{id}/revisions/{rev}/sheet, POST /api/sheet): HTML under
 * the no-script CSP, no script and no inline handler, every substituted line redone from the numbers
 * the sheet prints (to the precision printed), the SHA-256 of the canonical model recomputed by an
 * implementation of the test's own, the sign-off block from a review history.
 *
 * Precision rule of the re-computation: inputs are printed exactly (shortest round-trip decimal) and
 * taken as exact; a derived value is printed to 6 significant digits, so it stands for an interval
 * of ± half a unit in its last digit. A recomputed result must agree with the printed one within half
 * a unit of the printed result's last digit plus what the half units of the derived values it used
 * can move it (first-order propagation: relative errors times their powers). Nothing looser.
 */
import fs from 'node:fs';
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderSheet } from '../../server/sheet/sheet.js';
import { solveModel } from '../../server/engine/index.js';
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import { makeApp, type TestApp } from './helpers.js';

const TOKEN = 'sheet-test-token-0123456789';
const bearer = { authorization: `Bearer ${TOKEN}` };
const CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:";

/**
 * An invented shaft of five segments, fixed at both ends, so that every substitution kind appears:
 * solid, hollow, layered (bronze given by E and ν), rectangle, and a solid taper.
 */
const MODEL = {
  format: 'shaftnet/1',
  name: 'Sheet test shaft (invented)',
  notes: 'Five segments <b>not bold</b> & an ampersand',
  materials: [
    { id: 'steel', G: '79.3 GPa', allowableShear: '90 MPa' },
    { id: 'bronze', E: '110 GPa', nu: 0.34, allowableShear: '50 MPa' },
  ],
  sections: [
    { id: 'd40', shape: 'solid', d: '40 mm' },
    { id: 't50', shape: 'hollow', d: '50 mm', di: '38 mm' },
    { id: 'clad', shape: 'layered', di: 0, layers: [{ d: '30 mm', material: 'steel' }, { d: '45 mm', material: 'bronze' }] },
    { id: 'bar', shape: 'rectangle', width: '60 mm', height: '30 mm' },
    { id: 'd60', shape: 'solid', d: '60 mm' },
  ],
  shafts: [
    {
      id: 'line',
      segments: [
        { length: '250 mm', section: 'd40', material: 'steel' },
        { length: '300 mm', section: 't50', material: 'steel' },
        { length: '200 mm', section: 'clad' },
        { length: '150 mm', section: 'bar', material: 'steel' },
        { length: '300 mm', section: 'd60', sectionEnd: 'd40', material: 'steel' },
      ],
    },
  ],
  supports: [
    { id: 'A', shaft: 'line', at: 0, kind: 'fixed' },
    { id: 'B', shaft: 'line', at: '1.2 m', kind: 'fixed' },
  ],
  torques: [
    { id: 'T1', shaft: 'line', at: '400 mm', torque: '900 N*m' },
    { id: 'T2', shaft: 'line', at: '800 mm', torque: '-300 N*m' },
  ],
};

let t: TestApp;
beforeAll(async () => {
  t = await makeApp({ token: TOKEN });
});
afterAll(async () => t.close());

/** The text of an HTML fragment (tags dropped, the entities the sheet writes decoded). */
function text(html: string): string {
  return html
    .replace(/<[^>]+>/g, '')
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&amp;/g, '&');
}

/** Every line `<p class="eq" data-eq="name">…</p>` of the sheet, as text. */
function equations(html: string, name: string): string[] {
  const re = new RegExp(`<p class="eq" data-eq="${name}">([\\s\\S]*?)</p>`, 'g');
  return [...html.matchAll(re)].map((m) => text(m[1]));
}

const NUM = String.raw`(-?\d+(?:\.\d+)?(?:e-?\d+)?)`;

/** Relative half unit of the last printed digit of a 6-digit derived value. */
function relHalf(printed: string): number {
  const m = /^-?(\d+)(?:\.(\d+))?(?:e(-?\d+))?$/.exec(printed)!;
  const digits = (m[1] + (m[2] ?? '')).replace(/^0+/, '');
  expect(digits.length).toBe(6); // the sheet prints derived values to 6 significant digits, zeros kept
  const exp = Number(m[3] ?? 0) - (m[2]?.length ?? 0);
  return (0.5 * 10 ** exp) / Math.abs(Number(printed));
}

/** Recomputed agrees with printed: |Δ| ≤ (half unit of printed + Σ power·relHalf(derived input)) · |printed|. */
function agrees(recomputed: number, printed: string, derivedInputs: Array<[string, number]> = []): void {
  const tol = relHalf(printed) + derivedInputs.reduce((s, [p, power]) => s + Math.abs(power) * relHalf(p), 0);
  expect(Math.abs(recomputed - Number(printed))).toBeLessThanOrEqual(tol * Math.abs(Number(printed)) * (1 + 1e-12));
}

async function postSheet(model: unknown) {
  return t.app.inject({ method: 'POST', url: '/api/sheet', payload: model as object, headers: bearer });
}

describe('POST /api/sheet', () => {
  it('answers one HTML page under the no-script CSP, with no script, no handler, no external asset', async () => {
    const res = await postSheet(MODEL);
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-type']).toBe('text/html; charset=utf-8');
    expect(res.headers['content-security-policy']).toBe(CSP);
    const html = res.body;
    expect(html.startsWith('<!doctype html>')).toBe(true);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/\son[a-z]+\s*=/i);
    expect(html).not.toMatch(/javascript:/i);
    expect(html).not.toMatch(/<(link|img|iframe|object|embed)\b/i);
    expect(html).not.toMatch(/url\(/i);
    // The notes' markup is text, not markup.
    expect(html).toContain('Five segments &lt;b&gt;not bold&lt;/b&gt; &amp; an ampersand');
    // Print: a page rule, and no font from elsewhere.
    expect(html).toContain('@page');
    expect(html).not.toMatch(/@import|@font-face/);
  });

  it('prints the SHA-256 of the canonical model JSON, recomputed here independently', async () => {
    const res = await postSheet(MODEL);
    const printed = /data-hash="sha256">([0-9a-f]{64})</.exec(res.body)![1];
    // Canonical: keys sorted at every level, no whitespace (JSON.stringify with a sorting replacer).
    const canonical = JSON.stringify(MODEL, (_k, v: unknown) =>
      v && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.entries(v as Record<string, unknown>).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))) : v,
    );
    expect(printed).toBe(createHash('sha256').update(Buffer.from(canonical, 'utf8')).digest('hex'));
    // The order of keys as sent does not change it.
    const shuffled = Object.fromEntries(Object.entries(MODEL).reverse());
    const again = /data-hash="sha256">([0-9a-f]{64})</.exec((await postSheet(shuffled)).body)![1];
    expect(again).toBe(printed);
  });

  it('every substituted line redoes from the printed numbers to the printed precision', async () => {
    const html = (await postSheet(MODEL)).body;

    // J = π/32 (d⁴ − dᵢ⁴): closed form of the ring's polar moment; d, dᵢ printed exactly.
    const J = equations(html, 'J').filter((l) => l.includes('π/32'));
    expect(J.length).toBe(7); // solid, hollow, two rings, the taper's two ends and its governing point
    for (const line of J) {
      const m = new RegExp(`π/32 × \\(${NUM}⁴ − ${NUM}⁴\\) = ${NUM} m⁴`).exec(line)!;
      agrees((Math.PI / 32) * (Number(m[1]) ** 4 - Number(m[2]) ** 4), m[3]);
    }
    // The hollow section's numbers are the typed ones in metres.
    expect(J.some((l) => l.includes('(0.05⁴ − 0.038⁴)'))).toBe(true);

    // k = GJ/L with the printed J: G and L exact, J derived.
    const k = equations(html, 'k').filter((l) => l.startsWith('k = GJ/L'));
    expect(k.length).toBe(3); // solid, hollow, rectangle
    for (const line of k) {
      const m = new RegExp(`= ${NUM} × ${NUM} / ${NUM} = ${NUM} N·m/rad`).exec(line)!;
      agrees((Number(m[1]) * Number(m[2])) / Number(m[3]), m[4], [[m[2], 1]]);
    }

    // τ = T r / J: T and J derived, r exact.
    const tau = equations(html, 'tau').filter((l) => l.startsWith('τ = T r / J'));
    expect(tau.length).toBe(3); // solid, hollow, the taper's governing point
    for (const line of tau) {
      const m = new RegExp(`= ${NUM} × ${NUM} / ${NUM} = ${NUM} Pa`).exec(line)!;
      agrees((Number(m[1]) * Number(m[2])) / Number(m[3]), m[4], [[m[1], 1], [m[3], -1]]);
    }

    // The bronze G from E and ν: G = E / (2(1 + ν)), printed exactly (it is an input to the next lines).
    const g = equations(html, 'G')[0];
    const gm = new RegExp(`= ${NUM} / \\(2 × \\(1 \\+ ${NUM}\\)\\) = ${NUM} Pa`).exec(g)!;
    expect(Number(gm[3])).toBe(Number(gm[1]) / (2 * (1 + Number(gm[2]))));
    expect(Number(gm[1])).toBe(110e9);

    // ΣGJ over the rings, then k = ΣGJ/L, then τ per layer = G r T / ΣGJ.
    const gj = equations(html, 'GJ')[0];
    const gjm = new RegExp(`= ${NUM} × ${NUM} \\+ ${NUM} × ${NUM} = ${NUM} N·m²`).exec(gj)!;
    agrees(Number(gjm[1]) * Number(gjm[2]) + Number(gjm[3]) * Number(gjm[4]), gjm[5], [[gjm[2], 1], [gjm[4], 1]]);
    const kl = equations(html, 'k').find((l) => l.startsWith('k = ΣGJ/L'))!;
    const klm = new RegExp(`= ${NUM} / ${NUM} = ${NUM} N·m/rad`).exec(kl)!;
    agrees(Number(klm[1]) / Number(klm[2]), klm[3], [[klm[1], 1]]);
    const layers = equations(html, 'tau-layer');
    expect(layers.length).toBe(2);
    for (const line of layers) {
      const m = new RegExp(`= ${NUM} × ${NUM} × ${NUM} / ${NUM} = ${NUM} Pa`).exec(line)!;
      agrees((Number(m[1]) * Number(m[2]) * Number(m[3])) / Number(m[4]), m[5], [[m[3], 1], [m[4], -1]]);
    }

    // The rectangle: J = β h b³ with the printed β.
    const rect = equations(html, 'J').find((l) => l.startsWith('J = β h b³'))!;
    const rm = new RegExp(`= ${NUM} × ${NUM} × ${NUM}³ = ${NUM} m⁴`).exec(rect)!;
    agrees(Number(rm[1]) * Number(rm[2]) * Number(rm[3]) ** 3, rm[4], [[rm[1], 1]]);

    // The solid taper's closed form (Gere & Goodno, tapered bar in torsion; from memory), all inputs exact.
    const taper = equations(html, 'k-taper')[0];
    const tm = new RegExp(`= 3π × ${NUM} × ${NUM}³ × ${NUM}³ / \\(32 × ${NUM} × `).exec(taper)!;
    const [G, dA, dB, L] = [1, 2, 3, 4].map((i) => Number(tm[i]));
    const kTaper = /= (\S+) N·m\/rad$/.exec(taper)![1];
    agrees((3 * Math.PI * G * dA ** 3 * dB ** 3) / (32 * L * (dA * dA + dA * dB + dB * dB)), kTaper);
  });

  it('a shoulder\'s factor redoes from the printed coefficients (the fit as the engine cites it), and each local peak', async () => {
    const { demo } = await import('./helpers.js');
    const model = demo('tapered-bar-shoulder');
    const html = (await postSheet(model)).body;
    const solution = solveModel(model) as Solution;
    const F1 = solution.stressRaisers!.find((r) => r.id === 'F1')!;
    // h/r, √(h/r) and 2h/D from the printed D, d, r (exact inputs).
    const h = new RegExp(`h = \\(D − d\\)/2 = \\(${NUM} − ${NUM}\\) / 2 = ${NUM} m; r = ${NUM} m; h/r = ${NUM}; √\\(h/r\\) = ${NUM}; 2h/D = ${NUM}`).exec(equations(html, 'h')[0])!;
    const [D, d, hh, r] = [1, 2, 3, 4].map((i) => Number(h[i]));
    expect(hh).toBe((D - d) / 2);
    agrees(hh / r, h[5]);
    agrees(Math.sqrt(Number(h[5])), h[6], [[h[5], 0.5]]);
    agrees((2 * hh) / D, h[7]);
    // The fit's coefficients (Pilkey & Pilkey, Peterson's, 3rd ed., shoulder fillet in torsion, as in stress-raisers.ts).
    const [q, hr] = [Number(h[6]), Number(h[5])];
    const fits = [0.905 + 0.783 * q - 0.075 * hr, -0.437 - 1.969 * q + 0.553 * hr, 1.557 + 1.073 * q - 0.578 * hr, -1.061 + 0.171 * q + 0.086 * hr];
    const C = ['c1', 'c2', 'c3', 'c4'].map((n) => /= (\S+)$/.exec(equations(html, n)[0])![1]);
    C.forEach((c, i) => expect(Math.abs(fits[i] - Number(c))).toBeLessThanOrEqual(relHalf(c) * Math.abs(Number(c)) * (1 + 1e-12)));
    const kts = /= (\S+)$/.exec(equations(html, 'kts')[0])![1];
    const x = Number(h[7]);
    const terms = C.map((c, i) => Number(c) * x ** i);
    const tol = relHalf(kts) * Number(kts) + terms.reduce((s, tm, i) => s + Math.abs(tm) * (relHalf(C[i]) + i * relHalf(h[7])), 0);
    expect(Math.abs(terms.reduce((a, b) => a + b, 0) - Number(kts))).toBeLessThanOrEqual(tol * (1 + 1e-12));
    // The engine's factor agrees with the printed one to that precision (and the √ and ratio roundings above).
    expect(Math.abs(F1.factor - Number(kts)) / F1.factor).toBeLessThan(1e-5);
    // τ_local = K · τ_nominal, for the shoulder and for the given factor.
    for (const line of equations(html, 'local')) {
      const m = new RegExp(`= ${NUM} × ${NUM} = ${NUM} Pa`).exec(line)!;
      // K is derived (6 digits) for the shoulder, exact as given for the factor raiser.
      const derivedK: Array<[string, number]> = m[1] === kts ? [[kts, 1]] : [];
      agrees(Number(m[1]) * Number(m[2]), m[3], [[m[2], 1], ...derivedK]);
    }
  });

  it('agrees with the engine: the worked J and k are the solution\'s to the printed precision', async () => {
    const html = (await postSheet(MODEL)).body;
    const solution = solveModel(MODEL) as Solution;
    const seg = solution.shafts[0].segments;
    const firstJ = /π\/32 × \(0\.04⁴ − 0⁴\) = (\S+) m⁴/.exec(text(html))![1];
    agrees(seg[0].torsionConstant, firstJ);
    const firstK = equations(html, 'k')[0];
    const printedK = /= (\S+) N·m\/rad$/.exec(firstK)![1];
    agrees(seg[0].stiffness, printedK, [[firstJ, 1]]);
  });

  it('states the unknowns and redundants by the rule, and each shaft\'s equilibrium with its residual', async () => {
    const html = (await postSheet(MODEL)).body;
    // Two fixed supports, no meshes or couplings, one shaft: 2 unknowns, 1 equation, 1 redundant.
    expect(equations(html, 'degree')[0]).toContain('unknowns = 2 supports + 0 meshes + 0 couplings = 2; equations = 1 shafts; redundants = 2 − 1 = 1');
    const body = text(html);
    expect(body).toContain('torque T1');
    expect(body).toContain('reaction A');
    expect(body).toContain('residual (engine)');
    // Reactions: A + B = −(900 − 300) by equilibrium of the one shaft (statics).
    const cell = (term: string) => new RegExp(`<td>${term}</td><td class="n">([^<]+)</td>`).exec(html)![1];
    const [A, B] = [cell('reaction A'), cell('reaction B')];
    const tol = relHalf(A) * Math.abs(Number(A)) + relHalf(B) * Math.abs(Number(B));
    expect(Math.abs(Number(A) + Number(B) + 600)).toBeLessThanOrEqual(tol * (1 + 1e-12));
  });

  it('answers the same 400 and 422 errors as /api/solve', async () => {
    const bad = { ...MODEL, sections: [{ ...MODEL.sections[0], d: '40 parsecs' }, ...MODEL.sections.slice(1)] };
    const [a, b] = await Promise.all([postSheet(bad), t.app.inject({ method: 'POST', url: '/api/solve', payload: bad, headers: bearer })]);
    expect(a.statusCode).toBe(400);
    expect(a.json()).toEqual(b.json());
    expect(a.json().error.issues[0].pointer).toBe('/sections/0/d');
    const free = { ...MODEL, supports: [] };
    const c = await postSheet(free);
    expect(c.statusCode).toBe(422);
    expect(c.json().error.code).toBe('SN_MECHANISM');
  });

  it('needs the token: 401 without it', async () => {
    const res = await t.app.inject({ method: 'POST', url: '/api/sheet', payload: MODEL });
    expect(res.statusCode).toBe(401);
  });
});

describe('GET /api/models/{id}/revisions/{rev}/sheet', () => {
  it('serves a stored revision with its header and the prepared line of the sign-off', async () => {
    const created = await t.app.inject({ method: 'POST', url: '/api/models', payload: { model: MODEL, author: 'Ada', message: 'first' }, headers: bearer });
    const { id, revision } = created.json() as { id: string; revision: number };
    const res = await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/${revision}/sheet`, headers: bearer });
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-security-policy']).toBe(CSP);
    expect(res.body).not.toMatch(/<script/i);
    const body = text(res.body);
    expect(body).toContain(`${id} · revision 1`);
    expect(body).toContain('Ada');
    const prepared = /<tr data-state="prepared">([\s\S]*?)<\/tr>/.exec(res.body)![1];
    expect(text(prepared)).toContain('Ada');
    expect(text(/<tr data-state="checked">([\s\S]*?)<\/tr>/.exec(res.body)![1])).toBe('checked');
    const missing = await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/9/sheet`, headers: bearer });
    expect(missing.statusCode).toBe(404);
    expect(missing.json().error.issues[0].pointer).toBe('/rev');
    const unknown = await t.app.inject({ method: 'GET', url: `/api/models/nope/revisions/1/sheet`, headers: bearer });
    expect(unknown.statusCode).toBe(404);
    const anon = await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1/sheet` });
    expect(anon.statusCode).toBe(401);
  });
});

describe('renderSheet (pure)', () => {
  it('fills the sign-off block from a review history, the latest entry of each state', () => {
    const solution = solveModel(MODEL) as Solution;
    const html = renderSheet({
      model: MODEL as Model,
      solution,
      revision: {
        id: 'm1',
        revision: 3,
        author: 'Ada',
        message: '',
        created: '2026-01-01T10:00:00.000Z',
        review: {
          state: 'approved',
          history: [
            { state: 'prepared', by: 'Ada', at: '2026-01-01T10:00:00.000Z', note: null },
            { state: 'checked', by: 'Bo <Checker>', at: '2026-01-02T09:00:00.000Z', note: 'redid k by hand' },
            { state: 'approved', by: 'Cy', at: '2026-01-03T08:00:00.000Z', note: null },
          ],
        },
      },
      version: '9.9.9',
      generated: '2026-01-04T00:00:00.000Z',
    });
    const row = (state: string) => text(new RegExp(`<tr data-state="${state}">([\\s\\S]*?)</tr>`).exec(html)![1]);
    expect(row('prepared')).toBe('preparedAda2026-01-01T10:00:00.000Z');
    expect(row('checked')).toBe('checkedBo <Checker>2026-01-02T09:00:00.000Zredid k by hand');
    expect(html).toContain('Bo &lt;Checker&gt;');
    expect(row('approved')).toBe('approvedCy2026-01-03T08:00:00.000Z');
    expect(html).toContain('Shaftnet 9.9.9');
  });

  it('an unsaved model has empty signature lines', () => {
    const html = renderSheet({ model: MODEL as Model, solution: solveModel(MODEL) as Solution, revision: null, version: '1', generated: 'now' });
    for (const state of ['prepared', 'checked', 'approved']) {
      expect(text(new RegExp(`<tr data-state="${state}">([\\s\\S]*?)</tr>`).exec(html)![1])).toBe(state);
    }
  });
});

describe('equilibrium terms', () => {
  /** Each shaft's Σ (printed) against its largest term: the sheet's terms must add up to about zero. */
  function sums(html: string): Array<{ shaft: string; sum: number; largest: number }> {
    const out: Array<{ shaft: string; sum: number; largest: number }> = [];
    const part = html.slice(html.indexOf('Equilibrium of each shaft'), html.indexOf('Largest residual over all shafts'));
    for (const m of part.matchAll(/<h3>([^<]+)<\/h3>\s*<table[^>]*>([\s\S]*?)<\/table>/g)) {
      const values = [...m[2].matchAll(/<td class="n">(?:<b>)?([^<]+)(?:<\/b>)?<\/td>/g)].map((x) => Number(x[1]));
      const terms = values.slice(0, -2);
      out.push({ shaft: m[1], sum: values[values.length - 2], largest: Math.max(...terms.map(Math.abs)) });
    }
    return out;
  }

  it('every demo: the terms of each shaft (applied, reactions, meshes, couplings) add up to zero', async () => {
    const { demo } = await import('./helpers.js');
    for (const name of ['mixer-drive', 'gear-train-branches', 'stepped-two-material', 'tapered-bar-shoulder']) {
      const html = (await postSheet(demo(name))).body;
      const all = sums(html);
      expect(all.length, name).toBeGreaterThan(0);
      // Round-off of a solve: far below the 6th digit of the largest term (closed-form statics: Σ = 0).
      for (const s of all) expect(Math.abs(s.sum), `${name} ${s.shaft}`).toBeLessThanOrEqual(1e-9 * s.largest);
    }
  });

  it('with load cases: the shown combination\'s factored loads balance its reactions', async () => {
    const cased = {
      ...MODEL,
      loadCases: [{ id: 'run' }, { id: 'jam' }],
      combinations: [
        { id: 'service', factors: { run: 1.2 } },
        { id: 'stop', factors: { run: 0.25, jam: 1 } },
      ],
      torques: [
        { ...MODEL.torques[0], case: 'run' },
        { ...MODEL.torques[1], case: 'jam' },
      ],
    };
    const res = await t.app.inject({ method: 'POST', url: '/api/sheet', payload: cased, headers: bearer });
    expect(res.statusCode).toBe(200);
    const html = res.body;
    const [line] = sums(html);
    // Combination "service" is shown (the first): 1.2 × 900 N·m on T1, T2 not in it.
    expect(html).toContain('<td>torque T1 × 1.2</td>');
    expect(html).not.toContain('torque T2');
    expect(Math.abs(line.sum)).toBeLessThanOrEqual(1e-9 * line.largest);
    expect(text(html)).toContain('Reactions per combination');
  });
});

describe('limits', () => {
  it('the sheet and compare routes count solves like POST /api/solve: 429 SN_RATE_LIMITED past the limit', async () => {
    const limited = await makeApp({ rateLimitPerMinute: 2 });
    try {
      const codes: number[] = [];
      for (let i = 0; i < 3; i++) codes.push((await limited.app.inject({ method: 'POST', url: '/api/sheet', payload: MODEL })).statusCode);
      expect(codes).toEqual([200, 200, 429]);
      const over = await limited.app.inject({ method: 'POST', url: '/api/sheet', payload: MODEL });
      expect(over.json().error.code).toBe('SN_RATE_LIMITED');
      const compares: number[] = [];
      for (let i = 0; i < 3; i++) compares.push((await limited.app.inject({ method: 'POST', url: '/api/compare', payload: { from: MODEL, to: MODEL } })).statusCode);
      expect(compares).toEqual([200, 200, 429]);
    } finally {
      await limited.close();
    }
  });

  it('works the first 1000 segments of a long shaft and says so; all are in the results table', async () => {
    const { cantilever } = await import('./helpers.js');
    const html = (await postSheet(cantilever(1200))).body;
    expect(html).toContain('1200 segments: the first 1000 are worked here');
    expect(equations(html, 'k').length).toBe(1000);
    expect((html.match(/<td>s\[\d+\]<\/td>/g) ?? []).length).toBe(1200);
  });
});

describe('results carried by later features', () => {
  it('prints the modes and crossings the engine found, and a forced response when the solution carries one', () => {
    // The invented demo with dynamics (server/demos/geared-drive-vibration.json), solved for real.
    const demo = JSON.parse(fs.readFileSync(new URL('../../server/demos/geared-drive-vibration.json', import.meta.url), 'utf8'));
    const solved = solveModel(demo) as Solution;
    expect(solved.modes?.length).toBeGreaterThan(1);
    expect(solved.crossings?.length).toBeGreaterThan(0);
    const solution = {
      ...solved,
      // The forced-response part in the contract's shape, values invented: the sheet prints what it is given.
      forcedResponse: { segments: [{ item: 'line[0]', peakTorque: 95, peakSpeed: 129.7 }] },
    } as Solution;
    const html = renderSheet({ model: demo as Model, solution, revision: null, version: '1', generated: 'now' });
    expect(html).toContain('<h3>modes</h3>');
    for (const m of solved.modes ?? []) expect(html).toContain(`<td class="n">${m.frequency.toPrecision(6)}</td>`);
    // A crossing's speed in rpm: s × 60 / (2π) (closed form of the unit change).
    const c = (solved.crossings ?? [])[0];
    expect(html).toContain(`<td class="n">${(c.speed * 60 / (2 * Math.PI)).toPrecision(6)}</td>`);
    expect(html).toContain('<td>line[0]</td><td class="n">95.0000</td><td class="n">129.700</td>');
  });

  it('prints no dynamics part without them', () => {
    const html = renderSheet({ model: MODEL as Model, solution: solveModel(MODEL) as Solution, revision: null, version: '1', generated: 'now' });
    expect(html).not.toContain('Dynamics');
  });
});
