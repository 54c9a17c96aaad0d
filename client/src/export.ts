/** Files the client writes: the station table as CSV, and downloads. */
import type { Solution } from '../../shared-types/solution.js';
import { type UnitSystem, displayUnit, formatNumber, prettyUnit, toDisplay } from './units.js';

function cell(x: number | null): string {
  return x === null || !Number.isFinite(x) ? '' : formatNumber(x, 8);
}

function quote(s: string): string {
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/**
 * The station table of every shaft as CSV, in the chosen units, one header
 * row: shaft, z, rotation, torque just left and just right of the station.
 */
export function stationsCsv(solution: Solution, system: UnitSystem): string {
  const u = (k: 'length' | 'angle' | 'torque') => prettyUnit(displayUnit(k, system));
  const rows = [[`shaft`, `z [${u('length')}]`, `rotation [${u('angle')}]`, `torque left [${u('torque')}]`, `torque right [${u('torque')}]`].join(',')];
  for (const shaft of solution.shafts) {
    for (const st of shaft.stations) {
      rows.push(
        [
          quote(shaft.id),
          cell(toDisplay(st.z, 'length', system)),
          cell(toDisplay(st.rotation, 'angle', system)),
          cell(st.torqueLeft === null ? null : toDisplay(st.torqueLeft, 'torque', system)),
          cell(st.torqueRight === null ? null : toDisplay(st.torqueRight, 'torque', system)),
        ].join(','),
      );
    }
  }
  return rows.join('\n') + '\n';
}

/** A file name from a model name: letters, digits and dashes. */
export function fileName(name: string, ext: string): string {
  const base = name.trim().toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 60) || 'model';
  return `${base}.${ext}`;
}

/** Offers text as a file download. */
export function download(text: string, name: string, type: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}
