/**
 * The calculation sheet's small pieces: HTML escaping, the two ways numbers are printed, and the
 * canonical model JSON with its SHA-256.
 *
 * Numbers. A value that enters a formula as given (an input converted to SI, a radius d/2) is printed
 * exactly: the shortest decimal that reads back as the same double (`String(x)`), so a checker who
 * types it gets the engine's number. A value the sheet derives (J, k, τ) is printed with
 * SHEET_DIGITS significant digits, trailing zeros kept, so its precision is visible; where it feeds a
 * later formula, that printed value is substituted (a hand check redoes the chain from the page).
 *
 * Canonical model JSON: the stored model (as typed) serialised with the keys of every object sorted
 * by UTF-16 code units (JavaScript's default sort), arrays in their order, no whitespace, strings and
 * numbers exactly as JSON.stringify writes them; the hash is SHA-256 of its UTF-8 bytes, in lower-case
 * hex. Any program that sorts keys and drops whitespace the same way gets the same hash.
 */
import { createHash } from 'node:crypto';

/** Significant digits of a derived value on the sheet. */
export const SHEET_DIGITS = 6;

/** Text made safe inside HTML elements and double-quoted attributes. */
export function esc(text: unknown): string {
  return String(text).replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}

/** An input value exactly (shortest round-trip decimal); "—" for none. */
export function exact(x: number | null | undefined): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return String(x);
}

/** A derived value to SHEET_DIGITS significant digits, trailing zeros kept; exponent form outside [1e-3, 1e6). "—" for none. */
export function sig(x: number | null | undefined, digits = SHEET_DIGITS): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  if (x === 0) return '0';
  const abs = Math.abs(x);
  if (abs >= 1e-3 && abs < 1e6) {
    const t = x.toPrecision(digits);
    if (!t.includes('e')) return t;
  }
  return x.toExponential(digits - 1).replace('e+', 'e');
}

/** The value a printed number stands for (what a checker reads back). */
export function printed(text: string): number {
  return Number(text);
}

/** The canonical JSON text of a value (sorted keys, no whitespace); see the header. */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== 'object') return JSON.stringify(value) ?? 'null';
  if (Array.isArray(value)) return '[' + value.map((v) => (v === undefined ? 'null' : canonicalJson(v))).join(',') + ']';
  const obj = value as Record<string, unknown>;
  const keys = Object.keys(obj)
    .filter((k) => obj[k] !== undefined)
    .sort();
  return '{' + keys.map((k) => JSON.stringify(k) + ':' + canonicalJson(obj[k])).join(',') + '}';
}

/** SHA-256 (lower-case hex) of the canonical JSON of a model. */
export function modelHash(model: unknown): string {
  return createHash('sha256').update(canonicalJson(model), 'utf8').digest('hex');
}
