/**
 * `shaftnet keys add NAME --role editor|checker|approver --data DIR`,
 * `shaftnet keys list --data DIR [--json]`, `shaftnet keys revoke ID|NAME --data DIR`.
 *
 * `add` prints the new key once, alone on standard output (a script can take it
 * with `$(...)`); the library keeps only its scrypt hash. A running server sees
 * a new key or a revocation at the key's next use: no restart.
 */
import fs from 'node:fs';
import path from 'node:path';
import { isRole, keyNameProblem, makeKey, ROLES } from './store/keys.js';
import { DATABASE_FILE, LibraryOpenError } from './store/sqlite-store.js';
import { KeyNameTakenError, type KeyInfo } from './store/store.js';
import { openLibrary, type AsyncModelStore } from './store/async-store.js';
import { StoreConnectError } from './store/store-errors.js';
import { SchemaRefusedError } from './store/pg-migrations.js';
import { CliUsageError, dataDirOf, parseArgs, type ParsedArgs } from './cli-options.js';

export const KEYS_USAGE = `usage:
  shaftnet keys add NAME --role editor|checker|approver --data DIR | --database postgres://…
  shaftnet keys list --data DIR | --database postgres://… [--json]
  shaftnet keys revoke ID|NAME --data DIR | --database postgres://…

  editor    creates, saves and archives models (a save's author is the key's name)
  checker   an editor who also checks and returns revisions
  approver  a checker who also approves revisions
  The library is the server's: PostgreSQL with --database (or SHAFTNET_DATABASE),
  else the SQLite file in --data (or SHAFTNET_DATA).
  The key is printed once; keep it secret. A library with any key needs one:
  the server then refuses requests without a key (or the team token).`;

/** The library the command names: PostgreSQL with --database, else SQLite in --data (which must hold one unless `mustExist` is false). */
async function opened(p: ParsedArgs, mustExist: boolean): Promise<AsyncModelStore> {
  const database = p.values.get('--database') ?? process.env.SHAFTNET_DATABASE;
  if (database !== undefined && database !== '') return openLibrary({ database, dataDir: '' });
  const dataDir = dataDirOf(p);
  const file = path.join(path.resolve(dataDir), DATABASE_FILE);
  if (mustExist && !fs.existsSync(file)) throw new LibraryOpenError(`there is no library in ${path.resolve(dataDir)} (no ${DATABASE_FILE}); check --data`, file);
  return openLibrary({ dataDir });
}

/** The listing, one key a line. */
export function formatKeys(keys: readonly KeyInfo[]): string {
  if (keys.length === 0) return 'no personal keys';
  const rows = [['id', 'name', 'role', 'created', 'revoked'], ...keys.map((k) => [k.id, k.name, k.role, k.created, k.revoked ?? '-'])];
  const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
  return rows.map((r) => r.map((cell, c) => (c === r.length - 1 ? cell : cell.padEnd(widths[c]))).join('  ')).join('\n');
}

/** Runs `shaftnet keys ...`; answers the exit status (0 done, 1 usage or refusal). */
export async function runKeys(args: readonly string[], out: (s: string) => void, err: (s: string) => void): Promise<number> {
  const [sub, ...rest] = args;
  try {
    if (sub === undefined || sub === '--help' || sub === '-h') {
      err(KEYS_USAGE);
      return sub === undefined ? 1 : 0;
    }
    if (sub === 'add') {
      const p = parseArgs(rest, ['--data', '--database', '--role'], []);
      if (p.positionals.length !== 1) throw new CliUsageError('name the key\'s holder once, e.g. shaftnet keys add "Ann Lee" --role checker --data DIR');
      const name = p.positionals[0];
      const problem = keyNameProblem(name);
      if (problem) throw new CliUsageError(problem);
      const role = p.values.get('--role');
      if (role === undefined || !isRole(role)) throw new CliUsageError(`--role takes ${ROLES.join(', ')}${role === undefined ? '' : `, not ${role}`}`);
      const store = await opened(p, false);
      const { key, record } = await makeKey(name, role);
      try {
        await store.addKey(record);
      } finally {
        await store.close();
      }
      out(key);
      err(`made key ${record.id} for ${name} (role ${role}). It is printed above once: hand it to ${name}; the library keeps only its hash.`);
      return 0;
    }
    if (sub === 'list') {
      const p = parseArgs(rest, ['--data', '--database'], ['--json']);
      if (p.positionals.length > 0) throw new CliUsageError(`keys list takes no ${p.positionals[0]}`);
      const store = await opened(p, true);
      try {
        const keys = await store.keys();
        out(p.flags.has('--json') ? JSON.stringify(keys) : formatKeys(keys));
      } finally {
        await store.close();
      }
      return 0;
    }
    if (sub === 'revoke') {
      const p = parseArgs(rest, ['--data', '--database'], []);
      if (p.positionals.length !== 1) throw new CliUsageError('name the key to revoke once, by id or name');
      const store = await opened(p, true);
      try {
        const revoked = await store.revokeKey(p.positionals[0], new Date().toISOString());
        if (revoked === undefined) {
          err(`no key with id or name ${p.positionals[0]} (revoked keys are named by id); see shaftnet keys list`);
          return 1;
        }
        out(`revoked key ${revoked.id} of ${revoked.name} (${revoked.role}) at ${revoked.revoked}; it stops working at once`);
      } finally {
        await store.close();
      }
      return 0;
    }
    throw new CliUsageError(`unknown keys command ${sub}`);
  } catch (e) {
    if (e instanceof CliUsageError) {
      err(`${e.message}\n${KEYS_USAGE}`);
      return 1;
    }
    if (e instanceof KeyNameTakenError || e instanceof LibraryOpenError || e instanceof StoreConnectError || e instanceof SchemaRefusedError) {
      err(`shaftnet keys: ${e.message}`);
      return 1;
    }
    throw e;
  }
}
