#!/usr/bin/env node
/**
 * The command line.
 *
 *   shaftnet solve <model.json> [--units si|us] [--json | --csv] [--dense] [--combination ID]
 *   shaftnet demo [--units si|us] [--json | --csv]
 *   shaftnet serve [server options]        (see server/http/API.md)
 *   shaftnet keys add|list|revoke ...      (server/cli-keys.ts)
 *   shaftnet backup | restore ...          (server/cli-backup.ts)
 *   shaftnet migrate --from DIR --to postgres://… [--force]   (server/cli-migrate.ts)
 *
 * Exit status: 0 solved, 2 the model is invalid or cannot be solved (the
 * message names the field or the shafts), 130 stopped by Ctrl+C, 1 anything else.
 * On a terminal a long solve shows a progress bar on stderr (cli-progress.ts).
 */
import { readFileSync, realpathSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { dirname, join } from 'node:path';
import { ModelError } from '../shared-types/errors.js';
import { UNIT_SYSTEMS, isUnitSystem, writeStationCsv, type UnitSystem } from '../shared-types/present.js';
import { loadLpSolver, normaliseModel, SolveAborted, solveModel, solveModelJson, withSolved, type SolveProgress } from './engine/index.js';
import { cliMain, EXIT_INTERRUPTED, isCliWorker } from './cli-progress.js';
import { formatCombinationsReport, formatIssue, formatReport, solvedStationColumns } from './report.js';

const USAGE = `usage:
  shaftnet solve <model.json> [--units si|us] [--json | --csv] [--dense] [--combination ID]
  shaftnet demo [--units si|us] [--json | --csv]
  shaftnet serve [--port N] [--host H] [--data DIR] [--token T] ...
  shaftnet keys add NAME --role editor|checker|approver --data DIR | keys list | keys revoke ID|NAME
  shaftnet backup --data DIR --out FILE | shaftnet restore --data DIR --from FILE
  shaftnet migrate --from DIR --to postgres://… [--force]   copy a library into PostgreSQL, then check it

  --units si|us   tables and CSV in mm, N*m, MPa (si, default) or in, lbf*in, ksi (us)
  --json          print the solution object (SI units, compact JSON) instead of tables
  --csv           print the station table as CSV (units named in its header)
  --dense         solve with the dense reference solver (small models only)
  --combination ID  a model with load cases: that combination's full tables (and its
                  stations in --csv, the single-state fields of --json); without it the
                  tables show every combination and the envelope, --csv and --json the first
  --quiet         no progress bar (it shows only on a terminal, for a solve over half a second)`;

/** Where the shipped demo models live, from src or from dist. */
export function demoDirectory(): string {
  const here = dirname(fileURLToPath(import.meta.url));
  const candidates = [join(here, 'demos'), join(here, '..', '..', 'server', 'demos')];
  for (const c of candidates) {
    try {
      readFileSync(join(c, 'mixer-drive.json'));
      return c;
    } catch {
      // try the next
    }
  }
  return candidates[0];
}

interface SolveArgs {
  file: string | null;
  units: UnitSystem;
  output: 'tables' | 'json' | 'csv';
  dense: boolean;
  combination?: string;
}

function parseSolveArgs(args: string[], needFile: boolean): SolveArgs {
  const out: SolveArgs = { file: null, units: 'si', output: 'tables', dense: false };
  for (let k = 0; k < args.length; k++) {
    const a = args[k];
    if (a === '--units' || a.startsWith('--units=')) {
      const v = a === '--units' ? args[++k] : a.slice(8);
      if (!isUnitSystem(v)) throw new UsageError(`--units takes ${UNIT_SYSTEMS.join(' or ')}, not ${v ?? 'nothing'}`);
      out.units = v;
    } else if (a === '--json') out.output = 'json';
    else if (a === '--csv') out.output = 'csv';
    else if (a === '--dense') out.dense = true;
    else if (a === '--quiet') continue; // read by cli-progress.ts
    else if (a === '--combination' || a.startsWith('--combination=')) {
      const v = a === '--combination' ? args[++k] : a.slice(14);
      if (!v) throw new UsageError('--combination takes the id of a combination');
      out.combination = v;
    }
    else if (a.startsWith('-')) throw new UsageError(`unknown option ${a}`);
    else if (out.file === null) out.file = a;
    else throw new UsageError(`one model file at a time (got ${out.file} and ${a})`);
  }
  if (needFile && out.file === null) throw new UsageError('name the model file, e.g. shaftnet solve model.json');
  return out;
}

class UsageError extends Error {}

/**
 * Runs the command line; answers the exit status. `out` and `err` take whole
 * lines; `write`, when given, takes the raw text of --json and --csv, which
 * are written in pieces (a million-station answer is longer than one string
 * can be); without it that text goes to `out` in one piece.
 */
export async function runCli(
  argv: string[],
  out: (s: string) => void,
  err: (s: string) => void,
  write?: (text: string) => void,
  progress?: SolveProgress,
): Promise<number> {
  const [command, ...rest] = argv;
  let model: unknown;
  try {
    if (command === 'serve') {
      const { serveFromArgs } = await import('./main.js');
      await serveFromArgs(rest);
      return 0;
    }
    if (command === 'keys') return await (await import('./cli-keys.js')).runKeys(rest, out, err);
    if (command === 'backup' || command === 'restore') return await (await import('./cli-backup.js')).runBackup(command, rest, out, err);
    if (command === 'migrate') {
      const { migrateFromArgs } = await import('./cli-migrate.js');
      return await migrateFromArgs(rest, out, err);
    }
    if (command !== 'solve' && command !== 'demo') {
      err(command === undefined || command === '--help' || command === '-h' ? USAGE : `unknown command ${command}\n${USAGE}`);
      return command === '--help' || command === '-h' ? 0 : 1;
    }
    const args = parseSolveArgs(rest, command === 'solve');
    const path = command === 'demo' ? join(demoDirectory(), 'mixer-drive.json') : (args.file as string);
    let text: string;
    try {
      text = readFileSync(path, 'utf8');
    } catch (e) {
      err(`cannot read ${path}: ${(e as NodeJS.ErrnoException).code ?? String(e)}`);
      return 1;
    }
    try {
      model = JSON.parse(text);
    } catch (e) {
      err(`${path}: not valid JSON (${(e as Error).message})`);
      return 2;
    }
    const options = { solver: args.dense ? ('dense' as const) : ('sparse' as const), combination: args.combination, lp: await loadLpSolver(), progress };
    if (args.output === 'tables') {
      const solution = solveModel(model, options);
      const all = solution.combinations !== undefined && args.combination === undefined;
      out((all ? formatCombinationsReport : formatReport)(model as { name?: string }, solution, args.units));
      return 0;
    }
    // JSON and CSV are written from the solve's columns, in pieces: no object per station, and a
    // million-station answer is longer than one string can be.
    let collected = '';
    const pieces = write ?? ((piece: string) => void (collected += piece));
    // Small pieces: a writer that packs them into bytes (see `byteWriter`) never holds a long string.
    const pieceChars = write ? 1 << 16 : Infinity;
    if (args.output === 'json') {
      // The engine writes the JSON itself: the same text as JSON.stringify of the solution object.
      solveModelJson(model, pieces, options, pieceChars);
      pieces('\n');
    } else {
      const resolved = normaliseModel(model);
      withSolved(resolved, options, (solved) => writeStationCsv(solvedStationColumns(solved), args.units, pieces, write ? 0 : Infinity));
    }
    if (!write) out(collected.endsWith('\n') ? collected.slice(0, -1) : collected);
    return 0;
  } catch (e) {
    if (e instanceof SolveAborted) return EXIT_INTERRUPTED;
    if (e instanceof UsageError) {
      err(`${e.message}\n${USAGE}`);
      return 1;
    }
    if (e instanceof ModelError) {
      for (const issue of e.issues) err(formatIssue(issue, model));
      return 2;
    }
    err(`error: ${(e as Error).message}`);
    return 1;
  }
}

/**
 * A writer that packs text into byte buffers of `size` and hands each full one
 * to `emit` (`end` hands over the rest). Text written row by row goes into
 * bytes at once, so no long string is built, joined and encoded again; each
 * buffer is new, so `emit` may keep it.
 */
export function byteWriter(emit: (bytes: Buffer) => void, size = 1 << 20): { write(text: string): void; end(): void } {
  let buf = Buffer.allocUnsafe(size);
  let used = 0;
  const flush = () => {
    if (used > 0) emit(buf.subarray(0, used));
    buf = Buffer.allocUnsafe(size);
    used = 0;
  };
  return {
    write(text: string) {
      if (used + 3 * text.length > size) {
        flush();
        if (3 * text.length > size) {
          emit(Buffer.from(text, 'utf8'));
          return;
        }
      }
      used += buf.write(text, used, 'utf8');
    },
    end: flush,
  };
}

const isMain = process.argv[1] !== undefined && fileURLToPath(import.meta.url) === realpathSync(process.argv[1]);
// The run itself, inline or (a large model) in a worker thread running this program again: cli-progress.ts.
if (isMain || isCliWorker()) await cliMain(import.meta.url, runCli, byteWriter);
