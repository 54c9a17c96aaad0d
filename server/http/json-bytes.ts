/**
 * JSON.stringify into bytes, piece by piece. A million-station solution is
 * larger than the longest string V8 can hold (about 512 MiB), so one
 * JSON.stringify call cannot serialise it; this walks the large containers and
 * stringifies the small subtrees whole, gathering 1 MiB buffers. The output is
 * byte-for-byte what JSON.stringify would give.
 */

const CHUNK = 1 << 20; // bytes per gathered buffer
const SMALL = 256; // nodes: a subtree this small is stringified in one call

/** True when `v` has at most `budget` nodes (cheap: stops counting at the budget). */
function isSmall(v: unknown, budget: { n: number }): boolean {
  if (--budget.n < 0) return false;
  if (v === null || typeof v !== 'object') return true;
  if (Array.isArray(v)) {
    for (const x of v) if (!isSmall(x, budget)) return false;
    return true;
  }
  for (const k in v) if (!isSmall((v as Record<string, unknown>)[k], budget)) return false;
  return true;
}

/** Serialises a JSON value (no toJSON, no cycles: engine output) to UTF-8 bytes. */
export function jsonToBytes(value: unknown): Buffer {
  const buffers: Buffer[] = [];
  let parts: string[] = [];
  let length = 0;
  const push = (s: string) => {
    parts.push(s);
    length += s.length;
    if (length >= CHUNK) flush();
  };
  const flush = () => {
    if (parts.length === 0) return;
    buffers.push(Buffer.from(parts.join(''), 'utf8'));
    parts = [];
    length = 0;
  };
  const emit = (v: unknown): void => {
    if (v === null || typeof v !== 'object' || isSmall(v, { n: SMALL })) {
      push(JSON.stringify(v) ?? 'null');
      return;
    }
    if (Array.isArray(v)) {
      push('[');
      for (let i = 0; i < v.length; i++) {
        if (i > 0) push(',');
        const x = v[i];
        // JSON.stringify writes null for undefined and functions inside arrays
        if (x === undefined || typeof x === 'function' || typeof x === 'symbol') push('null');
        else emit(x);
      }
      push(']');
      return;
    }
    push('{');
    let first = true;
    for (const k of Object.keys(v)) {
      const x = (v as Record<string, unknown>)[k];
      if (x === undefined || typeof x === 'function' || typeof x === 'symbol') continue;
      push((first ? '' : ',') + JSON.stringify(k) + ':');
      first = false;
      emit(x);
    }
    push('}');
  };
  emit(value);
  flush();
  return buffers.length === 1 ? buffers[0] : Buffer.concat(buffers);
}
