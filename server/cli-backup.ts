/**
 * `shaftnet backup --data DIR --out FILE [--force]` and
 * `shaftnet restore --data DIR --from FILE [--force]` (server/store/sqlite-backup.ts).
 * A backup may be taken while servers run on the library; a restore refuses a
 * library a running server has open.
 */
import { BackupError, backupLibrary, restoreLibrary } from './store/sqlite-backup.js';
import { CliUsageError, dataDirOf, parseArgs } from './cli-options.js';

export const BACKUP_USAGE = `usage:
  shaftnet backup --data DIR --out FILE [--force]    a consistent copy, also while the server runs
  shaftnet restore --data DIR --from FILE [--force]  the copy back as the library (stop the server first)

  --force   backup: replace FILE; restore: replace an existing library (kept beside it,
            renamed shaftnet.sqlite.before-restore-<time>)`;

/** Runs `shaftnet backup` or `shaftnet restore`; answers the exit status (0 done, 1 usage or refusal). */
export async function runBackup(command: 'backup' | 'restore', args: readonly string[], out: (s: string) => void, err: (s: string) => void): Promise<number> {
  try {
    if (args.includes('--help') || args.includes('-h')) {
      err(BACKUP_USAGE);
      return 0;
    }
    const fileOption = command === 'backup' ? '--out' : '--from';
    const p = parseArgs(args, ['--data', fileOption], ['--force']);
    if (p.positionals.length > 0) throw new CliUsageError(`${command} takes no ${p.positionals[0]}`);
    const dataDir = dataDirOf(p);
    const file = p.values.get(fileOption);
    if (file === undefined) throw new CliUsageError(`name the backup file with ${fileOption} FILE`);
    const force = p.flags.has('--force');
    if (command === 'backup') {
      const s = await backupLibrary(dataDir, file, { force });
      out(`backed up ${s.models} models, ${s.revisions} revisions (${s.bytes} bytes) to ${s.file}`);
    } else {
      const s = await restoreLibrary(dataDir, file, { force });
      out(`restored ${s.models} models, ${s.revisions} revisions into ${s.file}${s.replaced ? `; the library it replaced is kept as ${s.replaced}` : ''}`);
    }
    return 0;
  } catch (e) {
    if (e instanceof CliUsageError) {
      err(`${e.message}\n${BACKUP_USAGE}`);
      return 1;
    }
    if (e instanceof BackupError) {
      err(`shaftnet ${command}: ${e.message}`);
      return 1;
    }
    throw e;
  }
}
