/**
 * End-to-end tests of issue 10 in real Chromium (playwright-core, /usr/bin/chromium)
 * against the real built server (dist/server/main.js) on a free loopback port:
 * a section switched to a rectangle and resized, a taper made uniform and tapered
 * again, a stress raiser added and turned into a shoulder, and a thick-walled tube;
 * each time the results on screen are read and held to a closed form.
 *
 * Without Chromium the suite is skipped with a clear message (tests/client/e2e.test.ts
 * registers the failure that SHAFTNET_REQUIRE_BROWSER=1 asks for). Screenshots at
 * 1366 × 768 go to test-artifacts/ (gitignored).
 *
 * The model is invented: one steel shaft (G = 79.3 GPa) held at z = 0 with 500 N·m
 * at its free end, so the internal torque is 500 N·m everywhere (statically
 * determinate) and every expected number follows from the geometry alone.
 */
import type { Page } from 'playwright-core';
import { beforeAll, describe, expect, it } from 'vitest';
import { shoulderFactor } from '../../server/engine/stress-raisers.js';
import { browserSuite, chooseCell, hasBrowser, shot, typeCell, waitFresh, warnIfNoBrowser } from '../helpers/browser-suite.js';

warnIfNoBrowser('the browser tests of sections, tapers and stress raisers');

const G = 79.3e9; // Pa
const T = 500; // N·m, the applied torque
const MODEL = {
  format: 'shaftnet/1',
  name: 'Sections, taper and a raiser (invented)',
  materials: [{ id: 'steel', G: '79.3 GPa', allowableShear: '55 MPa' }],
  sections: [
    { id: 'd60', shape: 'solid', d: '60 mm' },
    { id: 'd50', shape: 'solid', d: '50 mm' },
    { id: 'link', shape: 'solid', d: '40 mm' },
    { id: 'd40', shape: 'solid', d: '40 mm' },
  ],
  shafts: [
    {
      id: 'input',
      segments: [
        { length: '200 mm', section: 'd60', material: 'steel' },
        { length: '300 mm', section: 'd50', sectionEnd: 'd40', material: 'steel' },
        { length: '100 mm', section: 'link', material: 'steel' },
      ],
    },
  ],
  supports: [{ id: 'A', shaft: 'input', at: 0, kind: 'fixed' }],
  torques: [{ id: 'T1', shaft: 'input', at: '600 mm', torque: '500 N*m' }],
};

/**
 * Saint-Venant torsion constant of a b × h rectangle (b ≤ h), by its series
 * (Timoshenko & Goodier, Theory of Elasticity, torsion of a rectangular bar):
 * J = (h b³ / 3) [1 − (192 b / (π⁵ h)) Σ_{n odd} tanh(n π h / (2 b)) / n⁵].
 */
function rectangleJ(width: number, height: number): number {
  const b = Math.min(width, height);
  const h = Math.max(width, height);
  let sum = 0;
  for (let n = 1; n < 400; n += 2) sum += Math.tanh((n * Math.PI * h) / (2 * b)) / n ** 5;
  return ((h * b ** 3) / 3) * (1 - ((192 * b) / (Math.PI ** 5 * h)) * sum);
}

/**
 * Stiffness of a linearly tapered solid round bar, d from dA to dB over L: the
 * inverse of ∫ dz / (G π d(z)⁴ / 32) = 32 L (dA² + dA dB + dB²) / (3 π G dA³ dB³)
 * (Gere & Goodno, Mechanics of Materials, the tapered bar in torsion).
 */
function taperK(dA: number, dB: number, L: number): number {
  return (3 * Math.PI * G * dA ** 3 * dB ** 3) / (32 * L * (dA * dA + dA * dB + dB * dB));
}

/** Closed form of a shown number: 5 significant figures as the tables show them. */
function fiveFigures(shown: number, exact: number): void {
  expect(Math.abs(shown - exact)).toBeLessThanOrEqual(Math.abs(exact) * 1e-4);
}

describe.runIf(hasBrowser)('sections, tapers and stress raisers in Chromium against the real server', () => {
  const suite = browserSuite('sections-e2e');
  let page: Page;

  function segmentCell(index: number, cell: string) {
    return page.locator(`sn-results .shaft[data-shaft="input"] sn-segment-table tr[data-segment="${index}"] td[${cell}]`);
  }

  beforeAll(async () => {
    const id = await suite.saveModel(MODEL, 'E2E', 'sections');
    // One refusal is provoked on purpose (a fillet outside the fit's range): its 400 is expected.
    page = await suite.openPage({ allowStatus: 400 });
    await suite.openModel(page, id);
  });

  it('draws the taper tapered and shows its exact stiffness; made uniform, the stiffness of the round bar', async () => {
    const seg = page.locator('sn-schematic svg g[data-pointer="/shafts/0/segments/1"]');
    expect(await seg.getAttribute('data-tapered')).toBe('true');
    expect(await page.locator('sn-schematic svg g[data-pointer="/shafts/0/segments/0"]').getAttribute('data-tapered')).toBe('false');
    expect(await segmentCell(1, 'data-j').innerText()).toMatch(/ → /);
    fiveFigures(Number(await segmentCell(1, 'data-k').innerText()), taperK(0.05, 0.04, 0.3));
    // J at both ends: π d⁴ / 32 for 50 and 40 mm, in mm⁴.
    const [jStart, jEnd] = (await segmentCell(1, 'data-j').innerText()).split(' → ').map(Number);
    fiveFigures(jStart, (Math.PI * 50 ** 4) / 32);
    fiveFigures(jEnd, (Math.PI * 40 ** 4) / 32);
    await page.locator('sn-schematic').scrollIntoViewIfNeeded();
    await shot(page, '20-taper-schematic-1366');

    await chooseCell(page, '/shafts/0/segments/1/sectionEnd', '');
    await waitFresh(page);
    expect(await page.locator('sn-schematic svg g[data-pointer="/shafts/0/segments/1"]').getAttribute('data-tapered')).toBe('false');
    // Uniform d = 50 mm: k = G π d⁴ / (32 L).
    fiveFigures(Number(await segmentCell(1, 'data-k').innerText()), (G * Math.PI * 0.05 ** 4) / (32 * 0.3));
    await chooseCell(page, '/shafts/0/segments/1/sectionEnd', 'd40');
    await waitFresh(page);
    fiveFigures(Number(await segmentCell(1, 'data-k').innerText()), taperK(0.05, 0.04, 0.3));
    expect(suite.errors).toEqual([]);
  });

  it('switches a section to a rectangle, draws it, and shows its torsion constant; a wider one is stiffer', async () => {
    await chooseCell(page, '/sections/2/shape', 'rectangle');
    // The card now asks for the rectangle's sizes (60 × 20 mm to start) and no diameter.
    await page.locator('sn-editor input[data-pointer="/sections/2/width"]').waitFor();
    expect(await page.locator('sn-editor input[data-pointer="/sections/2/d"]').count()).toBe(0);
    await waitFresh(page);
    const card = page.locator('sn-editor [data-section-card="link"] sn-section-view');
    expect(await card.locator('svg rect').count()).toBeGreaterThanOrEqual(1);
    const jRect = rectangleJ(0.06, 0.02);
    // The card carries the solution's J in m⁴; the engine's series is converged to 1e-12, this one to about that.
    const cardJ = Number(await card.locator('dd[data-j]').getAttribute('data-j'));
    expect(Math.abs(cardJ - jRect)).toBeLessThanOrEqual(jRect * 1e-9);
    fiveFigures(Number(await segmentCell(2, 'data-j').innerText()), jRect * 1e12);
    // G·J and k = G·J / L follow.
    fiveFigures(Number(await segmentCell(2, 'data-k').innerText()), (G * jRect) / 0.1);
    expect(await segmentCell(2, 'data-wt').innerText()).not.toBe('—');
    await card.scrollIntoViewIfNeeded();
    await shot(page, '21-section-card-rectangle-1366');

    await typeCell(page, '/sections/2/width', '80');
    await waitFresh(page);
    fiveFigures(Number(await segmentCell(2, 'data-j').innerText()), rectangleJ(0.08, 0.02) * 1e12);
    expect(rectangleJ(0.08, 0.02)).toBeGreaterThan(jRect);
    expect(suite.errors).toEqual([]);
  });

  it('adds a stress raiser at the shoulder, checks its local peak, and refuses a fillet outside the fit', async () => {
    // Nominal shear on the smaller side of the step at z = 200 mm: 16 T / (π d³), d = 50 mm (solid round bar).
    const nominal = (16 * T) / (Math.PI * 0.05 ** 3);
    await page.locator('sn-editor button[data-add="/stressRaisers"]').click();
    await waitFresh(page);
    const row = page.locator('sn-results table.raisers tr[data-raiser="K1"]');
    // The new raiser is a factor of 2 at the first segment boundary.
    fiveFigures(Number(await row.locator('td[data-local]').getAttribute('data-local')) / 1e6, (2 * nominal) / 1e6);
    expect(await page.locator('sn-schematic svg g.raiser[data-raiser="K1"]').count()).toBe(1);
    const peak = page.locator('sn-results .shaft[data-shaft="input"] sn-plot g.peak');
    expect(Math.abs(Number(await peak.getAttribute('data-value')))).toBeCloseTo(2 * nominal, 0);
    expect(await peak.locator('text').textContent()).toMatch(/^local peak K1: /);
    const check = page.locator('sn-results table.checks tbody tr[data-check="localPeak"]');
    expect(await check.locator('td').nth(3).innerText()).toBe('Local peak at K1');
    expect(await check.locator('td.value-of').innerText()).toMatch(/^[\d.]+ of 55 MPa$/);

    // A shoulder with the 1 mm fillet it starts with: h / r = 5 mm / 1 mm, outside the fit's 0.25 … 4.
    await chooseCell(page, '/stressRaisers/0/kind', 'shoulder');
    await page.locator('sn-results .banner[data-status="invalid"]').waitFor({ timeout: 20_000 });
    await expect.poll(() => page.locator('sn-editor input[data-pointer="/stressRaisers/0/fillet"]').getAttribute('aria-invalid')).toBe('true');
    await typeCell(page, '/stressRaisers/0/fillet', '3');
    await waitFresh(page);
    const kts = shoulderFactor({ D: 0.06, d: 0.05, r: 0.003 });
    fiveFigures(Number(await row.locator('td[data-factor]').getAttribute('data-factor')), kts);
    fiveFigures(Number(await row.locator('td[data-local]').getAttribute('data-local')), kts * nominal);
    await page.locator('sn-results table.raisers').scrollIntoViewIfNeeded();
    await shot(page, '22-raisers-results-1366');
    await page.locator('sn-results .shaft[data-shaft="input"] sn-plot').nth(2).scrollIntoViewIfNeeded();
    await shot(page, '23-local-peak-diagram-1366');
    expect(suite.errors).toEqual([]);
  });

  it('warns of a thick-walled tube beside the other warnings', async () => {
    await chooseCell(page, '/sections/2/shape', 'rectangularTube');
    await waitFresh(page);
    // A wall of 8 mm on a 40 × 40 mm tube: more than a tenth of the 32 mm centre-line side.
    await typeCell(page, '/sections/2/width', '40');
    await typeCell(page, '/sections/2/height', '40');
    await typeCell(page, '/sections/2/wall', '8');
    await waitFresh(page);
    const warn = page.locator('sn-results .warn[data-warning="SN_THIN_WALL"]');
    await warn.waitFor();
    expect(await warn.innerText()).toMatch(/link/);
    await page.locator('sn-editor [data-section-card="link"]').scrollIntoViewIfNeeded();
    await shot(page, '24-tube-card-1366');
    expect(suite.errors).toEqual([]);
  });
});
