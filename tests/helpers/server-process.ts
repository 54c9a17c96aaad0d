/** A real server process for tests that need one (durability, start-up): started, awaited, killed. */
import { spawn, type ChildProcess } from 'node:child_process';

/** A started server process and the URL it printed (without the trailing slash). */
export interface ServerProcess {
  readonly child: ChildProcess;
  readonly url: string;
}

/**
 * Runs `node <mainJs> ...args` in `cwd`, adds the child to `children` (for the caller's
 * clean-up), and resolves once it prints "listening on <url>"; rejects if it exits first
 * or has not listened within `timeoutMs` (ms).
 */
export function spawnServer(mainJs: string, args: readonly string[], opts: { cwd: string; children: Set<ChildProcess>; timeoutMs: number }): Promise<ServerProcess> {
  const child = spawn(process.execPath, [mainJs, ...args], { cwd: opts.cwd, stdio: ['ignore', 'pipe', 'pipe'] });
  opts.children.add(child);
  return new Promise((resolve, reject) => {
    let out = '';
    let err = '';
    const timer = setTimeout(() => reject(new Error(`server did not start: ${out} ${err}`)), opts.timeoutMs);
    child.stdout!.on('data', (d: Buffer) => {
      out += String(d);
      const m = /listening on (http:\/\/[^\s]+)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve({ child, url: m[1].replace(/\/$/, '') });
      }
    });
    child.stderr!.on('data', (d: Buffer) => (err += String(d)));
    child.on('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server exited (${code}) before listening: ${out} ${err}`));
    });
  });
}

/** Chromium for the browser tests: the machine's own, headless, with the flags this machine needs. */
export async function launchChromium(executablePath: string): Promise<import('playwright-core').Browser> {
  const { chromium } = await import('playwright-core');
  return chromium.launch({
    executablePath,
    headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
}
