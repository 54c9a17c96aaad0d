/**
 * The demo models shipped in server/demos/ (invented, labelled as such): read
 * once at startup, listed by /api/demos and seeded into an empty library.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { AsyncModelStore } from '../store/async-store.js';

export interface Demo {
  /** File name without .json. */
  readonly id: string;
  readonly name: string;
  readonly notes: string;
  readonly model: Record<string, unknown>;
}

/** Reads every *.json in `dir`, sorted by id; a file that is not a JSON object stops the server. */
export function loadDemos(dir: string): Demo[] {
  if (!fs.existsSync(dir)) return [];
  return fs
    .readdirSync(dir)
    .filter((f) => f.endsWith('.json'))
    .sort()
    .map((file) => {
      const text = fs.readFileSync(path.join(dir, file), 'utf8');
      let model: unknown;
      try {
        model = JSON.parse(text);
      } catch (err) {
        throw new Error(`demo ${file} is not valid JSON: ${(err as Error).message}`);
      }
      if (model === null || typeof model !== 'object' || Array.isArray(model)) throw new Error(`demo ${file} is not a JSON object`);
      const m = model as Record<string, unknown>;
      return {
        id: file.slice(0, -'.json'.length),
        name: typeof m.name === 'string' ? m.name : file,
        notes: typeof m.notes === 'string' ? m.notes : '',
        model: m,
      };
    });
}

/** The meta flag set once the demos were seeded (or a library was found not empty). */
export const SEEDED = 'demosSeeded';

/**
 * Seeds each demo as a model into a new library, so a new team finds something
 * to open. Once per library, decided inside the library: the demos are created
 * and the flag `demosSeeded` set in one transaction that holds the write lock
 * (BEGIN IMMEDIATE in SQLite, an advisory lock in PostgreSQL), so servers starting together on one new directory seed them
 * exactly once between them, and a start interrupted half-way leaves no demo.
 * Never again afterwards: a library whose demos were archived (nothing can be
 * deleted through the API) or one that held models before the flag existed gets
 * none. Returns how many were created by this call.
 */
export function seedDemos(store: Pick<AsyncModelStore, 'seedOnce'>, demos: readonly Demo[]): Promise<number> {
  return store.seedOnce(
    SEEDED,
    demos.map((demo) => ({ model: demo.model, name: demo.name, author: 'Shaftnet', message: 'Demo model, seeded on first start' })),
  );
}
