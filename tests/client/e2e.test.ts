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

  /** Records every state the results banner shows from now on, in window.snStatuses. */
  async function recordStatuses(page: Page): Promise<void> {
    await page.evaluate(() => {
      const w = window as unknown as { snStatuses: string[] };
      w.snStatuses = [];
      const results = document.querySelector('sn-app')?.shadowRoot?.querySelector('sn-results');
      const root = results?.shadowRoot;
      if (!root) throw new Error('no results element');
      new MutationObserver(() => {
        const s = root.querySelector('.banner')?.getAttribute('data-status') ?? '';
        if (w.snStatuses[w.snStatuses.length - 1] !== s) w.snStatuses.push(s);
      }).observe(root, { subtree: true, childList: true, attributes: true });
    });
  }

  /** The data-pointer of the focused element, through shadow roots ('' when it has none). */
  async function focusedPointer(page: Page): Promise<string> {
    return page.evaluate(() => {
      let a: Element | null = document.activeElement;
      while (a?.shadowRoot?.activeElement) a = a.shadowRoot.activeElement;
      return a?.getAttribute('data-pointer') ?? a?.getAttribute('data-action') ?? a?.localName ?? '';
    });
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
    await page.setViewportSize({ width: 1366, height: 768 });
    await shot(page, '01-demo-1366');
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
    await recordStatuses(page);
    await input.fill('30');
    await input.press('Tab');
    await waitFresh(page);
    // The banner said the results lagged before they were fresh again (recorded as it changed).
    const seen = await page.evaluate(() => (window as unknown as { snStatuses: string[] }).snStatuses);
    expect(seen.indexOf('solving')).toBeGreaterThanOrEqual(0);
    expect(seen.lastIndexOf('fresh')).toBeGreaterThan(seen.indexOf('solving'));
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

  // ——— the first day, as a new user meets it ———

  /** Saves a model in the library through the API; returns its id. */
  async function saveModel(model: unknown, message = 'e2e'): Promise<string> {
    const res = await api<{ id: string }>('POST', '/api/models', { model, author: 'E2E', message });
    expect(res.status).toBe(201);
    return res.body.id;
  }

  async function demoModel(): Promise<Record<string, unknown> & { name: string }> {
    return (await api<Record<string, unknown> & { name: string }>('GET', '/api/demos/mixer-drive')).body;
  }

  it('takes a problem link, by click and by keyboard, to the field it names; the field is marked for assistive technology', async () => {
    const { page, errors } = await open('/', [400]);
    await waitFresh(page);
    const pointer = '/shafts/0/segments/0/length';
    const input = page.locator(`sn-editor input[data-pointer="${pointer}"]`);
    await input.fill('250 N*m');
    await input.press('Tab');
    await page.locator('sn-results .banner[data-status="invalid"]').waitFor({ timeout: 10_000 });
    // The banner names the field as the list does, not by its JSON pointer.
    const banner = await page.locator('sn-results .banner').innerText();
    expect(banner).toContain('shaft "input", segment 1, length');
    expect(banner).not.toContain(pointer);
    // The field says it is invalid and which text describes why.
    expect(await input.getAttribute('aria-invalid')).toBe('true');
    const describedBy = (await input.getAttribute('aria-describedby')) as string;
    expect(describedBy).toBeTruthy();
    const described = await input.evaluate((el, id) => (el.getRootNode() as ShadowRoot).getElementById(id)?.textContent ?? '', describedBy);
    expect(described.length).toBeGreaterThan(5);
    const line = page.locator(`sn-problems li[data-pointer="${pointer}"]`);
    expect(await line.innerText()).toContain(described.trim().slice(0, 20));
    // Click: away from the field first, then the link brings the focus back to it.
    await page.locator('sn-editor input[data-pointer="/name"]').focus();
    await line.locator('a').click();
    await expect.poll(() => focusedPointer(page)).toBe(pointer);
    expect(await input.isVisible()).toBe(true);
    // Keyboard: from the first diagram, Shift+Tab reaches the link; Enter follows it.
    await page.locator('sn-editor input[data-pointer="/name"]').focus();
    await page.locator('sn-results sn-plot svg').first().focus();
    let reached = false;
    for (let i = 0; i < 6 && !reached; i++) {
      await page.keyboard.press('Shift+Tab');
      reached = await page.evaluate(() => {
        let a: Element | null = document.activeElement;
        while (a?.shadowRoot?.activeElement) a = a.shadowRoot.activeElement;
        return a?.localName === 'a' && (a.getRootNode() as ShadowRoot).host?.localName === 'sn-problems';
      });
    }
    expect(reached).toBe(true);
    await page.keyboard.press('Enter');
    await expect.poll(() => focusedPointer(page)).toBe(pointer);
    await shot(page, '10-problem-link');
    expect(errors).toEqual([]);
  });

  it('commits a cell on Enter without adding a row; a row comes only from its button', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    const rows = page.locator('sn-editor sn-table[pointer="/torques"] tr.row');
    expect(await rows.count()).toBe(2);
    const before = await shownReactions(page);
    const input = page.locator('sn-editor input[data-pointer="/torques/0/torque"]');
    await input.fill('360');
    await input.press('Enter');
    await waitFresh(page);
    await expect.poll(async () => (await shownReactions(page)).A).not.toBeCloseTo(before.A, 6);
    expect(await rows.count()).toBe(2);
    expect(await focusedPointer(page)).toBe('/torques/0/torque');
    expect(await input.inputValue()).toBe('360');
    await page.locator('sn-editor sn-table[pointer="/torques"] button.add').click();
    expect(await rows.count()).toBe(3);
    expect(errors).toEqual([]);
  });

  it('solves what is being typed after a pause, without committing it; typing back solves the model as it is', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    const before = await shownReactions(page);
    const input = page.locator('sn-editor input[data-pointer="/torques/0/torque"]');
    await input.focus();
    await page.keyboard.press('Control+a');
    await page.keyboard.type('400');
    await expect.poll(async () => (await shownReactions(page)).A, { timeout: 10_000 }).not.toBeCloseTo(before.A, 6);
    expect(await input.inputValue()).toBe('400'); // the answer arriving does not overwrite what is typed
    expect(await page.locator('sn-top-bar button', { hasText: 'Undo' }).isDisabled()).toBe(true); // nothing committed
    await page.keyboard.press('Control+a');
    await page.keyboard.type('350'); // the demo's motor torque
    await expect.poll(async () => (await shownReactions(page)).A, { timeout: 10_000 }).toBeCloseTo(before.A, 6);
    await waitFresh(page);
    expect(await page.locator('sn-top-bar button', { hasText: 'Undo' }).isDisabled()).toBe(true);
    expect(errors).toEqual([]);
  });

  it('puts a new support at the free end of the shaft, not on the support at z = 0', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    await page.locator('sn-top-bar button[data-action="new"]').click();
    await waitFresh(page);
    await page.locator('sn-editor sn-table[pointer="/supports"] button.add').click();
    // The new model's shaft is one 500 mm segment held at z = 0.
    await expect.poll(() => page.locator('sn-editor input[data-pointer="/supports/1/at"]').inputValue()).toBe('500');
    await waitFresh(page);
    expect(errors).toEqual([]);
  });

  it('keeps the top bar on one line at 1366 px with the older-revision state in view; wide tables scroll inside their panel', async () => {
    const model = await demoModel();
    const id = await saveModel(model, 'first');
    const put = await api<{ revision: number }>('PUT', `/api/models/${id}`, { model: { ...model, notes: 'second' }, baseRevision: 1, author: 'E2E', message: 'second' });
    expect(put.status).toBe(200);
    const { page, errors } = await open(`/m/${id}?rev=1`);
    await page.setViewportSize({ width: 1366, height: 768 });
    await waitFresh(page);
    const bar = page.locator('sn-top-bar header');
    const barBox = (await bar.boundingBox())!;
    const printBox = (await page.locator('sn-top-bar button[data-action="print"]').boundingBox())!;
    // One line: the last button sits on the bar's first row and inside the window.
    expect(printBox.y + printBox.height).toBeLessThanOrEqual(barBox.y + 40);
    expect(printBox.x + printBox.width).toBeLessThanOrEqual(1366);
    const older = page.locator('sn-top-bar [data-older]');
    expect(await older.innerText()).toMatch(/older revision; latest 2/);
    const olderBox = (await older.boundingBox())!;
    expect(olderBox.x + olderBox.width).toBeLessThanOrEqual(printBox.x);
    expect(await older.evaluate((el) => el.scrollWidth <= el.clientWidth + 1)).toBe(true);
    await shot(page, '11-older-revision-1366');
    // The editor's panel never scrolls sideways; each wide table does, inside it, with its id column in view.
    const card = await page.evaluate(() => {
      const c = document.querySelector('sn-app')?.shadowRoot?.querySelector('.editor-card') as HTMLElement;
      return { scroll: c.scrollWidth, client: c.clientWidth, right: c.getBoundingClientRect().right };
    });
    expect(card.scroll).toBeLessThanOrEqual(card.client + 1);
    for (const list of ['materials', 'gearMeshes', 'torques']) {
      const table = page.locator(`sn-editor sn-table[pointer="/${list}"]`);
      await table.scrollIntoViewIfNeeded();
      const geo = await table.evaluate((el) => {
        const wrap = el.shadowRoot?.querySelector('.wrap') as HTMLElement;
        wrap.scrollLeft = wrap.scrollWidth; // scrolled to the far right
        const first = el.shadowRoot?.querySelector('tr.row td:first-child input') as HTMLElement;
        const w = wrap.getBoundingClientRect();
        const f = first.getBoundingClientRect();
        return { wrapRight: w.right, wrapLeft: w.left, firstLeft: f.left, firstRight: f.right, id: (first as HTMLInputElement).value };
      });
      expect(geo.wrapRight, list).toBeLessThanOrEqual(card.right);
      expect(geo.firstLeft, list).toBeGreaterThanOrEqual(geo.wrapLeft - 0.5);
      expect(geo.firstRight, list).toBeLessThanOrEqual(geo.wrapRight);
      expect(geo.id.length, list).toBeGreaterThan(0);
    }
    await page.locator('sn-editor sn-table[pointer="/gearMeshes"]').scrollIntoViewIfNeeded();
    await shot(page, '12-wide-table-1366');
    await page.setViewportSize({ width: 1920, height: 1080 });
    await shot(page, '13-older-revision-1920');
    expect(errors).toEqual([]);
  });

  it('says what switching a gear mesh from radius to teeth does to the mesh force', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    const force = page.locator('sn-results table.meshes tbody tr[data-mesh="G1"] td.num').first();
    const before = await force.innerText();
    await page.locator('sn-editor select[data-pointer="/gearMeshes/0/@sizing"]').selectOption('teeth');
    const note = page.locator('sn-editor sn-table[pointer="/gearMeshes"] tr[data-note="/gearMeshes/0"]');
    await note.waitFor();
    // The demo's radii 40 and 120 mm; the new teeth 20 and 40 with a 2 mm module give 20 and 40 mm (teeth × module / 2).
    expect(await note.innerText()).toMatch(/radii 20 mm and 40 mm, were 40 mm and 120 mm\. The mesh force/);
    await waitFresh(page);
    await expect.poll(() => force.innerText()).not.toBe(before);
    await note.scrollIntoViewIfNeeded();
    await shot(page, '14-gear-sizing-note');
    expect(errors).toEqual([]);
  });

  it('draws nothing invalid for a negative diameter', async () => {
    const { page, errors } = await open('/', [400]);
    await waitFresh(page);
    const input = page.locator('sn-editor input[data-pointer="/sections/0/d"]');
    await input.fill('-40');
    await input.press('Tab');
    await page.locator('sn-results .banner[data-status="invalid"]').waitFor({ timeout: 10_000 });
    const negative = await page.evaluate(() => {
      const svg = document.querySelector('sn-app')?.shadowRoot?.querySelector('sn-schematic')?.shadowRoot?.querySelector('svg');
      return [...(svg?.querySelectorAll('rect') ?? [])].filter((r) => Number(r.getAttribute('height')) < 0 || Number(r.getAttribute('width')) < 0).length;
    });
    expect(negative).toBe(0);
    expect(errors).toEqual([]);
  });

  it('imports a model file from the keyboard', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    const file = path.join(os.tmpdir(), `shaftnet-e2e-import-${process.pid}.json`);
    fs.writeFileSync(file, JSON.stringify({ ...(await demoModel()), name: 'Imported from the keyboard' }));
    try {
      // Tab from "New" lands on Import; Enter opens the file chooser (on the page in front: many pages are open).
      await page.bringToFront();
      await page.locator('sn-top-bar button[data-action="new"]').focus();
      await page.keyboard.press('Tab');
      expect(await focusedPointer(page)).toBe('import');
      const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.keyboard.press('Enter')]);
      await chooser.setFiles(file);
      await expect.poll(() => page.locator('sn-editor input[data-pointer="/name"]').inputValue()).toBe('Imported from the keyboard');
      await waitFresh(page);
    } finally {
      fs.rmSync(file, { force: true });
    }
    expect(errors).toEqual([]);
  });

  it('moves the focus into the conflict dialog, keeps it there, and closes it on Escape without losing the edit', async () => {
    const model = await demoModel();
    const id = await saveModel(model);
    const { page, errors } = await open(`/m/${id}`, [409]);
    await waitFresh(page);
    // Someone else saves revision 2 meanwhile.
    expect((await api('PUT', `/api/models/${id}`, { model: { ...model, notes: 'theirs' }, baseRevision: 1, author: 'Other', message: 'theirs' })).status).toBe(200);
    const d = page.locator('sn-editor input[data-pointer="/sections/0/d"]');
    await d.fill('43');
    await d.press('Tab');
    await waitFresh(page);
    await page.locator('sn-top-bar button[data-action="save"]').click();
    await page.locator('sn-save-dialog input[name="author"]').fill('E2E');
    await page.locator('sn-save-dialog input[name="message"]').fill('mine');
    await page.locator('sn-save-dialog button[type="submit"]').click();
    const dialog = page.locator('sn-conflict-dialog');
    await dialog.waitFor();
    await expect.poll(() => focusedPointer(page)).toBe('save-as-copy');
    await shot(page, '15-conflict-focus');
    for (let i = 0; i < 4; i++) await page.keyboard.press('Tab');
    expect(['save-as-copy', 'reload-latest', 'cancel']).toContain(await focusedPointer(page));
    await page.keyboard.press('Escape');
    await dialog.waitFor({ state: 'detached' });
    await expect.poll(() => focusedPointer(page)).toBe('save');
    expect(await d.inputValue()).toBe('43');
    expect(await page.locator('sn-top-bar [data-dirty]').count()).toBe(1);
    const stored = await api<{ revision: number; model: { notes?: string } }>('GET', `/api/models/${id}`);
    expect(stored.body.revision).toBe(2);
    expect(stored.body.model.notes).toBe('theirs');
    expect(errors).toEqual([]);
  });

  it('reads T, φ and τ at the cursor, by pointer and by keyboard; shows stations, segment constants and checks as "value of allowed"', async () => {
    const { page, errors } = await open('/');
    await waitFresh(page);
    const answer = (await api<Solution>('POST', '/api/solve', await demoModel())).body;
    const input = answer.shafts.find((s) => s.id === 'input')!;
    const shaft = page.locator('sn-results .shaft[data-shaft="input"]');
    const torquePlot = shaft.locator('sn-plot').first();
    // Keyboard: Home puts the cursor at z = 0, where the diagram starts with the first station's values.
    await torquePlot.locator('svg').focus();
    await page.keyboard.press('Home');
    await expect.poll(() => shaft.locator('p.readout').getAttribute('data-readout')).toBe('0');
    const atStart = Number(await torquePlot.locator('g.readout').getAttribute('data-value'));
    expect(atStart).toBe(input.diagram.torque[0]);
    await page.keyboard.press('End');
    await expect.poll(async () => Number(await shaft.locator('p.readout').getAttribute('data-readout'))).toBeCloseTo(input.length, 12);
    // Pointer: halfway across the plotting area; the value lies on the line between the two diagram points around z
    // (straight-line reading between exact points, the diagram's own definition).
    const box = (await torquePlot.locator('svg').boundingBox())!;
    await page.mouse.move(box.x + box.width * ((58 + (680 - 58 - 12) / 2) / 680), box.y + box.height / 2);
    const z = Number(await shaft.locator('p.readout').getAttribute('data-readout'));
    expect(z).toBeGreaterThan(0.3 * input.length);
    expect(z).toBeLessThan(0.7 * input.length);
    const dz = input.diagram.z;
    const i = dz.findIndex((x, k) => k + 1 < dz.length && x <= z && z <= dz[k + 1] && dz[k + 1] > x);
    const t = (z - dz[i]) / (dz[i + 1] - dz[i]);
    const expected = input.diagram.torque[i] + t * (input.diagram.torque[i + 1] - input.diagram.torque[i]);
    expect(Number(await torquePlot.locator('g.readout').getAttribute('data-value'))).toBeCloseTo(expected, 9);
    expect(await shaft.locator('p.readout').innerText()).toMatch(/^At z = .* T = .* N·m, φ = .* deg, τ = .* MPa$/);
    await shot(page, '16-cursor-readout');
    // Segments: G·J of the d40 steel segment, G·π·d⁴/32 (solid circular section, closed form), G = 79.3 GPa, d = 40 mm;
    // shown with 5 significant figures (19930 N·m²), hence the tolerance of ±5 (toBeCloseTo with -1 digits).
    const gj = (79.3e9 * Math.PI * 0.04 ** 4) / 32;
    expect(Number(await shaft.locator('sn-segment-table tr[data-segment="0"] td[data-gj]').innerText())).toBeCloseTo(gj, -1);
    const seg0 = input.segments[0] as (typeof input.segments)[number] & { torsionConstant?: number; stiffness?: number };
    const jText = await shaft.locator('sn-segment-table tr[data-segment="0"] td[data-j]').innerText();
    // J = π·d⁴/32 in mm⁴ once the server sends it; "—" until then.
    if (seg0.torsionConstant === undefined) expect(jText).toBe('—');
    else expect(Number(jText)).toBeCloseTo((Math.PI * 40 ** 4) / 32, -1);
    // Stations: the table lists every station of the shaft.
    await shaft.locator('sn-station-table summary').click();
    await expect.poll(() => shaft.locator('sn-station-table table.stations tbody tr').count()).toBe(input.stations.length);
    // Checks: "value of allowed unit", then an over-limit row with a look of its own.
    expect(await page.locator('sn-results table.checks tbody tr').first().locator('td.value-of').innerText()).toMatch(/^-?[\d.e-]+ of [\d.e-]+ (MPa|deg\/m|deg)$/);
    const allow = page.locator('sn-editor input[data-pointer="/materials/0/allowableShear"]');
    await allow.fill('5');
    await allow.press('Tab');
    await waitFresh(page);
    const over = page.locator('sn-results table.checks tbody tr[data-pass="false"]').first();
    expect(await over.getAttribute('class')).toContain('over');
    expect(await over.locator('td.status').innerText()).toMatch(/EXCEEDS by/);
    expect(await over.locator('td.value-of').innerText()).toMatch(/ of 5 MPa$/);
    await over.scrollIntoViewIfNeeded();
    await shot(page, '17-checks-over');
    expect(errors).toEqual([]);
  });

  it('re-solves a committed edit at once (figure printed for a model of about 200 stations)', async () => {
    // One shaft of 198 segments of 5 mm (invented), held at both ends, with a torque in the middle:
    // 199 segment ends, the supports and the torque on them.
    const segments = Array.from({ length: 198 }, () => ({ length: '5 mm', section: 'd40', material: 'steel' }));
    const model = {
      format: 'shaftnet/1',
      name: 'Two hundred stations (invented)',
      materials: [{ id: 'steel', G: '79.3 GPa', allowableShear: '55 MPa' }],
      sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
      shafts: [{ id: 'long', segments }],
      supports: [{ id: 'A', shaft: 'long', at: 0, kind: 'fixed' }, { id: 'B', shaft: 'long', at: '990 mm', kind: 'fixed' }],
      torques: [{ id: 'T1', shaft: 'long', at: '500 mm', torque: '100 N*m' }],
    };
    const solved = (await api<Solution>('POST', '/api/solve', model)).body;
    expect(solved.stats.stations).toBeLessThanOrEqual(200);
    expect(solved.stats.stations).toBeGreaterThanOrEqual(190);
    const id = await saveModel(model);
    const { page, errors } = await open(`/m/${id}`);
    await waitFresh(page);
    // The solve request's own round trip, to tell the server's share from the page's.
    await page.evaluate(() => {
      const w = window as unknown as { snSolveMs: number[] };
      const plain = window.fetch.bind(window);
      w.snSolveMs = [];
      window.fetch = async (input, init) => {
        const t0 = performance.now();
        const res = await plain(input, init);
        await res.clone().arrayBuffer();
        if (String(input).endsWith('/api/solve')) w.snSolveMs.push(performance.now() - t0);
        return res;
      };
    });
    const times: number[] = [];
    for (let k = 0; k < 12; k++) {
      const ms = await page.evaluate(async (d) => {
        const deep = (root: ParentNode, sel: string): HTMLElement | null => {
          const hit = root.querySelector<HTMLElement>(sel);
          if (hit) return hit;
          for (const el of root.querySelectorAll('*')) {
            const found = el.shadowRoot ? deep(el.shadowRoot, sel) : null;
            if (found) return found;
          }
          return null;
        };
        const input = deep(document, 'input[data-pointer="/torques/0/torque"]') as HTMLInputElement;
        const cell = () => deep(document, 'table.reactions td.torque')?.getAttribute('data-si');
        const status = () => deep(document, 'sn-results')?.shadowRoot?.querySelector('.banner')?.getAttribute('data-status');
        const before = cell();
        const t0 = performance.now();
        input.value = d;
        input.dispatchEvent(new Event('change', { bubbles: true, composed: true }));
        await new Promise<void>((resolve) => {
          const check = () => (status() === 'fresh' && cell() !== before ? resolve() : setTimeout(check, 1));
          check();
        });
        return performance.now() - t0;
      }, k % 2 === 0 ? '101' : '100');
      times.push(ms);
    }
    // Not a timed assertion: the figure is reported (goal: under 100 ms), the results are checked.
    const sorted = [...times].sort((a, b) => a - b);
    const inOrder = await page.evaluate(() => (window as unknown as { snSolveMs: number[] }).snSolveMs);
    expect(inOrder.length).toBe(12); // one solve per committed edit, none for typing
    const requests = [...inOrder].sort((a, b) => a - b);
    const page_ = times.map((t, k) => t - inOrder[k]).sort((a, b) => a - b); // the page's own share of each edit
    console.log(
      `committed edit → new results, ${solved.stats.stations} stations, 12 edits in Chromium: median ${sorted[6].toFixed(1)} ms, ` +
        `min ${sorted[0].toFixed(1)} ms, max ${sorted[11].toFixed(1)} ms; of which the solve request (round trip, body read): ` +
        `median ${requests[6].toFixed(1)} ms, min ${requests[0].toFixed(1)} ms, max ${requests[11].toFixed(1)} ms; ` +
        `the page's own share (edit, render): median ${page_[6].toFixed(1)} ms, max ${page_[11].toFixed(1)} ms`,
    );
    // Fixed at both ends with a mid torque on a uniform shaft: reactions split by the lengths, -T·b/L and -T·a/L
    // (statically indeterminate bar, closed form), a = 500 mm, b = 490 mm, L = 990 mm, T = 100 N·m after the last edit.
    const shown = await shownReactions(page);
    expect(shown.A).toBeCloseTo((-100 * 490) / 990, 3);
    expect(shown.B).toBeCloseTo((-100 * 500) / 990, 3);
    expect(errors).toEqual([]);
  });
});
