/**
 * Personal keys: their text form, and the slow hash of their secrets.
 *
 * A key reads `snk_<keyId>_<secret>`: the key id (10 symbols of the model-id
 * alphabet, which has no `_`, so the first `_` after it ends it) names the
 * stored row; the secret is 256 random bits in base64url (43 symbols). Only
 * scrypt(secret, per-key salt) is stored (node:crypto; N = 2^14, r = 8, p = 1:
 * 16 MiB and some tens of milliseconds per check, common practice, no source),
 * so a copy of the library holds no usable key. The key is shown once, by
 * `shaftnet keys add`; nothing else ever prints or logs it.
 */
import { randomBytes, scrypt, timingSafeEqual } from 'node:crypto';
import type { KeyRole } from '../../shared-types/library.js';
import type { KeyRecord, NewKey } from './store.js';

/** The id alphabet of models (no l, o, 0, 1, and no `_`). */
const KEY_ID_ALPHABET = 'abcdefghijkmnpqrstuvwxyz23456789';
const KEY_ID_LENGTH = 10;

/** What a key looks like; group 1 is the key id, group 2 the secret. */
export const KEY_PATTERN = /^snk_([a-z0-9]{8,12})_([A-Za-z0-9_-]{43})$/;

/** scrypt's cost: N (CPU and memory), r (block size), p (parallelism). */
export const SCRYPT_PARAMS = { N: 1 << 14, r: 8, p: 1 } as const;
/** Bytes of the hash and of the salt. */
const HASH_BYTES = 32;
const SALT_BYTES = 16;

export const ROLES: readonly KeyRole[] = ['editor', 'checker', 'approver'];

export function isRole(text: string): text is KeyRole {
  return (ROLES as readonly string[]).includes(text);
}

/** The key id and secret of a text shaped like a key, or null. */
export function parseKey(text: string): { id: string; secret: string } | null {
  const m = KEY_PATTERN.exec(text);
  return m ? { id: m[1], secret: m[2] } : null;
}

/** Why a name cannot be a key's name (it becomes the author of saves and the name in the sign-off), or null. */
export function keyNameProblem(name: string): string | null {
  const trimmed = name.trim();
  if (trimmed.length === 0) return 'a key needs a name (the person who holds it)';
  if (trimmed.length > 100) return 'a key name has at most 100 characters';
  if (trimmed !== name) return 'a key name neither begins nor ends with a space';
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u001f\u007f]/.test(name)) return 'a key name has no control characters';
  return null;
}

function scryptAsync(secret: string, salt: Buffer, params: { N: number; r: number; p: number }): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    scrypt(secret, salt, HASH_BYTES, { ...params, maxmem: 256 * params.N * params.r }, (err, key) => (err ? reject(err) : resolve(key))),
  );
}

function readParams(text: string): { N: number; r: number; p: number } | null {
  const [N, r, p] = text.split(',').map(Number);
  return [N, r, p].every((v) => Number.isInteger(v) && v > 0) ? { N, r, p } : null;
}

/** A new key for `name` with `role`: the text to show once, and the row to store. */
export async function makeKey(name: string, role: KeyRole, now: Date = new Date()): Promise<{ key: string; record: NewKey }> {
  const idBytes = randomBytes(KEY_ID_LENGTH);
  let id = '';
  for (const b of idBytes) id += KEY_ID_ALPHABET[b & 31];
  const secret = randomBytes(32).toString('base64url');
  const salt = randomBytes(SALT_BYTES);
  const hash = await scryptAsync(secret, salt, SCRYPT_PARAMS);
  return {
    key: `snk_${id}_${secret}`,
    record: {
      id,
      name,
      role,
      created: now.toISOString(),
      salt: salt.toString('base64url'),
      hash: hash.toString('base64url'),
      params: `${SCRYPT_PARAMS.N},${SCRYPT_PARAMS.r},${SCRYPT_PARAMS.p}`,
    },
  };
}

/** True when `secret` hashes to the stored hash (constant-time comparison). */
export async function secretMatches(secret: string, record: Pick<KeyRecord, 'salt' | 'hash' | 'params'>): Promise<boolean> {
  const params = readParams(record.params);
  if (params === null) return false;
  const stored = Buffer.from(record.hash, 'base64url');
  const given = await scryptAsync(secret, Buffer.from(record.salt, 'base64url'), params);
  return stored.length === given.length && timingSafeEqual(stored, given);
}
