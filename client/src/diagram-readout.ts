/**
 * Reading a diagram at any z: the diagrams are exact at their points (a jump is
 * two points at one z, and distributed torques add interior points where the
 * lines curve), so between two points the value is read on the straight line
 * between them.
 */

/**
 * The value of a diagram at `at` (same unit as `z`): on the line between the
 * two points around it; at a jump, the value just before it (z−). Null outside
 * the diagram or for an empty one.
 */
export function valueAt(z: readonly number[], values: readonly number[], at: number): number | null {
  const n = Math.min(z.length, values.length);
  if (n === 0 || !(at >= z[0] && at <= z[n - 1])) return null;
  if (n === 1) return values[0];
  for (let i = 0; i + 1 < n; i++) {
    const z0 = z[i];
    const z1 = z[i + 1];
    if (at < z0 || at > z1) continue;
    if (z1 === z0) return values[i];
    const t = (at - z0) / (z1 - z0);
    return values[i] + t * (values[i + 1] - values[i]);
  }
  return values[n - 1];
}

/** A cursor moved by a key: ← → by a hundredth of the length (a tenth with Shift), Home and End to the ends. */
export function stepCursor(key: string, shift: boolean, at: number | null, zMin: number, zMax: number): number | null {
  const span = zMax - zMin;
  const from = at ?? zMin;
  const step = span / (shift ? 10 : 100);
  const clamp = (x: number) => Math.min(zMax, Math.max(zMin, x));
  switch (key) {
    case 'ArrowRight':
    case 'ArrowUp':
      return clamp(from + step);
    case 'ArrowLeft':
    case 'ArrowDown':
      return clamp(from - step);
    case 'Home':
      return zMin;
    case 'End':
      return zMax;
    default:
      return null;
  }
}
