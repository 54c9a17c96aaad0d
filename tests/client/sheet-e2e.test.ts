/**
 * End-to-end test of the calculation sheet and the revision compare (issue 13) in real Chromium
 * (playwright-core, /usr/bin/chromium) against the real built server (dist/server/main.js) on a free
 * loopback port: a saved model's sheet opens in a new tab and its `k = GJ/L = …` line is redone from
 * the numbers it prints; an edited (unsaved) model's sheet opens from a Blob URL; two revisions are
 * compared and one changed input and one changed reaction are read from the tables; a stale save
 * shows the comparison in the conflict dialog.
 *
 * The model is invented: one uniform steel shaft (d = 50 mm, G = 79.3 GPa) of length L = 1 m in one
 * segment, fixed at both ends, a torque T0 = 600 N·m at a. Closed form of the bar fixed at both ends
 * (Gere & Goodno §3.8, from memory): reaction at z = 0 is −T0 (L − a) / L. Revision 1 has a = 0.3 m
 * (−420 N·m), revision 2 a = 0.45 m (−330 N·m). J = π d⁴ / 32 and k = G J / L (closed forms).
 *
 * Without Chromium the suite is skipped with a clear message (tests/client/e2e.test.ts registers the
 * failure that SHAFTNET_REQUIRE_BROWSER=1 asks for). Screenshots go to test-artifacts/ (gitignored).
 */
import type { Page } from 'playwright-core';
import { beforeAll, describe, expect, it } from 'vitest';
import { formatNumber } from '../../shared-types/present.js';
import { browserSuite, hasBrowser, shot, typeCell, waitFresh, warnIfNoBrowser } from '../helpers/browser-suite.js';

warnIfNoBrowser('the browser test of the calculation sheet and compare');

function model(at: string) {
  return {
    format: 'shaftnet/1',
    name: 'Sheet e2e bar (invented)',
    materials: [{ id: 'steel', G: '79.3 GPa', allowableShear: '60 MPa' }],
    sections: [{ id: 'd50', shape: 'solid', d: '50 mm' }],
    shafts: [{ id: 'line', segments: [{ length: '1 m', section: 'd50', material: 'steel' }] }],
    supports: [
      { id: 'A', shaft: 'line', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 'line', at: '1 m', kind: 'fixed' },
    ],
    torques: [{ id: 'T1', shaft: 'line', at, torque: '600 N*m' }],
  };
}

/** Reaction at z = 0 of the bar fixed at both ends, T0 = 600 N·m at a, L = 1 m (closed form above). */
const reactionA = (a: number) => (-600 * (1 - a)) / 1;

/** Relative half unit of the last digit of a value printed to 6 significant digits. */
function relHalf(printed: string): number {
  const m = /^-?(\d+)(?:\.(\d+))?(?:e(-?\d+))?$/.exec(printed)!;
  expect((m[1] + (m[2] ?? '')).replace(/^0+/, '').length).toBe(6);
  return (0.5 * 10 ** (Number(m[3] ?? 0) - (m[2]?.length ?? 0))) / Math.abs(Number(printed));
}

describe.runIf(hasBrowser)('calculation sheet and revision compare in Chromium against the real server', () => {
  const suite = browserSuite('sheet-e2e');
  let page: Page;
  let id = '';

  async function api(method: string, url: string, body?: unknown): Promise<{ status: number; json: Record<string, unknown> }> {
    const res = await fetch(suite.base + url, { method, headers: { 'content-type': 'application/json' }, body: body === undefined ? undefined : JSON.stringify(body) });
    return { status: res.status, json: (await res.json()) as Record<string, unknown> };
  }

  beforeAll(async () => {
    const first = await api('POST', '/api/models', { model: model('300 mm'), author: 'Ada', message: 'first' });
    expect(first.status, JSON.stringify(first.json)).toBe(201);
    id = first.json.id as string;
    const second = await api('PUT', `/api/models/${encodeURIComponent(id)}`, { model: model('450 mm'), baseRevision: 1, author: 'Bo', message: 'torque moved' });
    expect(second.status, JSON.stringify(second.json)).toBe(200);
    // The stale save below is refused (409) on purpose.
    page = await suite.openPage({ allowStatus: 409 });
    await suite.openModel(page, id);
  });

  it("opens a saved revision's sheet in a new tab and its k = GJ/L redoes from the printed numbers", async () => {
    const [tab] = await Promise.all([page.waitForEvent('popup'), page.locator('sn-sheet-action button[data-action="sheet"]').click()]);
    await tab.waitForLoadState('load');
    expect(new URL(tab.url()).pathname).toBe(`/api/models/${encodeURIComponent(id)}/revisions/2/sheet`);
    const kLine = (await tab.locator('p.eq[data-eq="k"]').first().innerText()).trim();
    const m = /^k = GJ\/L = (\S+) × (\S+) \/ (\S+) = (\S+) N·m\/rad$/.exec(kLine);
    expect(m, kLine).not.toBeNull();
    const [G, J, L, k] = [m![1], m![2], m![3], m![4]];
    expect(Number(G)).toBe(79.3e9);
    expect(Number(L)).toBe(1);
    // J printed to 6 digits: the closed form π d⁴/32 with d = 0.05 m, to half a unit of its last digit.
    expect(Math.abs(Number(J) - (Math.PI * 0.05 ** 4) / 32)).toBeLessThanOrEqual(relHalf(J) * Number(J));
    // k from the printed G, J, L, to k's printed precision plus what J's rounding can move it.
    expect(Math.abs((Number(G) * Number(J)) / Number(L) - Number(k))).toBeLessThanOrEqual((relHalf(k) + relHalf(J)) * Number(k));
    expect(await tab.locator('tr[data-state="prepared"]').innerText()).toContain('Bo');
    expect(await tab.locator('script').count()).toBe(0);
    await shot(tab, '40-sheet-saved');
    await tab.close();
  });

  it("an edited model's sheet comes from POST /api/sheet through a Blob URL", async () => {
    await typeCell(page, '/torques/0/torque', '900 N*m');
    await waitFresh(page);
    const [tab] = await Promise.all([page.waitForEvent('popup'), page.locator('sn-sheet-action button[data-action="sheet"]').click()]);
    await expect.poll(() => tab.url(), { timeout: 20_000 }).toMatch(/^blob:/);
    await tab.waitForLoadState('load');
    await expect.poll(async () => tab.locator('h1').count(), { timeout: 20_000 }).toBe(1);
    expect(await tab.locator('table.head').innerText()).toContain('unsaved');
    // Reaction A with 900 N·m at a = 0.45 m: −900 × 0.55 = −495 N·m (closed form above, scaled).
    const cell = await tab.locator('xpath=//td[text()="reaction A"]/following-sibling::td[1]').innerText();
    expect(Math.abs(Number(cell) - -495)).toBeLessThanOrEqual(relHalf(cell) * 495);
    await tab.close();
  });

  it('compares revision 1 with revision 2: the moved torque and the changed reaction', async () => {
    await page.locator('sn-compare button[data-action="compare-open"]').click();
    await expect.poll(async () => page.locator('sn-compare select[name="from"] option').count(), { timeout: 20_000 }).toBe(2);
    expect(await page.locator('sn-compare select[name="from"]').inputValue()).toBe('1');
    expect(await page.locator('sn-compare select[name="to"]').inputValue()).toBe('2');
    await page.locator('sn-compare button[data-action="compare"]').click();
    const row = page.locator('sn-compare sn-compare-tables tr[data-item="torques T1"][data-field="at"]');
    await row.waitFor({ timeout: 20_000 });
    expect(await row.locator('td').allInnerTexts()).toEqual(['changed', 'torques T1', 'at', '300 mm', '450 mm']);
    const reaction = page.locator('sn-compare sn-compare-tables tr[data-what="Reaction"][data-item="A"] td');
    const cells = await reaction.allInnerTexts();
    // Shown to 5 significant figures in N·m: −420 → −330, Δ +90, +21.4 %.
    expect(cells.slice(2)).toEqual(['N·m', formatNumber(reactionA(0.3)), formatNumber(reactionA(0.45)), '+90', '+21.4 %']);
    await page.locator('sn-compare').scrollIntoViewIfNeeded();
    await shot(page, '41-compare');
  });

  it("a stale save shows what changed since the user's base and the user's edit against the latest", async () => {
    // Someone else saves revision 3 (torque at 0.6 m) while this page holds an edit on revision 2.
    const third = await api('PUT', `/api/models/${encodeURIComponent(id)}`, { model: model('600 mm'), baseRevision: 2, author: 'Cy', message: 'moved again' });
    expect(third.status).toBe(200);
    await page.locator('header button[data-action="save"]').click();
    await page.locator('sn-save-dialog input[name="author"]').fill('Ada');
    await page.locator('sn-save-dialog input[name="message"]').fill('more torque');
    await page.locator('sn-save-dialog button[type="submit"]').click();
    const dialog = page.locator('sn-conflict-dialog');
    await dialog.locator('.conflict').waitFor({ timeout: 20_000 });
    const theirs = dialog.locator('section.theirs tr[data-item="torques T1"][data-field="at"] td');
    await theirs.first().waitFor({ timeout: 20_000 });
    expect(await theirs.allInnerTexts()).toEqual(['changed', 'torques T1', 'at', '450 mm', '600 mm']);
    const yours = dialog.locator('section.yours tr[data-item="torques T1"] td');
    const texts = (await yours.allInnerTexts()).join(' | ');
    expect(texts).toContain('600 mm');
    expect(texts).toContain('450 mm');
    expect(await dialog.locator('section.yours tr[data-item="torques T1"][data-field="torque"] td').allInnerTexts()).toEqual(['changed', 'torques T1', 'torque', '600 N*m', '900 N*m']);
    await shot(page, '42-conflict-compare');
    await dialog.locator('button[data-action="cancel"]').click();
    expect(suite.errors).toEqual([]);
  });
});
