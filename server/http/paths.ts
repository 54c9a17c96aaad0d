/**
 * Where the server finds its files, the same from the compiled `dist/server/`
 * and from the TypeScript sources under `server/` (tests run those).
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/** The directory holding Shaftnet's package.json. */
export function packageRoot(): string {
  let dir = path.dirname(fileURLToPath(import.meta.url));
  for (;;) {
    const candidate = path.join(dir, 'package.json');
    if (fs.existsSync(candidate)) {
      try {
        const pkg = JSON.parse(fs.readFileSync(candidate, 'utf8')) as { name?: string };
        if (pkg.name === 'shaftnet') return dir;
      } catch {
        // not ours; keep walking up
      }
    }
    const parent = path.dirname(dir);
    if (parent === dir) throw new Error('cannot find the shaftnet package.json above ' + fileURLToPath(import.meta.url));
    dir = parent;
  }
}

/** The package version, for /api/health. */
export function packageVersion(): string {
  const pkg = JSON.parse(fs.readFileSync(path.join(packageRoot(), 'package.json'), 'utf8')) as { version?: string };
  return pkg.version ?? '0.0.0';
}

/** The built browser client (vite's output). */
export function defaultClientDir(): string {
  return path.join(packageRoot(), 'dist', 'client');
}

/** The demo models (JSON, shipped as sources: tsc does not copy them). */
export function defaultDemosDir(): string {
  return path.join(packageRoot(), 'server', 'demos');
}
