/**
 * Small file systems for the storage-fault tests: a tmpfs mounted on a temp
 * directory, where the test process may mount (root with CAP_SYS_ADMIN, as on
 * the development machine). A container that refuses `mount` makes
 * `mountTmpfs` answer false, and each test says what it does instead.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';

/** Mounts a tmpfs of `size` (e.g. "1m") with extra `options` (e.g. "ro") on `dir`; false where mount is refused. */
export function mountTmpfs(dir: string, size: string, options: string[] = []): boolean {
  if (process.platform !== 'linux') return false;
  const r = spawnSync('mount', ['-t', 'tmpfs', '-o', ['size=' + size, 'mode=0755', ...options].join(','), 'tmpfs', dir], { stdio: 'ignore' });
  return r.status === 0;
}

/** Unmounts what mountTmpfs mounted (lazily, if a file is still open there). */
export function unmount(dir: string): void {
  if (spawnSync('umount', [dir], { stdio: 'ignore' }).status !== 0) spawnSync('umount', ['-l', dir], { stdio: 'ignore' });
}

/**
 * Writes `file` until the file system has no byte left (ENOSPC at 1-byte
 * writes); returns the bytes written. Deleting the file gives the space back.
 */
export function fillDisk(file: string): number {
  const fd = fs.openSync(file, 'w');
  let written = 0;
  try {
    for (const chunk of [65536, 4096, 1]) {
      const buf = Buffer.alloc(chunk, 0x5a);
      for (;;) {
        try {
          written += fs.writeSync(fd, buf);
        } catch (err) {
          if ((err as NodeJS.ErrnoException).code === 'ENOSPC') break;
          throw err;
        }
      }
    }
  } finally {
    fs.closeSync(fd);
  }
  return written;
}

/** Free bytes (for an unprivileged writer) on the file system holding `dir`. */
export function freeBytes(dir: string): number {
  const s = fs.statfsSync(dir);
  return s.bavail * s.bsize;
}
