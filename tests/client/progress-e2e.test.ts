/**
 * End-to-end test of issue 14 in real Chromium (playwright-core, /usr/bin/chromium)
 * against the real built server (dist/server/main.js) on a free loopback port, with
 * one solver worker and no queue (a worker still busy would answer the next large
 * solve 503 SN_BUSY).
 *
 * The editor shows a small cantilever; the test swaps the body of chosen solve
 * requests, in the browser's network layer, for a generated chain of 1e6 stations
 * (tests/helpers/long-chain.ts, invented), so that the browser starts a long solve
 * through the API as if it had typed that model. It sees the bar with a phase and
 * the Cancel button, cancels, and the server's worker is free again (GET
 * /api/health: busy 0); it edits on and gets fresh results. A second long solve is
 * then cut short by a newer edit instead of Cancel.
 *
 * Closed form: a shaft fixed at z = 0 with one torque T at its free end carries
 * the reaction −T at the support (equilibrium of the shaft about its axis).
 *
 * Without Chromium the suite is skipped with a clear message (tests/client/e2e.test.ts
 * registers the failure that SHAFTNET_REQUIRE_BROWSER=1 asks for). Screenshots at
 * 1366 × 768 go to test-artifacts/ (gitignored).
 */
import { type ChildProcess, execSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page, Route } from 'playwright-core';
import { launchChromium, spawnServer } from '../helpers/server-process.js';
import { longChain } from '../helpers/long-chain.js';

const CHROMIUM = '/usr/bin/chromium';
const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const ARTIFACTS = path.join(ROOT, 'test-artifacts');
const hasBrowser = fs.existsSync(CHROMIUM);

if (!hasBrowser) console.warn(`\n*** SKIPPED the browser test of progress and cancel: no Chromium at ${CHROMIUM}. ***\n`);

const MODEL = {
  format: 'shaftnet/1',
  name: 'Cantilever for progress (invented)',
  materials: [{ id: 'steel', G: '80 GPa' }],
  sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
  shafts: [{ id: 's', segments: [{ length: '1 m', section: 'd40', material: 'steel' }] }],
  supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
  torques: [{ id: 'T', shaft: 's', at: '1 m', torque: '100 N*m' }],
};

describe.runIf(hasBrowser)('progress and cancel of a long solve in Chromium against the real server', () => {
  let server: ChildProcess;
  let base = '';
  let dataDir = '';
  let browser: Browser;
  let page: Page;
  const errors: string[] = [];
  /** Solve requests still to be swapped for the long model. */
  let swapNext = 0;
  let swapped = 0;
  const BIG = JSON.stringify(longChain(1_000_001));

  const busy = async () => ((await (await fetch(`${base}/api/health`)).json()) as { workers: { busy: number } }).workers.busy;

  async function type(pointer: string, text: string): Promise<void> {
    const input = page.locator(`sn-editor input[data-pointer="${pointer}"]`);
    await input.fill(text);
    await input.press('Tab');
  }

  async function reactionA(): Promise<number> {
    return Number(await page.locator('sn-results tr[data-support="A"] td.torque').getAttribute('data-si'));
  }

  async function waitFresh(): Promise<void> {
    await page.locator('sn-results .banner[data-status="fresh"]').waitFor({ timeout: 30_000 });
  }

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    if (!fs.existsSync(path.join(ROOT, 'dist/server/main.js')) || !fs.existsSync(path.join(ROOT, 'dist/client/index.html'))) {
      execSync('npm run build', { cwd: ROOT, stdio: 'inherit' });
    }
    dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-progress-e2e-'));
    const started = await spawnServer(
      path.join(ROOT, 'dist/server/main.js'),
      ['--port', '0', '--host', '127.0.0.1', '--data', dataDir, '--rate-limit', '0', '--log-level', 'silent', '--workers', '1', '--queue', '0'],
      { cwd: ROOT, children: new Set(), timeoutMs: 30_000 },
    );
    server = started.child;
    base = started.url;
    browser = await launchChromium(CHROMIUM);
    const saved = await fetch(`${base}/api/models`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ model: MODEL, author: 'E2E', message: 'progress' }),
    });
    expect(saved.status, await saved.clone().text()).toBe(201);
    const { id } = (await saved.json()) as { id: string };
    page = await browser.newPage({ viewport: { width: 1366, height: 768 } });
    page.on('console', (msg) => {
      if (msg.type() === 'error') errors.push(msg.text());
    });
    page.on('pageerror', (e) => errors.push(`pageerror: ${e.message}`));
    await page.route('**/api/solve*', async (route: Route) => {
      if (route.request().method() === 'POST' && swapNext > 0) {
        swapNext--;
        swapped++;
        await route.continue({ postData: BIG });
      } else await route.continue();
    });
    await page.goto(`${base}/m/${encodeURIComponent(id)}`);
    await waitFresh();
    expect(await reactionA()).toBeCloseTo(-100, 9); // −T, closed form above
  });

  afterAll(async () => {
    await browser?.close();
    if (server && server.exitCode === null) {
      const exited = new Promise((r) => server.once('exit', r));
      server.kill('SIGTERM');
      await exited;
    }
    if (dataDir) fs.rmSync(dataDir, { recursive: true, force: true });
  });

  it('shows the bar of a long solve, cancels it (the worker is freed), and edits on', async () => {
    swapNext = 1;
    await type('/torques/0/torque', '150 N*m'); // a committed edit: solved at once (the long model instead)
    const bar = page.locator('sn-progress .box');
    await bar.waitFor({ timeout: 30_000 });
    await expect.poll(() => bar.getAttribute('data-phase'), { timeout: 60_000 }).toMatch(/^(stations|assembly|factorisation|solve|recovery|writing)$/);
    expect(swapped).toBe(1);
    expect(await busy()).toBe(1);
    await page.screenshot({ path: path.join(ARTIFACTS, 'progress-bar.png') });
    await page.locator('sn-progress button.cancel').click();
    await bar.waitFor({ state: 'detached', timeout: 10_000 });
    expect(await page.locator('sn-results .banner').getAttribute('data-status')).toBe('stale');
    await expect.poll(busy, { timeout: 10_000, interval: 50 }).toBe(0);

    // The editor is usable: the next edit solves the model on screen.
    await type('/torques/0/torque', '250 N*m');
    await waitFresh();
    expect(await reactionA()).toBeCloseTo(-250, 9);
  });

  it('a newer edit cancels the older long solve', async () => {
    swapNext = 1;
    await type('/torques/0/torque', '300 N*m');
    const bar = page.locator('sn-progress .box');
    await bar.waitFor({ timeout: 30_000 });
    // The first progress event: the worker is solving (the bar shows half a second after the request, events or not).
    await expect.poll(() => bar.getAttribute('data-phase'), { timeout: 60_000 }).toMatch(/^(stations|assembly|factorisation|solve|recovery|writing)$/);
    expect(await busy()).toBe(1);
    await type('/torques/0/torque', '350 N*m'); // the request of this edit is not swapped
    await waitFresh();
    expect(await reactionA()).toBeCloseTo(-350, 9);
    expect(await bar.count()).toBe(0);
    await expect.poll(busy, { timeout: 10_000, interval: 50 }).toBe(0);
    expect(swapped).toBe(2);
    expect(errors).toEqual([]);
  });
});
