/**
 * The command line's dynamics tables: the natural frequencies (Hz and rpm) with the parts that hold
 * most of each mode's strain and kinetic energy (where to stiffen, where to add or remove inertia),
 * and the crossings of the modes with the excitation orders of the reference shaft's speed.
 * Pure: values in, strings out.
 */
import type { Solution } from '../shared-types/solution.js';
import { displayUnit, formatNumber, formatValue, type UnitSystem } from '../shared-types/present.js';

/** Energy shares listed per mode: the largest ones. */
const LEADERS = 3;
/** rad/s in one rpm. */
const RPM = (2 * Math.PI) / 60;

function table(head: string[], rows: string[][]): string {
  const widths = head.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: string[]) => cells.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  return [line(head), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

/** "a 62%, b 30%": the largest shares, largest first. */
function leaders(shares: ReadonlyArray<{ item: string; share: number }> | null): string {
  if (shares === null) return '- (rigid-body mode)';
  return [...shares]
    .sort((a, b) => b.share - a.share)
    .slice(0, LEADERS)
    .filter((x) => x.share > 0)
    .map((x) => `${x.item} ${formatNumber(100 * x.share, 3)}%`)
    .join(', ');
}

/** The dynamics tables of a solution with `modes` (empty text without them). */
export function formatDynamicsReport(s: Solution, units: UnitSystem, speedShaft?: string): string {
  if (s.modes === undefined) return '';
  const out: string[] = [];
  out.push('Natural frequencies (exact for the model; linear, small vibration) with the largest energy shares');
  out.push(
    table(
      ['mode', 'f [Hz]', 'f [rpm]', 'strain energy (where to stiffen)', 'kinetic energy (where the inertia moves)'],
      s.modes.map((m, k) => [String(k + 1), formatNumber(m.frequency, 6), formatNumber(m.angularFrequency / RPM, 6), leaders(m.energy.strain), leaders(m.energy.kinetic)]),
    ),
    '',
  );
  const crossings = s.crossings;
  if (crossings !== undefined && crossings.length > 0) {
    out.push(`Crossings: speed of ${speedShaft === undefined ? 'the reference shaft' : `shaft ${speedShaft}`} at which order x speed = a natural frequency`);
    out.push(
      table(
        ['mode', 'order', 'speed [rpm]', 'speed [rad/s]', 'in running range +/- margin'],
        crossings.map((c) => [String(c.mode), formatNumber(c.order, 4), formatNumber(c.speed / RPM, 5), formatNumber(c.speed, 5), c.inRange ? 'YES: resonance, avoid' : 'no']),
      ),
      '',
    );
  }
  const fr = s.forcedResponse;
  if (fr !== undefined) {
    const T = (x: number) => formatValue(x, 'torque', units, 4);
    const S = (x: number) => formatValue(x, 'stress', units, 4);
    const rpm = (x: number) => formatNumber(x / RPM, 5);
    const uT = displayUnit('torque', units);
    const uS = displayUnit('stress', units);
    out.push(`Forced response over the running range (${fr.speeds.length} speeds, peaks refined; damping ratio ${formatNumber(fr.damping, 3)}): vibratory amplitude, all excitations summed`);
    out.push(
      table(
        ['segment', `peak torque [${uT}]`, 'at [rpm]', `peak shear [${uS}]`, 'at [rpm]'],
        fr.segments.map((g) => [g.item, T(g.peakTorque), rpm(g.peakSpeed), S(g.peakShear), rpm(g.peakShearSpeed)]),
      ),
      '',
    );
    if (fr.checks.length > 0) {
      out.push('Peak vibratory + static shear against the allowable, worst first');
      out.push(
        table(
          ['segment', 'layer', `vibratory [${uS}]`, 'at [rpm]', `static [${uS}]`, `sum [${uS}]`, `allowable [${uS}]`, 'util.', 'result'],
          fr.checks.map((c) => [
            `${c.shaft}[${c.segment}]`,
            c.material,
            S(c.vibratory),
            rpm(c.speed),
            c.static === null ? '-' : S(c.static),
            S(c.value),
            S(c.limit),
            formatNumber(c.utilisation, 3),
            c.pass ? 'ok' : 'FAILS',
          ]),
        ),
        '',
      );
    }
  }
  return out.join('\n');
}
