/**
 * Plain-text report and CSV station table of a solution, for the command line.
 * Pure: strings in, strings out.
 */
import type { Solution } from '../shared-types/solution.js';
import { fromSI } from '../shared-types/quantity.js';

export type UnitSystem = 'si' | 'us';

interface Display {
  readonly length: string;
  readonly torque: string;
  readonly stress: string;
  readonly force: string;
  readonly twistRate: string;
}

const DISPLAY: Record<UnitSystem, Display> = {
  si: { length: 'mm', torque: 'N*m', stress: 'MPa', force: 'N', twistRate: 'deg/m' },
  us: { length: 'in', torque: 'lbf*in', stress: 'ksi', force: 'lbf', twistRate: 'deg/ft' },
};

const LBF = 0.45359237 * 9.80665; // N, exact by definition

/** The cautions every report carries. */
export const CAUTIONS = [
  'Linear-elastic Saint-Venant torsion of circular sections: no yielding, warping or buckling.',
  'No stress concentration (keyways, shoulders, press fits) or fatigue unless you modelled it.',
  'Results must be checked by a qualified engineer against the codes and standards that apply locally.',
];

function num(v: number, digits = 4): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-3) return v.toExponential(digits - 1);
  return v.toPrecision(digits).replace(/(\.\d*?)0+$/, '$1').replace(/\.$/, '');
}

function table(head: string[], rows: string[][]): string {
  const widths = head.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: string[]) => cells.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  return [line(head), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

/** Readable tables: reactions, connections, per-segment peaks, checks, warnings, cautions. */
export function formatReport(model: { name?: string }, s: Solution, units: UnitSystem): string {
  const u = DISPLAY[units];
  const L = (m: number) => num(fromSI(m, u.length));
  const T = (nm: number) => num(fromSI(nm, u.torque));
  const S = (pa: number) => num(fromSI(pa, u.stress));
  const F = (n: number) => num(units === 'us' ? n / LBF : n);
  const deg = (rad: number) => num((rad * 180) / Math.PI);
  const out: string[] = [];
  out.push(`${s.name || model.name || 'model'}  (${s.stats.stations} stations, ${s.stats.unknowns} unknowns)`, '');
  out.push('Reactions (torque the support puts on the shaft)');
  out.push(
    table(
      ['support', 'shaft', 'kind', `torque [${u.torque}]`, 'rotation [deg]'],
      s.reactions.map((r) => [r.support, r.shaft, r.kind, T(r.torque), deg(r.rotation)]),
    ),
    '',
  );
  if (s.gearMeshes.length > 0) {
    out.push('Gear meshes');
    out.push(
      table(
        ['mesh', `force [${u.force}]`, `torque on a [${u.torque}]`, `torque on b [${u.torque}]`],
        s.gearMeshes.map((g) => [g.gearMesh, F(g.force), T(g.torqueA), T(g.torqueB)]),
      ),
      '',
    );
  }
  if (s.couplings.length > 0) {
    out.push('Couplings');
    out.push(
      table(
        ['coupling', `torque on a [${u.torque}]`, `torque on b [${u.torque}]`, 'twist [deg]'],
        s.couplings.map((c) => [c.coupling, T(c.torqueA), T(c.torqueB), deg(c.twist)]),
      ),
      '',
    );
  }
  out.push('Segments (peak |T| and the largest shear stress in each layer)');
  const rows: string[][] = [];
  for (const sh of s.shafts) {
    for (const seg of sh.segments) {
      seg.layers.forEach((l, k) => {
        rows.push([
          k === 0 ? `${sh.id}[${seg.index}]` : '',
          k === 0 ? `${L(seg.from)}-${L(seg.to)}` : '',
          k === 0 ? T(seg.maxAbsTorque) : '',
          k === 0 ? L(seg.governingZ) : '',
          l.material,
          S(l.maxShear),
          l.allowableShear === null ? '-' : S(l.allowableShear),
          l.utilisation === null ? '-' : num(l.utilisation, 3),
          k === 0 ? num(fromSI(seg.maxTwistRate, u.twistRate)) : '',
          k === 0 ? deg(seg.twist) : '',
        ]);
      });
    }
  }
  out.push(
    table(
      [
        'segment',
        `z [${u.length}]`,
        `max |T| [${u.torque}]`,
        `at z [${u.length}]`,
        'layer',
        `max tau [${u.stress}]`,
        `allowable [${u.stress}]`,
        'util.',
        `twist rate [${u.twistRate}]`,
        'twist [deg]',
      ],
      rows,
    ),
    '',
  );
  out.push('Total twist per shaft (max rotation - min rotation)');
  out.push(table(['shaft', 'twist [deg]'], s.shafts.map((sh) => [sh.id, deg(sh.totalTwist)])), '');
  if (s.checks.length > 0) {
    out.push('Checks, worst first');
    out.push(
      table(
        ['check', 'where', 'utilisation', 'result'],
        s.checks.map((c) => [
          c.kind,
          `${c.shaft}${c.segment === undefined ? '' : `[${c.segment}]`}${c.material ? ` ${c.material}` : ''}`,
          num(c.utilisation, 3),
          c.pass ? 'ok' : 'EXCEEDS',
        ]),
      ),
      '',
    );
  }
  out.push(`Equilibrium: largest |sum of torques| on a shaft = ${num(s.equilibrium.maxResidual, 2)} N*m`);
  for (const w of s.warnings) out.push(`warning ${w.code}: ${w.message}`);
  out.push('', ...CAUTIONS.map((c) => `Caution: ${c}`));
  return out.join('\n');
}

/** Station table as CSV, SI units. */
export function stationCsv(s: Solution): string {
  const lines = ['shaft,z_m,rotation_rad,torque_left_Nm,torque_right_Nm'];
  for (const sh of s.shafts) {
    for (const st of sh.stations) {
      lines.push([sh.id, st.z, st.rotation, st.torqueLeft ?? '', st.torqueRight ?? ''].join(','));
    }
  }
  return lines.join('\n');
}
