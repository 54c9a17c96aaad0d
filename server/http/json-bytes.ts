/**
 * JSON.stringify into bytes, piece by piece. A million-station solution is
 * larger than the longest string V8 can hold (about 512 MiB), so one
 * JSON.stringify call cannot serialise it; this walks the large containers and
 * stringifies the small subtrees whole, gathering 1 MiB buffers. The output is
 * byte-for-byte what JSON.stringify would give.
 */

const CHUNK = 1 << 20; // bytes per gathered buffer
const SMALL = 256; // nodes: a subtree this small is stringified in one call
const BATCH = 65_536; // nodes of small array members stringified in one call

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

/** Serialises a JSON value (no toJSON, no cycles: engine output) to UTF-8 bytes, in one buffer. */
export function jsonToBytes(value: unknown): Buffer {
  const chunks = jsonToChunks(value);
  return chunks.length === 1 ? chunks[0] : Buffer.concat(chunks);
}

/**
 * Serialises a JSON value to UTF-8 bytes as a list of buffers (about 1 MiB
 * each), whose concatenation is the JSON text: a large answer is sent chunk by
 * chunk and never copied into one block.
 */
export function jsonToChunks(value: unknown): Buffer[] {
  const buffers: Buffer[] = [];
  let pending = '';
  const flush = () => {
    if (pending.length === 0) return;
    buffers.push(Buffer.from(pending, 'utf8'));
    pending = '';
  };
  const push = (s: string) => {
    pending += s;
    if (pending.length >= CHUNK) flush();
  };
  /** A large piece goes straight to bytes; `inner` drops its enclosing brackets without copying. */
  const pushLarge = (s: string, inner: boolean) => {
    flush();
    const b = Buffer.from(s, 'utf8');
    buffers.push(inner ? b.subarray(1, b.length - 1) : b);
  };
  const emit = (v: unknown): void => {
    if (v === null || typeof v !== 'object' || isSmall(v, { n: SMALL })) {
      push(JSON.stringify(v) ?? 'null');
      return;
    }
    if (Array.isArray(v)) {
      // Runs of small members are stringified a batch at a time (one call per ~64k nodes, not per member).
      push('[');
      let i = 0;
      while (i < v.length) {
        let j = i;
        let nodes = 0;
        while (j < v.length && nodes < BATCH) {
          const budget = { n: SMALL };
          if (!isSmall(v[j], budget)) break;
          nodes += SMALL - budget.n;
          j++;
        }
        if (i > 0) push(',');
        if (j > i) {
          // JSON.stringify writes null for undefined members of an array, as it should
          const text = JSON.stringify(i === 0 && j === v.length ? v : v.slice(i, j));
          if (text.length >= 4096) pushLarge(text, true);
          else push(text.slice(1, -1));
          i = j;
        } else {
          emit(v[i]);
          i++;
        }
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
  return buffers;
}
