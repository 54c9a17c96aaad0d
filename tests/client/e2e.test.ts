/**
 * End-to-end tests of the web client in real Chromium (playwright-core with the
 * Debian package at /usr/bin/chromium) against the real built server
 * (dist/server/main.js) on a free loopback port with a temporary library.
 *
 * Without Chromium the suite is skipped with a clear message, unless
 * SHAFTNET_REQUIRE_BROWSER=1 (CI), where its absence fails the run.
 * Screenshots of the main screens go to test-artifacts/ (gitignored).
 */
import { type ChildProcess, execSync, spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import type { Solution } from '../../shared-types/solution.js';
import { STATION_CSV_HEADER } from '../../shared-types/present.js';

const CHROMIUM = '/usr/bin/chromium';
const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const ARTIFACTS = path.join(ROOT, 'test-artifacts');
const hasBrowser = fs.existsSync(CHROMIUM);
const required = process.env.SHAFTNET_REQUIRE_BROWSER === '1';

if (!hasBrowser) {
  console.warn(
    `\n*** SKIPPED the browser (end-to-end) tests of the web client: no Chromium at ${CHROMIUM}. ` +
      `Install it with "apt-get install -y chromium"; CI sets SHAFTNET_REQUIRE_BROWSER=1 to make this a failure. ***\n`,
  );
}

// Registered only when the run requires the browser (CI), so a local run without Chromium counts no skipped test.
if (required) {
  describe('browser tests are required (SHAFTNET_REQUIRE_BROWSER=1)', () => {
    it('finds Chromium', () => {
      expect(hasBrowser, `SHAFTNET_REQUIRE_BROWSER=1 but there is no Chromium at ${CHROMIUM}`).toBe(true);
    });
  });
}

/** Starts the built server on a free loopback port; resolves with its URL (without the trailing slash). */
async function startServer(dataDir: string, extra: string[]): Promise<{ child: ChildProcess; url: string }> {
  const child = spawn(
    process.execPath,
    ['dist/server/main.js', '--port', '0', '--host', '127.0.0.1', '--data', dataDir, '--rate-limit', '0', '--log-level', 'silent', ...extra],
    { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`server did not start: ${out}`)), 30_000);
    child.stdout?.on('data', (chunk: Buffer) => {
      out += chunk.toString();
      const m = /listening on (http:\/\/\S+?)\/?\s/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    });
    child.stderr?.on('data', (chunk: Buffer) => (out += chunk.toString()));
    child.on('exit', (code) => reject(new Error(`server exited (${code}): ${out}`)));
  });
  return { child, url };
}

async function stopServer(child: ChildProcess | undefined): Promise<void> {
  if (child && child.exitCode === null) {
    const exited = new Promise((r) => child.once('exit', r));
    child.kill('SIGTERM');
    await exited;
  }
}

/** Console errors and page errors of a page; expected API refusals are listed by status. */
interface Watched {
  page: Page;
  errors: string[];
}

describe.runIf(hasBrowser)('web client in Chromium against the real server', () => {
  let server: ChildProcess;
  let base = '';
  let dataDir = '';
  let browser: Browser;
  const watched: Watched[] = [];

  async function open(url: string, allowStatuses: number[] = []): Promise<Watched> {
    const page = await browser.newPage({ viewport: { width: 1440, height: 950 } });
    const w: Watched = { page, errors: [] };
    page.on('console', (msg) => {
      if (msg.type() !== 'error') return;
      const text = msg.text();
      // Chromium logs every 4xx answer of fetch as a console error. A test that provokes
      // one on purpose (mechanism 422, invalid 400, stale 409) lists the status it expects.
      const m = /status of (\d{3})/.exec(text);
      if (m && allowStatuses.includes(Number(m[1])) && msg.location().url.includes('/api/')) return;
      w.errors.push(text);
    });
    page.on('pageerror', (e) => w.errors.push(`pageerror: ${e.message}`));
    watched.push(w);
    await page.goto(base + url);
    return w;
  }

  async function waitFresh(page: Page): Promise<void> {
    await page.locator('sn-results .banner[data-status="fresh"]').waitFor({ timeout: 20_000 });
  }

  async function shownReactions(page: Page): Promise<Record<string, number>> {
    const rows = page.locator('sn-results table.reactions tbody tr');
    const out: Record<string, number> = {};
    for (let i = 0; i < (await rows.count()); i++) {
      const row = rows.nth(i);
      out[(await row.getAttribute('data-support')) as string] = Number(await row.locator('td.torque').innerText());
    }
    return out;
  }

  async function shot(page: Page, name: string, fullPage = false): Promise<void> {
    await page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`), fullPage });
  }

  async function api<T>(method: string, url: string, body?: unknown): Promise<{ status: number; body: T }> {
    const res = await fetch(base + url, {
      method,
      headers: body === undefined ? {} : { 'content-type': 'application/json' },
      body: body === undefined ? undefined : JSON.stringify(body),
    });
    return { status: res.status, body: (await res.json()) as T };
  }

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    if (!fs.existsSync(path.join(ROOT, 'dist/server/main.js')) || !fs.existsSync(path.join(ROOT, 'dist/client/index.html'))) {
      execSync('npm run build', { cwd: ROOT, stdio: 'inherit' });
    }
    dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-e2e-'));
    ({ child: server, url: base } = await startServer(dataDir, []));
    const { chromium } = await import('playwright-core');
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      headless: true,
      args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
  });

  afterAll(async () => {
    await browser?.close();
    await stopServer(server);
    if (dataDir) fs.rmSync(dataDir, { recursive: true, force: true });
  });

  it('lands on the demo, solved, and shows the reactions the API answers', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    const demos = await api<{ demos: Array<{ id: string }> }>('GET', '/api/demos');
    const id = demos.body.demos.find((d) => d.id === 'mixer-drive')?.id ?? demos.body.demos[0].id;
    const model = (await api<unknown>('GET', `/api/demos/${id}`)).body;
    const answer = (await api<Solution>('POST', '/api/solve', model)).body;
    const shown = await shownReactions(page);
    expect(Object.keys(shown).sort()).toEqual(answer.reactions.map((r) => r.support).sort());
    for (const r of answer.reactions) {
      // Shown in N·m with 5 significant figures.
      expect(Math.abs(shown[r.support] - r.torque)).toBeLessThanOrEqual(Math.max(1e-9, Math.abs(r.torque) * 1e-4));
    }
    expect(await page.locator('sn-schematic svg [data-pointer="/supports/0"]').count()).toBe(1);
    expect(await page.locator('sn-results sn-plot').count()).toBe(3 * answer.shafts.length);
    await expect.poll(() => page.locator('sn-cautions aside').innerText()).toMatch(/Saint-Venant/);
    await shot(page, '01-demo');
    await shot(page, '01-demo-full', true);
    expect(errors).toEqual([]);
  });

  it('links selection between the schematic and the editor, and exports JSON and CSV', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    await page.locator('sn-schematic svg g[data-pointer="/supports/2"]').click();
    await expect.poll(() => page.locator('sn-editor tr[data-pointer="/supports/2"]').getAttribute('class')).toContain('selected');
    await page.locator('sn-editor [data-pointer="/torques/0/at"]').click();
    await expect.poll(() => page.locator('sn-schematic g[data-pointer="/torques/0"] text').getAttribute('class')).toContain('seltext');
    await shot(page, '02-selection');
    const [json] = await Promise.all([page.waitForEvent('download'), page.locator('header button[data-action="export"]').click()]);
    const exported = JSON.parse(fs.readFileSync((await json.path()) as string, 'utf8')) as { format: string; shafts: unknown[] };
    expect(exported.format).toBe('shaftnet/1');
    const [csv] = await Promise.all([page.waitForEvent('download'), page.locator('header button[data-action="csv"]').click()]);
    const lines = fs.readFileSync((await csv.path()) as string, 'utf8').trim().split('\n');
    expect(lines[0]).toBe(STATION_CSV_HEADER);
    const model = (await api<unknown>('GET', '/api/demos/mixer-drive')).body;
    const answer = (await api<Solution>('POST', '/api/solve', model)).body;
    expect(lines.length - 1).toBe(answer.shafts.reduce((n, s) => n + s.stations.length, 0));
    expect(errors).toEqual([]);
  });

  it('re-solves after a diameter changes, saying so while the results lag', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    const before = await shownReactions(page);
    const input = page.locator('sn-editor [data-pointer="/sections/0/d"]');
    await input.fill('30');
    await input.press('Tab');
    await page.locator('sn-results .banner[data-status="stale"], sn-results .banner[data-status="solving"]').first().waitFor({ timeout: 5_000 });
    await waitFresh(page);
    const after = await shownReactions(page);
    expect(after.A).not.toBeCloseTo(before.A, 6);
    expect(await input.inputValue()).toBe('30');
    // Undo brings the demo's answer back.
    await page.keyboard.press('Control+z');
    await waitFresh(page);
    expect((await shownReactions(page)).A).toBeCloseTo(before.A, 6);
    expect(errors).toEqual([]);
  });

  it('shows the API error at the field it names, and US units everywhere', async () => {
    const { page, errors } = await open('/', [400]);
    await waitFresh(page);
    const input = page.locator('sn-editor [data-pointer="/shafts/0/segments/0/length"]');
    await input.fill('250 N*m');
    await input.press('Tab');
    await page.locator('sn-results .banner[data-status="invalid"]').waitFor({ timeout: 10_000 });
    await expect.poll(() => input.getAttribute('class')).toContain('invalid');
    expect(await page.locator('.problems li[data-pointer="/shafts/0/segments/0/length"]').count()).toBe(1);
    await shot(page, '03-field-error');
    // A value with its own unit is accepted anywhere: 10 in = 254 mm (1 in = 25.4 mm exactly),
    // which keeps support B (at 650 mm) on the 654 mm shaft.
    await input.fill('10 in');
    await input.press('Tab');
    await waitFresh(page);
    expect(await input.inputValue()).toBe('254');
    await page.locator('header select[aria-label="Units"]').selectOption('us');
    expect(await input.inputValue()).toBe('10');
    await expect.poll(() => page.locator('sn-results table.reactions thead').innerText()).toContain('lbf·in');
    await shot(page, '03-us-units');
    expect(errors).toEqual([]);
  });

  it('names the shafts free to spin', async () => {
    const { page, errors } = await open('/', [422]);
    await waitFresh(page);
    await page.locator('sn-editor details[data-list="shafts"] > sn-table button.add').click();
    const msg = page.locator('.problems .mechanism');
    await msg.waitFor({ timeout: 10_000 });
    expect(await msg.getAttribute('data-mechanism')).toBe('shaft1');
    expect(await msg.innerText()).toMatch(/shaft1 is free to spin/);
    await expect.poll(() => page.locator('sn-schematic .flag').count()).toBe(1);
    await shot(page, '04-mechanism');
    await page.keyboard.press('Control+z');
    await waitFresh(page);
    expect(await page.locator('.problems').count()).toBe(0);
    expect(errors).toEqual([]);
  });

  let savedId = '';

  it('saves, reloads, and opens the saved model from the library', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    await page.locator('sn-editor input[data-pointer="/name"]').fill('E2E drive, saved');
    await page.locator('sn-editor input[data-pointer="/name"]').press('Tab');
    await page.locator('header button[data-action="save"]').click();
    await page.locator('sn-save-dialog input[name="author"]').fill('E2E tester');
    await page.locator('sn-save-dialog input[name="message"]').fill('first save');
    await page.locator('sn-save-dialog button[type="submit"]').click();
    await page.waitForURL(/\/m\/[^/?]+$/);
    savedId = decodeURIComponent(new URL(page.url()).pathname.split('/')[2]);
    await page.reload();
    await waitFresh(page);
    expect(await page.locator('sn-editor input[data-pointer="/name"]').inputValue()).toBe('E2E drive, saved');
    expect(await page.locator('header .doc').getAttribute('data-doc-id')).toBe(savedId);
    await page.goto(base + '/');
    await waitFresh(page);
    await page.locator('header button[data-action="library"]').click();
    const row = page.locator(`sn-library tr[data-id="${savedId}"]`);
    await row.waitFor();
    await shot(page, '05-library');
    await row.locator('button.open').click();
    await page.waitForURL(new RegExp(`/m/${savedId}$`));
    await waitFresh(page);
    expect(await page.locator('sn-editor input[data-pointer="/name"]').inputValue()).toBe('E2E drive, saved');
    expect(errors).toEqual([]);
  });

  it('on a stale save offers to reload or save a copy', async () => {
    expect(savedId).not.toBe('');
    const a = await open(`/m/${savedId}`);
    const b = await open(`/m/${savedId}`, [409]);
    await waitFresh(a.page);
    await waitFresh(b.page);
    for (const [w, text] of [[a, 'from A'], [b, 'from B']] as const) {
      const d = w.page.locator('sn-editor [data-pointer="/sections/0/d"]');
      await d.fill(text === 'from A' ? '42' : '44');
      await d.press('Tab');
    }
    for (const [w, text] of [[a, 'from A'], [b, 'from B']] as const) {
      await w.page.locator('header button[data-action="save"]').click();
      await w.page.locator('sn-save-dialog input[name="author"]').fill(text);
      await w.page.locator('sn-save-dialog input[name="message"]').fill(text);
      await w.page.locator('sn-save-dialog button[type="submit"]').click();
      if (w === a) await w.page.locator('sn-save-dialog').waitFor({ state: 'detached' });
    }
    const dialog = b.page.locator('.conflict');
    await dialog.waitFor({ timeout: 10_000 });
    expect(await dialog.innerText()).toMatch(/revision 2/);
    await shot(b.page, '06-conflict');
    await dialog.locator('button[data-action="save-as-copy"]').click();
    await b.page.waitForURL((u) => /\/m\/[^/]+$/.test(u.pathname) && !u.pathname.endsWith(`/${savedId}`));
    const copy = await api<{ model: { name: string; sections: Array<{ d: string }> } }>('GET', `/api/models/${new URL(b.page.url()).pathname.split('/')[2]}`);
    expect(copy.body.model.name).toBe('E2E drive, saved (copy)');
    expect(copy.body.model.sections[0].d).toBe('44 mm');
    const original = await api<{ revision: number; model: { sections: Array<{ d: string }> } }>('GET', `/api/models/${savedId}`);
    expect(original.body.revision).toBe(2);
    expect(original.body.model.sections[0].d).toBe('42 mm');
    // The history lists both revisions; the older one opens by its link.
    await a.page.goto(`${base}/m/${savedId}?rev=1`);
    await waitFresh(a.page);
    expect(await a.page.locator('sn-editor [data-pointer="/sections/0/d"]').inputValue()).toBe('40');
    await a.page.locator('header button[data-action="library"]').click();
    await expect.poll(() => a.page.locator('sn-library table.revisions tbody tr').count()).toBe(2);
    await a.page.keyboard.press('Escape');
    expect(a.errors).toEqual([]);
    expect(b.errors).toEqual([]);
  });

  it('asks for the team token on a server that needs one', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-e2e-token-'));
    const token = 'e2e-team-token-0123456789';
    const guarded = await startServer(dir, ['--token', token]);
    try {
      const page = await browser.newPage();
      const errors: string[] = [];
      page.on('console', (msg) => {
        // The wrong token is refused with a 401 on purpose.
        if (msg.type() === 'error' && !(/status of 401/.test(msg.text()) && msg.location().url.endsWith('/api/session'))) errors.push(msg.text());
      });
      page.on('pageerror', (e) => errors.push(e.message));
      await page.goto(guarded.url + '/');
      await page.locator('sn-signin input[name="token"]').waitFor();
      await page.screenshot({ path: path.join(ARTIFACTS, '08-sign-in.png') });
      await page.locator('sn-signin input[name="token"]').fill('not-the-token-000000');
      await page.locator('sn-signin button[type="submit"]').click();
      await page.locator('sn-signin .err').waitFor();
      await page.locator('sn-signin input[name="token"]').fill(token);
      await page.locator('sn-signin button[type="submit"]').click();
      await waitFresh(page);
      expect(await page.locator('sn-signin').count()).toBe(0);
      await page.close();
      expect(errors).toEqual([]);
    } finally {
      await stopServer(guarded.child);
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('prints a report with the schematic, results and cautions', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    await page.emulateMedia({ media: 'print' });
    expect(await page.locator('header.bar').isVisible()).toBe(false);
    expect(await page.locator('.report-head').isVisible()).toBe(true);
    expect(await page.locator('sn-editor').isVisible()).toBe(false);
    expect(await page.locator('sn-cautions').isVisible()).toBe(true);
    await shot(page, '07-print', true);
    await page.emulateMedia({ media: 'screen' });
    expect(errors).toEqual([]);
  });
});
