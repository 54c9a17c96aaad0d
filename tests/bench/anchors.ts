/**
 * Where the speed anchors (Python + SciPy scripts doing the same work) are: SHAFTNET_BENCH_DIR,
 * else `../shared/bench` beside the project (a checkout one level deeper, such as a git
 * worktree, finds it one level further up).
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');

export function anchorsDir(): string {
  if (process.env.SHAFTNET_BENCH_DIR) return process.env.SHAFTNET_BENCH_DIR;
  const candidates = [path.resolve(root, '..', 'shared', 'bench'), path.resolve(root, '..', '..', 'shared', 'bench')];
  return candidates.find((c) => fs.existsSync(path.join(c, 'scale_models.py'))) ?? candidates[0];
}
