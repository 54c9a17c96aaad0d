/**
 * What the command line prints: the text tables of a solution, an issue as a
 * line, and the station columns of a finished solve for the CSV. Units, number
 * formatting, the CSV itself and the cautions are the presentation module's
 * (shared-types/present.ts), shared with the browser client.
 * Pure: values in, strings out.
 */
import type { ModelIssue } from '../shared-types/errors.js';
import type { Solution } from '../shared-types/solution.js';
import {
  CAUTIONS,
  DISPLAY_UNITS,
  type FieldKind,
  type StationColumns,
  type UnitSystem,
  formatNumber,
  readablePointer,
  stationShear,
  toDisplay,
} from '../shared-types/present.js';
import type { Solved } from './engine/index.js';
import { formatDynamicsReport } from './report-dynamics.js';

function table(head: string[], rows: string[][]): string {
  const widths = head.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: string[]) => cells.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  return [line(head), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

/** Readable tables: reactions, connections, per-segment peaks and stiffness, checks, warnings, cautions. */
export function formatReport(model: { name?: string }, s: Solution, units: UnitSystem): string {
  const u = DISPLAY_UNITS[units];
  const show = (si: number, kind: FieldKind, sig = 4) => formatNumber(toDisplay(si, kind, units), sig);
  const L = (m: number) => show(m, 'length');
  const T = (nm: number) => show(nm, 'torque');
  const S = (pa: number) => show(pa, 'stress');
  const deg = (rad: number) => show(rad, 'angle');
  const out: string[] = [];
  out.push(`${s.name || model.name || 'model'}  (${s.stats.stations} stations, ${s.stats.unknowns} unknowns)`, '');
  if (s.combination !== undefined) {
    const c = s.combinations?.find((x) => x.id === s.combination);
    out.push(`Load combination ${s.combination}${c?.name ? ` (${c.name})` : ''}: the tables below are its results`, '');
  }
  out.push('Reactions (torque the support puts on the shaft)');
  out.push(
    table(
      ['support', 'shaft', 'kind', `torque [${u.torque}]`, `rotation [${u.angle}]`],
      s.reactions.map((r) => [r.support, r.shaft, r.kind, T(r.torque), deg(r.rotation)]),
    ),
    '',
  );
  if (s.gearMeshes.length > 0) {
    out.push('Gear meshes');
    out.push(
      table(
        ['mesh', `force [${u.force}]`, `torque on a [${u.torque}]`, `torque on b [${u.torque}]`],
        s.gearMeshes.map((g) => [g.gearMesh, show(g.force, 'force'), T(g.torqueA), T(g.torqueB)]),
      ),
      '',
    );
  }
  if (s.couplings.length > 0) {
    out.push('Couplings');
    out.push(
      table(
        ['coupling', `torque on a [${u.torque}]`, `torque on b [${u.torque}]`, `twist [${u.angle}]`],
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
          l.utilisation === null ? '-' : formatNumber(l.utilisation, 3),
          k === 0 ? show(seg.maxTwistRate, 'twistRate') : '',
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
        `twist [${u.angle}]`,
      ],
      rows,
    ),
    '',
  );
  out.push(stiffnessTable(s, units), '');
  if (s.stressRaisers !== undefined && s.stressRaisers.length > 0) out.push(raiserTable(s, units), '');
  out.push('Total twist per shaft (max rotation - min rotation)');
  out.push(table(['shaft', `twist [${u.angle}]`], s.shafts.map((sh) => [sh.id, deg(sh.totalTwist)])), '');
  if (s.modes !== undefined) out.push(formatDynamicsReport(s, units, (model as { dynamics?: { speed?: { shaft?: string } } }).dynamics?.speed?.shaft));
  if (s.checks.length > 0) {
    out.push('Checks, worst first');
    out.push(
      table(
        ['check', 'where', 'value', 'limit', 'utilisation', 'result'],
        s.checks.map((c) => {
          const kind: FieldKind = c.kind === 'shear' || c.kind === 'localPeak' ? 'stress' : c.kind === 'twistRate' ? 'twistRate' : c.kind === 'crossing' ? 'angularSpeed' : 'angle';
          return [
            c.kind,
            `${c.shaft}${c.segment === undefined ? '' : `[${c.segment}]`}${c.raiser === undefined ? '' : ` ${c.raiser}`}${c.material ? ` ${c.material}` : ''}${c.mode === undefined ? '' : ` mode ${c.mode} order ${c.order}`}`,
            `${show(c.value, kind)} ${u[kind]}`,
            `${show(c.limit, kind)} ${u[kind]}`,
            formatNumber(c.utilisation, 3),
            c.pass ? 'ok' : c.kind === 'crossing' ? 'RESONANCE' : 'EXCEEDS',
          ];
        }),
      ),
      '',
    );
  }
  out.push(`Equilibrium: largest |sum of torques| on a shaft = ${formatNumber(s.equilibrium.maxResidual, 2)} N*m`);
  if (s.overload) out.push(overloadLine(s.overload, units));
  for (const w of s.warnings) out.push(`warning ${w.code}: ${w.message}`);
  out.push('', ...CAUTIONS.map((c) => `Caution: ${c}`));
  return out.join('\n');
}

/**
 * The overload factors in one line: "Overload: the loads can grow 1.84x to first yield (input at
 * z = 250 mm, layer steel), 2.61x to collapse (fully plastic: input at z = 250 mm)".
 */
export function overloadLine(o: NonNullable<Solution['overload']>, units: UnitSystem): string {
  const u = DISPLAY_UNITS[units];
  const at = (p: { shaft: string; z: number | null }) => (p.z === null ? `${p.shaft}, the whole segment` : `${p.shaft} at z = ${formatNumber(toDisplay(p.z, 'length', units), 4)} ${u.length}`);
  const first =
    o.firstYieldFactor === null || o.firstYield === null
      ? 'no factor to first yield'
      : `${formatNumber(o.firstYieldFactor, 4)}x to first yield (${at(o.firstYield)}, layer ${o.firstYield.layer})`;
  const last =
    o.collapseFactor !== null
      ? `${formatNumber(o.collapseFactor, 4)}x to collapse${o.plasticAt.length ? ` (fully plastic: ${o.plasticAt.map(at).join('; ')})` : ''}`
      : o.collapse === 'omitted'
        ? 'collapse not sought for this combination (see SN_OVERLOAD_OMITTED)'
        : o.firstYieldFactor === null
          ? 'no collapse factor (see the warnings)'
          : 'no collapse mechanism';
  return `Overload: the loads can grow ${first}, ${last}`.replace('can grow no factor', 'have no factor');
}

/**
 * A model with load cases: per combination its reactions, segment peaks and checks, then the
 * envelope (extreme reactions, worst segment torque and layer stress, each with the combination
 * that governs). One combination's full tables: `formatReport` of a solve showing it.
 */
export function formatCombinationsReport(model: { name?: string }, s: Solution, units: UnitSystem): string {
  const u = DISPLAY_UNITS[units];
  const show = (si: number, kind: FieldKind, sig = 4) => formatNumber(toDisplay(si, kind, units), sig);
  const T = (nm: number) => show(nm, 'torque');
  const S = (pa: number) => show(pa, 'stress');
  const util = (x: number | null) => (x === null ? '-' : formatNumber(x, 3));
  const combos = s.combinations ?? [];
  const out: string[] = [];
  out.push(
    `${s.name || model.name || 'model'}  (${s.stats.stations} stations, ${combos.length} load combinations; one combination's full tables: --combination ID)`,
    '',
  );
  for (const c of combos) {
    out.push(`Combination ${c.id}${c.name ? ` (${c.name})` : ''}  (equilibrium: largest |sum of torques| on a shaft = ${formatNumber(c.equilibrium.maxResidual, 2)} N*m)`);
    if (c.overload) out.push(overloadLine(c.overload, units));
    out.push(table(['support', `torque [${u.torque}]`], c.reactions.map((r) => [r.support, T(r.torque)])));
    const rows: string[][] = [];
    for (const g of c.segments) {
      g.layers.forEach((l, k) => {
        rows.push([k === 0 ? `${g.shaft}[${g.index}]` : '', k === 0 ? T(g.maxAbsTorque) : '', l.material, S(l.maxShear), util(l.utilisation), k === 0 ? show(g.twist, 'angle') : '']);
      });
    }
    if (rows.length > 0) out.push(table(['segment', `max |T| [${u.torque}]`, 'layer', `max tau [${u.stress}]`, 'util.', `twist [${u.angle}]`], rows));
    if (c.checks.length > 0) {
      out.push(
        table(
          ['check', 'where', 'utilisation', 'result'],
          c.checks.map((k) => [
            k.kind,
            `${k.shaft}${k.segment === undefined ? '' : `[${k.segment}]`}${k.raiser === undefined ? '' : ` ${k.raiser}`}${k.material ? ` ${k.material}` : ''}`,
            formatNumber(k.utilisation, 3),
            k.pass ? 'ok' : 'EXCEEDS',
          ]),
        ),
      );
    }
    out.push('');
  }
  const env = s.envelope;
  if (env) {
    out.push('Envelope over the combinations: extreme reactions');
    out.push(
      table(
        ['support', `min [${u.torque}]`, 'in', `max [${u.torque}]`, 'in'],
        env.reactions.map((r) => [r.support, T(r.min), r.minCombination, T(r.max), r.maxCombination]),
      ),
      '',
    );
    out.push('Envelope: worst segment torque and layer stress, with the combination that governs');
    const rows: string[][] = [];
    for (const sh of env.shafts) {
      for (const g of sh.segments) {
        g.layers.forEach((l, k) => {
          rows.push([k === 0 ? `${sh.id}[${g.index}]` : '', k === 0 ? T(g.maxAbsTorque) : '', k === 0 ? g.combination : '', l.material, S(l.maxShear), util(l.utilisation), l.combination]);
        });
      }
    }
    out.push(table(['segment', `max |T| [${u.torque}]`, 'in', 'layer', `max tau [${u.stress}]`, 'util.', 'in'], rows), '');
  }
  if (s.modes !== undefined) out.push(formatDynamicsReport(s, units, (model as { dynamics?: { speed?: { shaft?: string } } }).dynamics?.speed?.shaft));
  for (const w of s.warnings) out.push(`warning ${w.code}: ${w.message}`);
  out.push('', ...CAUTIONS.map((c) => `Caution: ${c}`));
  return out.join('\n');
}

/**
 * Per segment: torsion constant J, torsional rigidity Σ G·J, stiffness k, polar moment Ip and
 * torsional modulus Wt (τmax = T/Wt). A round section of one material has Ip = J and Wt = J/r; a
 * layered one has no single Wt ("-"). A tapered segment has a second row for its end section, and
 * its k is the exact 1/∫dz/(G·J(z)).
 */
function stiffnessTable(s: Solution, units: UnitSystem): string {
  const u = DISPLAY_UNITS[units];
  const value = (si: number | null | undefined, kind: FieldKind) => (si === null || si === undefined ? '-' : formatNumber(toDisplay(si, kind, units), 4));
  const head = [
    'segment',
    'section',
    `J [${u.torsionConstant}]`,
    `GJ [${u.torsionalRigidity}]`,
    `k [${u.torsionalStiffness}]`,
    `Ip [${u.areaMoment}]`,
    `Wt [${u.sectionModulus}]`,
  ];
  const rows = s.shafts.flatMap((sh) =>
    sh.segments.flatMap((seg) => {
      const round = seg.torsionalModulus === undefined;
      const single = seg.layers.length === 1;
      const r0 = seg.layers[seg.layers.length - 1].outerRadius;
      const start = [
        `${sh.id}[${seg.index}]`,
        seg.section,
        value(seg.torsionConstant, 'torsionConstant'),
        value(seg.torsionalRigidity, 'torsionalRigidity'),
        value(seg.stiffness, 'torsionalStiffness'),
        value(round ? seg.torsionConstant : seg.polarMoment, 'areaMoment'),
        value(round ? (single ? seg.torsionConstant / r0 : null) : seg.torsionalModulus, 'sectionModulus'),
      ];
      if (seg.sectionEnd === undefined || seg.torsionConstantEnd === undefined) return [start];
      // The end of a taper: Wt = J/r, r from J for a solid end (not shown for a hollow one).
      const JEnd = seg.torsionConstantEnd;
      const rEnd = endRadius(seg.torsionConstant, r0, JEnd);
      return [
        start,
        [
          '  end',
          seg.sectionEnd,
          value(JEnd, 'torsionConstant'),
          value(seg.torsionalRigidityEnd, 'torsionalRigidity'),
          '',
          value(JEnd, 'areaMoment'),
          value(rEnd === null ? null : JEnd / rEnd, 'sectionModulus'),
        ],
      ];
    }),
  );
  return `Segment stiffness and section properties (J: torsion constant; k = GJ/L, of a taper 1/integral(dz/GJ); Ip: polar moment; Wt: modulus, tau max = T/Wt)\n${table(head, rows)}`;
}

/**
 * Outer radius at a taper's end, m, from its J: for a solid ring J = πr⁴/2; for a hollow one the
 * wall is not in the solution, so null (the modulus is then not shown). A solid start has
 * J = πr⁴/2 exactly, which tells the two apart.
 */
function endRadius(J0: number, r0: number, JEnd: number): number | null {
  const solid = Math.abs(J0 - (Math.PI * r0 ** 4) / 2) <= 1e-12 * J0;
  return solid ? ((2 * JEnd) / Math.PI) ** 0.25 : null;
}

/** Stress raisers: the local peak K·τ_nominal beside the nominal stress, checked against the allowable. */
function raiserTable(s: Solution, units: UnitSystem): string {
  const u = DISPLAY_UNITS[units];
  const S = (pa: number) => formatNumber(toDisplay(pa, 'stress', units), 4);
  const head = ['raiser', 'shaft', `z [${u.length}]`, 'Kts', `nominal [${u.stress}]`, `local peak [${u.stress}]`, `allowable [${u.stress}]`, 'util.', 'note'];
  const rows = (s.stressRaisers ?? []).map((r) => [
    `${r.id} (${r.kind})`,
    r.shaft,
    formatNumber(toDisplay(r.z, 'length', units), 4),
    formatNumber(r.factor, 3),
    S(r.nominalShear),
    S(r.localPeak),
    r.allowableShear === null ? '-' : S(r.allowableShear),
    r.utilisation === null ? '-' : formatNumber(r.utilisation, 3),
    r.note ?? '',
  ]);
  return `Stress raisers: local peaks (Kts x nominal on the smaller side); the nominal stresses above are unchanged\n${table(head, rows)}`;
}

/**
 * One issue as the command line prints it: code, pointer, the readable path
 * when the model is at hand, the message, and the shafts or connections named.
 */
export function formatIssue(issue: ModelIssue, model?: unknown): string {
  const where = issue.pointer === '' ? '(model)' : `${issue.pointer} (${readablePointer(model, issue.pointer)})`;
  const shafts = issue.shafts ? ` [shafts: ${issue.shafts.join(', ')}]` : '';
  const connections = issue.connections ? ` [connections: ${issue.connections.join(', ')}]` : '';
  return `${issue.code} ${where}: ${issue.message}${shafts}${connections}`;
}

/**
 * The station columns of a finished solve, read from the engine's columns
 * without an object per station. Valid only inside `withSolved`'s callback,
 * like the columns themselves. The shear at a station is read from the shaft's
 * diagram by the presentation module's rule (`stationShear`), as for a solution object.
 */
export function solvedStationColumns(sv: Solved): StationColumns {
  const { model, layout, rec } = sv;
  const { z, shaftStart } = layout;
  const { phi, TL, TR, diagStart, diagCount, dZ, dTau } = rec;
  const n = layout.dofCount;
  const torqueLeft = new Float64Array(n);
  const torqueRight = new Float64Array(n);
  const shear = new Float64Array(n);
  for (let s = 0; s < model.shafts.length; s++) {
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    for (let d = first; d <= last; d++) {
      // Elements are numbered like stations, one fewer per shaft.
      torqueLeft[d] = d > first ? TR[d - 1 - s] : Number.NaN;
      torqueRight[d] = d < last ? TL[d - s] : Number.NaN;
    }
    stationShear(z, first, last + 1, dZ, dTau, diagStart[s], diagStart[s] + diagCount[s], shear);
  }
  return {
    shafts: model.shafts.map((sh) => sh.id),
    start: shaftStart,
    z,
    rotation: phi,
    torqueLeft,
    torqueRight,
    shear,
  };
}
