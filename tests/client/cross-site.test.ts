/**
 * Cross-site requests in real Chromium (playwright-core, /usr/bin/chromium)
 * against the real built server (dist/server/main.js) on a free loopback port.
 *
 * A page of another origin — another port of 127.0.0.1, which is the same
 * *site*, so even a SameSite=Strict cookie goes with its requests — tries to
 * archive a model: a fetch in no-cors mode with no body, an empty form, a
 * text/plain form, and a fetch with a JSON body (which needs a preflight). None
 * may archive it, in the open mode nor in token mode with the engineer signed
 * in. The app's own page, in the same browser, archives it. A name re-pointed
 * at the server's address (DNS rebinding, mapped with Chromium's resolver
 * rules) is refused with 421.
 *
 * Without Chromium the suite is skipped with a message (tests/client/e2e.test.ts
 * makes that a failure under SHAFTNET_REQUIRE_BROWSER=1).
 */
import { type ChildProcess, execSync, spawn } from 'node:child_process';
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';

const CHROMIUM = '/usr/bin/chromium';
const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const hasBrowser = fs.existsSync(CHROMIUM);
const TOKEN = 'cross-site-token-0123';
const REBIND = 'rebind.shaftnet.test';

if (!hasBrowser) console.warn(`\n*** SKIPPED the cross-site browser tests: no Chromium at ${CHROMIUM}. ***\n`);

interface Server {
  child: ChildProcess;
  url: string;
  /** Method, path and status of every request the server logged. */
  requests(): Array<{ method: string; url: string; status: number }>;
}

/** Starts the built server with request logging on; resolves once it listens. */
async function startServer(dataDir: string, extra: string[]): Promise<Server> {
  const child = spawn(
    process.execPath,
    ['dist/server/main.js', '--port', '0', '--host', '127.0.0.1', '--data', dataDir, '--rate-limit', '0', '--log-level', 'info', ...extra],
    { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  let out = '';
  child.stdout?.on('data', (chunk: Buffer) => (out += chunk.toString()));
  child.stderr?.on('data', (chunk: Buffer) => (out += chunk.toString()));
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setInterval(() => {
      const m = /listening on (http:\/\/\S+?)\/?\s/.exec(out);
      if (m) {
        clearInterval(timer);
        resolve(m[1]);
      }
    }, 50);
    child.on('exit', (code) => {
      clearInterval(timer);
      reject(new Error(`server exited (${code}): ${out}`));
    });
  });
  const requests = () => {
    const byId = new Map<string, { method: string; url: string }>();
    const done: Array<{ method: string; url: string; status: number }> = [];
    for (const line of out.split('\n')) {
      if (!line.startsWith('{')) continue;
      const entry = JSON.parse(line) as { reqId?: string; req?: { method: string; url: string }; res?: { statusCode: number } };
      if (entry.reqId && entry.req) byId.set(entry.reqId, entry.req);
      if (entry.reqId && entry.res && byId.has(entry.reqId)) done.push({ ...byId.get(entry.reqId)!, status: entry.res.statusCode });
    }
    return done;
  };
  return { child, url, requests };
}

async function stopServer(child: ChildProcess | undefined): Promise<void> {
  if (child && child.exitCode === null) {
    const exited = new Promise((r) => child.once('exit', r));
    child.kill('SIGTERM');
    await exited;
  }
}

/** The other origin: one page, served from another port of 127.0.0.1, that tries to archive a model. */
function attackerPage(target: string, id: string): string {
  const action = `${target}/api/models/${id}/archive`;
  return `<!doctype html><html><head><meta charset="utf-8"><title>elsewhere</title></head><body>
<iframe name="sink1"></iframe><iframe name="sink2"></iframe>
<form id="empty" method="POST" action="${action}" target="sink1"></form>
<form id="plain" method="POST" action="${action}" target="sink2" enctype="text/plain"><input name='{"a":"' value='"}'></form>
<script>
window.attack = async () => {
  const results = {};
  try { await fetch(${JSON.stringify(action)}, { method: 'POST', mode: 'no-cors', credentials: 'include' }); results.noCors = 'sent'; }
  catch (e) { results.noCors = 'failed'; }
  try { const r = await fetch(${JSON.stringify(action)}, { method: 'POST', credentials: 'include', headers: { 'content-type': 'application/json' }, body: '' }); results.json = r.status; }
  catch (e) { results.json = 'blocked'; }
  for (const [form, frame] of [['empty', 'sink1'], ['plain', 'sink2']]) {
    await new Promise((resolve) => {
      const f = document.querySelector('iframe[name=' + frame + ']');
      f.addEventListener('load', resolve, { once: true });
      setTimeout(resolve, 5000);
      document.getElementById(form).submit();
    });
  }
  return results;
};
</script></body></html>`;
}

describe.runIf(hasBrowser)('cross-site requests in Chromium', () => {
  let browser: Browser;
  let attacker: http.Server;
  let attackerUrl = '';
  let attackerHtml = '';

  beforeAll(async () => {
    if (!fs.existsSync(path.join(ROOT, 'dist/server/main.js')) || !fs.existsSync(path.join(ROOT, 'dist/client/index.html'))) {
      execSync('npm run build', { cwd: ROOT, stdio: 'inherit' });
    }
    attacker = http.createServer((_req, res) => {
      res.writeHead(200, { 'content-type': 'text/html; charset=utf-8' });
      res.end(attackerHtml);
    });
    await new Promise<void>((r) => attacker.listen(0, '127.0.0.1', r));
    attackerUrl = `http://127.0.0.1:${(attacker.address() as AddressInfo).port}/`;
    const { chromium } = await import('playwright-core');
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      headless: true,
      args: [
        '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking',
        '--disable-component-update', '--disable-sync',
        // A name of "another site" that resolves to this machine, as a rebinding attack arranges it.
        `--host-resolver-rules=MAP ${REBIND} 127.0.0.1`,
      ],
    });
  });

  afterAll(async () => {
    await browser?.close();
    await new Promise((r) => attacker?.close(r));
  });

  for (const mode of ['open', 'token'] as const) {
    it(`${mode} mode: a page on another port cannot archive a model; the app's own page can`, async () => {
      const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-xsite-'));
      const server = await startServer(dataDir, mode === 'token' ? ['--token', TOKEN] : []);
      const context = await browser.newContext();
      try {
        const auth: Record<string, string> = mode === 'token' ? { authorization: `Bearer ${TOKEN}` } : {};
        const list = await fetch(`${server.url}/api/models`, { headers: auth });
        const id = ((await list.json()) as { models: Array<{ id: string }> }).models[0].id; // a seeded demo
        const archived = async () =>
          ((await (await fetch(`${server.url}/api/models/${id}`, { headers: auth })).json()) as { archived: boolean }).archived;
        expect(await archived()).toBe(false);

        const own: Page = await context.newPage();
        await own.goto(`${server.url}/`);
        if (mode === 'token') {
          // Signed in the way the client does it: the cookie now goes with every request to 127.0.0.1.
          const signIn = await own.evaluate(async (token) => {
            const r = await fetch('/api/session', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ token }) });
            return r.status;
          }, TOKEN);
          expect(signIn).toBe(200);
        }

        attackerHtml = attackerPage(server.url, id);
        const evil = await context.newPage();
        await evil.goto(attackerUrl);
        const results = (await evil.evaluate('window.attack()')) as Record<string, unknown>;
        expect(results.json).toBe('blocked'); // the preflight is never granted
        expect(await archived()).toBe(false);
        // The three attempts that reached the server were refused there (not merely unreadable by the page).
        const tries = () => server.requests().filter((r) => r.method === 'POST' && r.url === `/api/models/${id}/archive`);
        // The server's log reaches this process through a pipe: wait for its lines (5 s at most).
        await expect.poll(() => tries().length, { timeout: 5000 }).toBe(3);
        expect(tries().map((r) => r.status)).toEqual([403, 403, 403]);

        // The app's own page, bodyless and without a content type, as the client sends it.
        const status = await own.evaluate(async (mid) => (await fetch(`/api/models/${mid}/archive`, { method: 'POST' })).status, id);
        expect(status).toBe(200);
        expect(await archived()).toBe(true);
      } finally {
        await context.close();
        await stopServer(server.child);
        fs.rmSync(dataDir, { recursive: true, force: true });
      }
    });
  }

  it('a name re-pointed at the server (DNS rebinding) gets 421 SN_HOST, the page included', async () => {
    const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-xsite-'));
    const server = await startServer(dataDir, []);
    const page = await browser.newPage();
    try {
      const port = new URL(server.url).port;
      for (const p of ['/api/models', '/']) {
        const res = await page.goto(`http://${REBIND}:${port}${p}`);
        expect(res?.status(), p).toBe(421);
        expect(JSON.parse(await res!.text()).error.code).toBe('SN_HOST');
      }
      const ok = await page.goto(`${server.url}/api/health`);
      expect(ok?.status()).toBe(200);
    } finally {
      await page.close();
      await stopServer(server.child);
      fs.rmSync(dataDir, { recursive: true, force: true });
    }
  });
});
