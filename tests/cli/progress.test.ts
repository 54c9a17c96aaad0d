/**
 * The command line's progress bar and Ctrl+C, run from dist/ (npm run build):
 * on a pseudo-terminal (util-linux `script`) the bar appears on stderr and
 * Ctrl+C stops the solve with status 130; in a pipe, or with --quiet, stderr
 * stays empty and the answer is the engine's, byte for byte.
 * No physical number is asserted: the answer is compared with the engine's own
 * JSON of the same model (checked against closed forms elsewhere).
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { solveModelJson } from '../../server/engine/index.js';
import { barLine, LARGE_FILE_BYTES } from '../../server/cli-progress.js';
import { longChain } from '../helpers/long-chain.js';

const bin = new URL('../../dist/server/cli.js', import.meta.url).pathname;
const hasScript = spawnSync('script', ['--version'], { encoding: 'utf8' }).status === 0;
const requirePty = process.env.SHAFTNET_REQUIRE_BROWSER === '1'; // CI has util-linux

let dir: string;
let big: string;
let bigJsonMd5: string;
let mid: string;
let midJsonMd5: string;
const children = new Set<ChildProcess>();

/** Writes the model to `name` and answers its path and the MD5 of the engine's JSON of it (what --json prints). */
function prepare(name: string, model: unknown): [string, string] {
  const file = join(dir, name);
  writeFileSync(file, JSON.stringify(model));
  const h = createHash('md5');
  solveModelJson(model, (t) => h.update(t));
  h.update('\n');
  return [file, h.digest('hex')];
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'shaftnet-cli-progress-'));
  [big, bigJsonMd5] = prepare('big.json', longChain(170_001)); // about 9 MB: solved in the worker thread
  [mid, midJsonMd5] = prepare('mid.json', longChain(100_001)); // about 5.4 MB: inline, over a second with its JSON
});

afterAll(() => {
  for (const c of children) c.kill('SIGKILL');
  rmSync(dir, { recursive: true, force: true });
});

/** Runs a shell command line on a pseudo-terminal; `onOutput` sees the terminal's text so far. */
function onPty(command: string, onOutput?: (text: string, child: ChildProcess) => void): Promise<{ code: number | null; text: string }> {
  // -e: the child's exit status; -f: flush at once; -c: the command; /dev/null: no typescript file.
  const child = spawn('script', ['-qefc', command, '/dev/null'], { stdio: ['pipe', 'pipe', 'pipe'] });
  children.add(child);
  let text = '';
  child.stdout.on('data', (b: Buffer) => {
    text += b.toString('utf8');
    onOutput?.(text, child);
  });
  return new Promise((resolve) =>
    child.on('exit', (code) => {
      children.delete(child);
      resolve({ code, text });
    }),
  );
}

describe('command-line progress', () => {
  it('one model file is large enough for the worker thread, the other is solved inline', () => {
    expect(statSync(big).size).toBeGreaterThan(LARGE_FILE_BYTES);
    expect(statSync(mid).size).toBeLessThan(LARGE_FILE_BYTES);
    expect(existsSync(bin), 'dist/server/cli.js: run npm run build').toBe(true);
  });

  it('in a pipe: no bar on stderr, the answer byte for byte', () => {
    const r = spawnSync(process.execPath, [bin, 'solve', big, '--json'], { maxBuffer: 1 << 30 });
    expect(r.status).toBe(0);
    expect(r.stderr.toString()).toBe('');
    expect(createHash('md5').update(r.stdout).digest('hex')).toBe(bigJsonMd5);
  });

  it.runIf(hasScript || requirePty)('on a terminal: the bar with phase and time left, erased at the end; --quiet: none', async () => {
    const out = join(dir, 'out.json');
    const shown = await onPty(`exec ${process.execPath} ${bin} solve ${mid} --json > ${out}`);
    expect(shown.code).toBe(0);
    expect(shown.text).toMatch(/\rsolving \[[#-]+\] +\d+% {2}(stations|assembly|factorisation|solve|recovery|writing) {2}about \d+ (s|min) left\x1b\[K/);
    expect(shown.text.endsWith('\r\x1b[K')).toBe(true); // erased
    expect(createHash('md5').update(readFileSync(out)).digest('hex')).toBe(midJsonMd5);
    const quiet = await onPty(`exec ${process.execPath} ${bin} solve ${mid} --json --quiet > ${out}`);
    expect(quiet.code).toBe(0);
    expect(quiet.text).toBe('');
  });

  it.runIf(hasScript || requirePty)('Ctrl+C on the terminal stops the solve in the worker thread: status 130, a clean line', async () => {
    let sent = false;
    const r = await onPty(`exec ${process.execPath} ${bin} solve ${big} --json > /dev/null`, (text, child) => {
      if (!sent && text.includes('solving [')) {
        sent = true;
        child.stdin?.write('\x03'); // the terminal's interrupt character: SIGINT to the program
      }
    });
    expect(sent).toBe(true);
    expect(r.code).toBe(130);
    expect(r.text).toMatch(/\r\x1b\[Kstopped: the solve was cancelled \(Ctrl\+C\)\r?\n$/);
  });

  it('the bar line fits the terminal and names the phase (common practice, no source)', () => {
    expect(barLine('reading', 0, 0, 80)).toBe('solving [------------------------------]    0%  reading the model');
    // Writing 60 % done: 0.3 + 0.7 · 0.6 = 72 % overall (the phase shares in progress.ts), 22 of 30
    // marks; 6.5 s so far → 6.5 · 0.28 / 0.72 = 2.53 s left, shown rounded up.
    const line = barLine('writing', 0.6, 6500, 80);
    expect(line).toBe('solving [######################--------]   72%  writing  about 3 s left');
    expect(barLine('writing', 0.6, 6500, 40).length).toBeLessThanOrEqual(39);
  });
});
