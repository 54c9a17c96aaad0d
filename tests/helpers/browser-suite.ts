/**
 * The set-up every browser suite shares: the built app (built once if dist/ lacks it), a data
 * folder of its own, the real server (dist/server/main.js) on a free loopback port, headless
 * Chromium, and pages whose console errors are collected; afterwards the browser closed, the
 * server stopped and the data folder removed. `browserSuite()` registers the hooks in the
 * `describe` it is called in and returns the live handles, filled in once `beforeAll` has run.
 *
 * Without Chromium a suite is skipped with a clear message (`warnIfNoBrowser`);
 * tests/client/e2e.test.ts registers the failure that SHAFTNET_REQUIRE_BROWSER=1 asks for.
 */
import { type ChildProcess, execSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, expect } from 'vitest';
import { launchChromium, spawnServer } from './server-process.js';

export const CHROMIUM = '/usr/bin/chromium';
/** The repository's root (with its dist/). */
export const ROOT = fileURLToPath(new URL('../../', import.meta.url));
/** Screenshots go here (gitignored). */
export const ARTIFACTS = path.join(ROOT, 'test-artifacts');
export const hasBrowser = fs.existsSync(CHROMIUM);

/** Says loudly that the browser test named by `what` is skipped, when there is no Chromium. */
export function warnIfNoBrowser(what: string): void {
  if (!hasBrowser) console.warn(`\n*** SKIPPED ${what}: no Chromium at ${CHROMIUM}. ***\n`);
}

/** What a page watches its console for. */
export interface PageOptions {
  /** An HTTP status the suite provokes on purpose: the browser's "status of N" error for an /api/ URL is not collected. */
  allowStatus?: number;
  /** Put before each collected error (whose page it was), e.g. a reviewer's name. */
  label?: string;
}

/** The live handles of a browser suite (set once its `beforeAll` has run). */
export interface BrowserSuite {
  /** The server's URL, without the trailing slash. */
  readonly base: string;
  readonly dataDir: string;
  readonly browser: Browser;
  /** Console errors and page errors of every page `openPage` made; a suite ends expecting it empty. */
  readonly errors: string[];
  /** A page at 1366 × 768 in a browser context of its own (its own session cookie), its errors collected. */
  openPage(opts?: PageOptions): Promise<Page>;
  /** Saves a model as a new one through the API (expects 201) and gives its id. */
  saveModel(model: unknown, author: string, message: string): Promise<string>;
  /** Opens a saved model in the page and waits for its fresh results. */
  openModel(page: Page, id: string): Promise<void>;
}

/**
 * Registers the suite's `beforeAll` (build if needed, data folder `shaftnet-<name>-*`, `beforeStart`
 * on it, the server, Chromium) and `afterAll` (browser closed, server stopped and awaited, folder
 * removed). Call it first in the `describe`, so that the suite's own `beforeAll` runs after it.
 */
export function browserSuite(name: string, opts: { beforeStart?: (dataDir: string) => void } = {}): BrowserSuite {
  let server: ChildProcess | undefined;
  const suite = {
    base: '',
    dataDir: '',
    browser: undefined as unknown as Browser,
    errors: [] as string[],

    async openPage(pageOpts: PageOptions = {}): Promise<Page> {
      const context = await suite.browser.newContext({ viewport: { width: 1366, height: 768 } });
      const page = await context.newPage();
      const prefix = pageOpts.label ? `${pageOpts.label}: ` : '';
      const allowed = pageOpts.allowStatus === undefined ? null : `status of ${pageOpts.allowStatus}`;
      page.on('console', (msg) => {
        if (msg.type() !== 'error') return;
        if (allowed !== null && msg.text().includes(allowed) && msg.location().url.includes('/api/')) return;
        suite.errors.push(prefix + msg.text());
      });
      page.on('pageerror', (e) => suite.errors.push(`${prefix}pageerror: ${e.message}`));
      return page;
    },

    async saveModel(model: unknown, author: string, message: string): Promise<string> {
      const saved = await fetch(`${suite.base}/api/models`, {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ model, author, message }),
      });
      expect(saved.status, `the server refused the model: ${await saved.clone().text()}`).toBe(201);
      return ((await saved.json()) as { id: string }).id;
    },

    async openModel(page: Page, id: string): Promise<void> {
      await page.goto(`${suite.base}/m/${encodeURIComponent(id)}`);
      await waitFresh(page);
    },
  };

  beforeAll(async () => {
    fs.mkdirSync(ARTIFACTS, { recursive: true });
    if (!fs.existsSync(path.join(ROOT, 'dist/server/main.js')) || !fs.existsSync(path.join(ROOT, 'dist/client/index.html'))) {
      execSync('npm run build', { cwd: ROOT, stdio: 'inherit' });
    }
    suite.dataDir = fs.mkdtempSync(path.join(os.tmpdir(), `shaftnet-${name}-`));
    opts.beforeStart?.(suite.dataDir);
    const started = await spawnServer(
      path.join(ROOT, 'dist/server/main.js'),
      ['--port', '0', '--host', '127.0.0.1', '--data', suite.dataDir, '--rate-limit', '0', '--log-level', 'silent'],
      { cwd: ROOT, children: new Set(), timeoutMs: 30_000 },
    );
    server = started.child;
    suite.base = started.url;
    suite.browser = await launchChromium(CHROMIUM);
  });

  afterAll(async () => {
    await suite.browser?.close();
    if (server && server.exitCode === null) {
      const child = server;
      const exited = new Promise((r) => child.once('exit', r));
      child.kill('SIGTERM');
      await exited;
    }
    if (suite.dataDir) fs.rmSync(suite.dataDir, { recursive: true, force: true });
  });

  return suite;
}

/** Waits until the results say they are fresh (the solve of what is on screen has answered). */
export async function waitFresh(page: Page): Promise<void> {
  await page.locator('sn-results .banner[data-status="fresh"]').waitFor({ timeout: 20_000 });
}

/** Commits a cell of the editor: its text, then Tab (the one commit path). */
export async function typeCell(page: Page, pointer: string, text: string): Promise<void> {
  const input = page.locator(`sn-editor input[data-pointer="${pointer}"]`);
  await input.fill(text);
  await input.press('Tab');
}

/** Picks an option of one of the editor's selects. */
export async function chooseCell(page: Page, pointer: string, value: string): Promise<void> {
  await page.locator(`sn-editor select[data-pointer="${pointer}"]`).selectOption(value);
}

/** A screenshot of the page's viewport to test-artifacts/<name>.png. */
export async function shot(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`) });
}
