/**
 * The demo models shipped in server/demos/ (invented, labelled as such): read
 * once at startup, listed by /api/demos and seeded into an empty library.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { ModelStore } from '../store/store.js';

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

const SEEDED = 'demosSeeded';

/**
 * On the first start with an empty library, saves each demo as a model, so a
 * new team finds something to open. Runs once: a library emptied later (it
 * cannot be, through the API) or one whose demos were archived stays as it is.
 */
export function seedDemos(store: ModelStore, demos: readonly Demo[]): number {
  if (store.getMeta(SEEDED) !== undefined) return 0;
  let seeded = 0;
  if (store.count() === 0) {
    for (const demo of demos) {
      store.create({ model: demo.model, name: demo.name, author: 'Shaftnet', message: 'Demo model, seeded on first start' });
      seeded++;
    }
  }
  store.setMeta(SEEDED, new Date().toISOString());
  return seeded;
}
