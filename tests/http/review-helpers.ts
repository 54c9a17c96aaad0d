/** Shared setup of the review tests: personal keys made straight into a test library. */
import type { KeyRole } from '../../shared-types/library.js';
import { makeKey } from '../../server/store/keys.js';
import type { ModelStore } from '../../server/store/store.js';

/** A new personal key in `store`; answers its text (what `shaftnet keys add` prints) and id. */
export async function addKey(store: ModelStore, name: string, role: KeyRole): Promise<{ key: string; id: string; auth: { authorization: string } }> {
  const { key, record } = await makeKey(name, role);
  store.addKey(record);
  return { key, id: record.id, auth: { authorization: `Bearer ${key}` } };
}

export const json = { 'content-type': 'application/json' };
