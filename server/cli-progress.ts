/**
 * The command line's progress bar and Ctrl+C.
 *
 * A solve is synchronous: while it runs, the thread that runs it reads no
 * signal. So a large model (its file of LARGE_FILE_BYTES or more) is solved
 * in a worker thread running this same program (`runCli` with a progress
 * object), while the main thread draws the bar and takes Ctrl+C: it raises
 * the worker's abort flag (a shared memory word that the engine reads between
 * its steps), the engine stops with SolveAborted, and the program says so and
 * exits with status 130. A smaller model is solved inline, as before: a worker
 * costs a start-up (it loads the program again; measured about 0.35 s on a
 * busy 2-core machine, on a 1 MiB model that took 1 s inline) that such a
 * solve does not need. The bar is drawn inline too (from the engine's reports,
 * a terminal write being synchronous); Ctrl+C then exits 130 once the solve,
 * at most a second or two, is done.
 *
 * The bar: one line on stderr, redrawn in place at most every REDRAW_MS, once
 * the work has run for BAR_AFTER_MS; it names the phase and the time left and
 * is erased when the work ends. Never when stderr is not a terminal, nor with
 * --quiet; stdout is never touched by it.
 */
import { statSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker, isMainThread, parentPort, workerData } from 'node:worker_threads';
import { overallFraction, throttled, type ProgressPhase, type SolveProgress } from './engine/index.js';

/** Bytes of a model file from which it is solved in a worker thread (some 150,000 stations: 1–2 s with its JSON). */
export const LARGE_FILE_BYTES = 8 << 20;
/** ms of work before the bar appears. */
export const BAR_AFTER_MS = 500;
/** ms between two redraws of the bar, at least. */
export const REDRAW_MS = 100;
/** ms the worker may take to stop after Ctrl+C before it is terminated. */
const STOP_GRACE_MS = 2000;
/** Exit status after Ctrl+C (128 + SIGINT, as shells report it). */
export const EXIT_INTERRUPTED = 130;

type RunCli = (
  argv: string[],
  out: (s: string) => void,
  err: (s: string) => void,
  write?: (text: string) => void,
  progress?: SolveProgress,
) => Promise<number>;
type ByteWriter = (emit: (bytes: Buffer) => void, size?: number) => { write(text: string): void; end(): void };

/** What the worker thread is started with. */
interface CliWorkerData {
  readonly shaftnetCli: true;
  readonly argv: string[];
  /** Int32 slot 0: non-zero once Ctrl+C asks the solve to stop. */
  readonly abort: SharedArrayBuffer;
}

/** What the worker tells the main thread. */
type CliMessage =
  | { kind: 'out' | 'err'; text: string }
  | { kind: 'bytes'; bytes: Uint8Array }
  | { kind: 'progress'; phase: ProgressPhase; fraction: number }
  | { kind: 'done'; code: number };

/**
 * The bar's line for `phase` at `fraction` of it, `elapsedMs` into the solve
 * (since its first report: reading the model is not part of the fractions), at
 * most `columns` wide: `solving [#####-----]  43%  recovery  about 3 s left`.
 */
export function barLine(phase: ProgressPhase | 'reading', fraction: number, elapsedMs: number, columns: number): string {
  const overall = phase === 'reading' ? 0 : overallFraction(phase, fraction);
  const pct = `${Math.floor(overall * 100 + 1e-9)}%`.padStart(4); // 1e-9: shares that add up in binary to a hair less
  const name = phase === 'reading' ? 'reading the model' : phase;
  const left = overall >= 0.02 ? `about ${formatSeconds((elapsedMs * (1 - overall)) / overall)} left` : '';
  const tail = `  ${pct}  ${name}${left ? '  ' + left : ''}`;
  const width = Math.max(10, Math.min(30, columns - 'solving [] '.length - tail.length - 1));
  const filled = Math.round(overall * width);
  return `solving [${'#'.repeat(filled)}${'-'.repeat(width - filled)}]${tail}`.slice(0, Math.max(1, columns - 1));
}

function formatSeconds(ms: number): string {
  const s = Math.ceil(ms / 1000);
  return s < 90 ? `${s} s` : `${Math.ceil(s / 60)} min`;
}

/** The bar on a terminal: shown after BAR_AFTER_MS, redrawn at most every REDRAW_MS, erased by `clear`. */
export class TerminalBar {
  private readonly t0 = performance.now();
  private shown = false;
  private lastDraw = -Infinity;
  private phase: ProgressPhase | 'reading' = 'reading';
  private fraction = 0;
  /** performance.now() of the engine's first report. */
  private solveStart = 0;
  private timer: NodeJS.Timeout;

  constructor(private readonly stream: NodeJS.WriteStream) {
    // Also redraws while no report comes (the model being read), for the time shown to move.
    this.timer = setInterval(() => this.draw(), 250);
    this.timer.unref();
  }

  update(phase: ProgressPhase, fraction: number): void {
    if (this.phase === 'reading') this.solveStart = performance.now();
    this.phase = phase;
    this.fraction = fraction;
    this.draw();
  }

  private draw(): void {
    const now = performance.now();
    if (now - this.t0 < BAR_AFTER_MS || now - this.lastDraw < REDRAW_MS) return;
    this.lastDraw = now;
    this.shown = true;
    this.stream.write(`\r${barLine(this.phase, this.fraction, now - this.solveStart, this.stream.columns || 80)}\x1b[K`);
  }

  /** Erases the bar (if it was drawn) and stops redrawing. */
  clear(): void {
    clearInterval(this.timer);
    if (this.shown) this.stream.write('\r\x1b[K');
    this.shown = false;
  }
}

/** True in the worker thread that runs a large solve for the command line (see `cliMain`). */
export function isCliWorker(): boolean {
  return !isMainThread && (workerData as CliWorkerData | undefined)?.shaftnetCli === true;
}

/** Whether `argv` asks for a solve of a model file large enough for a worker thread. */
function largeSolve(argv: string[]): boolean {
  if (argv[0] !== 'solve') return false;
  const file = argv.slice(1).find((a, k, rest) => !a.startsWith('-') && !['--units', '--combination'].includes(rest[k - 1] ?? ''));
  if (file === undefined) return false;
  try {
    return statSync(file).size >= LARGE_FILE_BYTES;
  } catch {
    return false; // runCli says why it cannot read it
  }
}

/**
 * The program's entry: `cliUrl` is the address of the running program (the
 * worker thread runs it again). On the main thread it runs the command,
 * inline or in a worker with the bar; in that worker, it runs the solve.
 */
export async function cliMain(cliUrl: string, runCli: RunCli, byteWriter: ByteWriter): Promise<void> {
  const data = workerData as CliWorkerData | undefined;
  if (!isMainThread) {
    if (data?.shaftnetCli) await workerRole(data, runCli, byteWriter);
    return;
  }
  const argv = process.argv.slice(2);
  const quiet = argv.includes('--quiet');
  const bar = !quiet && process.stderr.isTTY === true && argv[0] !== 'serve';
  if (largeSolve(argv)) {
    process.exitCode = await inWorker(cliUrl, argv, bar);
    return;
  }
  // Inline: a signal is read once the (short) solve is done; stop then with 130.
  const inlineBar = bar ? new TerminalBar(process.stderr) : undefined;
  const onSigint = () => {
    inlineBar?.clear();
    process.exit(EXIT_INTERRUPTED);
  };
  if (argv[0] !== 'serve') process.once('SIGINT', onSigint);
  const stdout = byteWriter((bytes) => process.stdout.write(bytes));
  const code = await runCli(
    argv,
    (s) => process.stdout.write(s.endsWith('\n') ? s : s + '\n'),
    (s) => {
      inlineBar?.clear();
      process.stderr.write(s.endsWith('\n') ? s : s + '\n');
    },
    stdout.write,
    inlineBar ? { report: (phase, fraction) => inlineBar.update(phase, fraction), aborted: false } : undefined,
  );
  inlineBar?.clear();
  stdout.end();
  // `serve` keeps running; everything else ends with its status.
  if (argv[0] !== 'serve' || code !== 0) process.exitCode = code;
}

/** Main thread: runs the solve in a worker, draws the bar, stops the solve on Ctrl+C. */
function inWorker(cliUrl: string, argv: string[], showBar: boolean): Promise<number> {
  const abort = new SharedArrayBuffer(4);
  const flag = new Int32Array(abort);
  const init: CliWorkerData = { shaftnetCli: true, argv, abort };
  const worker = new Worker(fileURLToPath(cliUrl), { workerData: init });
  const bar = showBar ? new TerminalBar(process.stderr) : undefined;
  let interrupted = false;
  return new Promise<number>((resolve) => {
    let settled = false;
    let status = 1;
    const finish = (code: number) => {
      if (settled) return;
      settled = true;
      status = code;
      process.removeListener('SIGINT', onSigint);
      bar?.clear();
      if (interrupted) process.stderr.write('stopped: the solve was cancelled (Ctrl+C)\n');
      // The answer is written before the status is given.
      if (process.stdout.writableLength === 0) resolve(code);
      else process.stdout.once('drain', () => resolve(code));
    };
    const onSigint = () => {
      if (interrupted) {
        // A second Ctrl+C: do not wait.
        void worker.terminate();
        finish(EXIT_INTERRUPTED);
        return;
      }
      interrupted = true;
      Atomics.store(flag, 0, 1);
      setTimeout(() => {
        void worker.terminate();
        finish(EXIT_INTERRUPTED);
      }, STOP_GRACE_MS).unref();
    };
    process.on('SIGINT', onSigint);
    // The reader went away (`| head`): stop the solve, say nothing more.
    process.stdout.on('error', () => {
      Atomics.store(flag, 0, 1);
      void worker.terminate();
      finish(1);
      resolve(status); // no drain will come
    });
    worker.on('message', (m: CliMessage) => {
      switch (m.kind) {
        case 'progress':
          bar?.update(m.phase, m.fraction);
          break;
        case 'bytes':
          process.stdout.write(m.bytes);
          break;
        case 'out':
          process.stdout.write(m.text.endsWith('\n') ? m.text : m.text + '\n');
          break;
        case 'err':
          bar?.clear();
          process.stderr.write(m.text.endsWith('\n') ? m.text : m.text + '\n');
          break;
        case 'done':
          finish(interrupted ? EXIT_INTERRUPTED : m.code);
          break;
      }
    });
    worker.on('error', (e) => {
      process.stderr.write(`error: ${e.message}\n`);
      finish(1);
    });
    worker.on('exit', () => finish(interrupted ? EXIT_INTERRUPTED : 1));
  });
}

/** Worker thread: runs the command with a progress object over the shared flag and the main thread's messages. */
async function workerRole(data: CliWorkerData, runCli: RunCli, byteWriter: ByteWriter): Promise<void> {
  const flag = new Int32Array(data.abort);
  const post = (m: CliMessage, transfer: ArrayBuffer[] = []) => parentPort?.postMessage(m, transfer);
  const progress: SolveProgress = {
    report: throttled((phase, fraction) => post({ kind: 'progress', phase, fraction }), REDRAW_MS),
    get aborted() {
      return Atomics.load(flag, 0) !== 0;
    },
  };
  const stdout = byteWriter((bytes) => {
    // byteWriter hands over a new buffer each time: its memory can be moved, not copied.
    const own = bytes.byteOffset === 0 && bytes.buffer.byteLength >= 1 << 16; // not from Node's small-buffer pool
    const view = new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    post({ kind: 'bytes', bytes: own ? view : new Uint8Array(view) }, own ? [bytes.buffer as ArrayBuffer] : []);
  });
  let code = 1;
  try {
    code = await runCli(
      data.argv,
      (text) => post({ kind: 'out', text }),
      (text) => post({ kind: 'err', text }),
      stdout.write,
      progress,
    );
    stdout.end();
  } catch (e) {
    post({ kind: 'err', text: `error: ${(e as Error).message}` });
  }
  post({ kind: 'done', code });
}
