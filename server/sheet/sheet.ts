/**
 * The calculation sheet: one self-contained, print-ready HTML page for a model and its solution,
 * written for a checker who redoes the numbers by hand. Pure: the model as typed, the solution the
 * server's solve path answered, and the stored revision's facts go in; one HTML string comes out.
 * No script, no external asset: the route serves it under `default-src 'none'`.
 *
 * Sections: header (model, revision, author, time, software version, SHA-256 of the canonical model
 * JSON), scope and assumptions, every input as typed, the method with each equation and its source,
 * the unknowns and redundants, every segment worked with the numbers substituted, each shaft's
 * equilibrium with its residual, results, checks, load cases and combinations, overload, dynamics
 * (when the solution carries them), warnings, cautions, sign-off.
 */
import type { Model } from '../../shared-types/model.js';
import { CAUTIONS } from '../../shared-types/present.js';
import type { CheckResult, Solution } from '../../shared-types/solution.js';
import { esc, exact, modelHash, sig } from './format.js';
import { segmentLength, segmentWork, si } from './segments.js';
import { raisersWork } from './raisers.js';
import { SHEET_CSS } from './style.js';

/** One entry of a revision's review history (issue 13's review states). */
export interface SheetReviewEntry {
  readonly state: string;
  readonly by: string;
  readonly at: string;
  readonly note: string | null;
}

/** The stored revision a sheet is for; null for an unsaved model. */
export interface SheetRevision {
  readonly id: string;
  readonly revision: number;
  readonly author: string;
  readonly message: string;
  readonly created: string;
  /** Present once the review states exist on the server. */
  readonly review?: { readonly state: string; readonly history: readonly SheetReviewEntry[] };
}

/** Dynamics results (contract names), typed here loosely: the sheet prints them when present. */
interface DynamicsParts {
  readonly modes?: ReadonlyArray<{ frequency: number }>;
  readonly crossings?: ReadonlyArray<{ mode: number; order: number; speed: number; inRange: boolean }>;
  readonly forcedResponse?: { segments?: ReadonlyArray<{ item: string; peakTorque?: number; peakSpeed?: number; peakShear?: number }> };
}

export interface SheetInput {
  readonly model: Model;
  readonly solution: Solution & DynamicsParts;
  readonly revision: SheetRevision | null;
  /** Software version (package.json). */
  readonly version: string;
  /** When the sheet was made, ISO 8601 UTC. */
  readonly generated: string;
}

/** Tables longer than this many rows start on a new page. */
const BIG_TABLE_ROWS = 25;
/** At most this many segments are worked line by line (all of them are in the results table). */
const MAX_WORKED_SEGMENTS = 1000;
/** At most this many checks are listed (worst first, as the solution orders them). */
const MAX_CHECKS = 500;

function table(head: readonly string[], rows: readonly string[][], numeric: ReadonlySet<number> = new Set()): string {
  const cls = rows.length > BIG_TABLE_ROWS ? ' class="big"' : '';
  return `<table${cls}><thead><tr>${head.map((h) => `<th>${h}</th>`).join('')}</tr></thead><tbody>${rows
    .map((r) => `<tr>${r.map((c, i) => (numeric.has(i) ? `<td class="n">${c}</td>` : `<td>${c}</td>`)).join('')}</tr>`)
    .join('')}</tbody></table>`;
}

const nums = (...i: number[]) => new Set(i);

/** A typed value as the user wrote it. */
function typed(v: unknown): string {
  if (v === undefined) return '';
  if (typeof v === 'string') return esc(v);
  if (typeof v === 'number') return esc(String(v));
  return esc(JSON.stringify(v));
}

function leaves(value: unknown, prefix: string, out: Map<string, unknown>): void {
  if (Array.isArray(value)) value.forEach((v, i) => leaves(v, `${prefix}[${i}]`, out));
  else if (value !== null && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) leaves(v, prefix === '' ? k : `${prefix}.${k}`, out);
  } else out.set(prefix, value);
}

/** A list of items as a table: one row per item, one column per field (nested fields by path). */
function itemsTable(items: readonly unknown[]): string {
  const rows = items.map((item) => {
    const m = new Map<string, unknown>();
    leaves(item, '', m);
    return m;
  });
  const cols: string[] = [];
  for (const r of rows) for (const k of r.keys()) if (!cols.includes(k)) cols.push(k);
  return table(cols.map(esc), rows.map((r) => cols.map((c) => typed(r.get(c)))));
}

function header(input: SheetInput, hash: string): string {
  const { model, revision } = input;
  const rows: Array<[string, string]> = [
    ['Model', esc(model.name)],
    ['Revision', revision ? `${esc(revision.id)} · revision ${revision.revision}` : 'unsaved (not in the library)'],
    ['Author', revision ? esc(revision.author) : '—'],
    ['Saved', revision ? esc(revision.created) : '—'],
    ['Message', revision ? esc(revision.message) || '—' : '—'],
    ['Review state', revision?.review ? esc(revision.review.state) : revision ? 'prepared' : '—'],
    ['Sheet made', esc(input.generated)],
    ['Software', `Shaftnet ${esc(input.version)}`],
    ['Model SHA-256', `<span class="hash" data-hash="sha256">${hash}</span>`],
  ];
  return `<h1>Calculation sheet: ${esc(model.name)}</h1>
<table class="head"><tbody>${rows.map(([k, v]) => `<tr><td>${k}</td><td>${v}</td></tr>`).join('')}</tbody></table>
<p class="muted">The SHA-256 is of the canonical model JSON: the model as typed, keys of every object sorted, no whitespace, UTF-8.</p>`;
}

function scope(model: Model): string {
  return `<h2>Scope and assumptions</h2>
<p>Statically indeterminate torsion of ${model.shafts.length} shaft${model.shafts.length === 1 ? '' : 's'}: linear-elastic Saint-Venant torsion, each shaft a straight axis z from 0 at its start; one rotation φ(z) per station. Signs: right-hand rule about each shaft's own +z for torques, rotations and reactions; a reaction is the torque the support puts on the shaft.</p>
<p>Uniform and tapered segments, piecewise-linear distributed torque: the nodal solution with consistently integrated loads is exact, and T(z), φ(z), τ inside a segment follow in closed form (no mesh refinement). Rigid supports, meshes and couplings are exact constraints, not stiff springs.</p>
<p>All substituted numbers below are in SI base units (m, N, Pa, rad). Inputs are printed exactly as converted; derived values to 6 significant digits, and a derived value that feeds a later line is substituted as printed.</p>
${model.notes ? `<p><b>Notes:</b> ${esc(model.notes)}</p>` : ''}`;
}

const LISTS = ['materials', 'sections', 'supports', 'torques', 'distributedTorques', 'gearMeshes', 'couplings', 'discs', 'stressRaisers', 'loadCases', 'combinations'] as const;

function inputs(model: Model): string {
  const parts: string[] = ['<h2>Inputs (as typed)</h2>', '<p class="muted">A plain number is in SI base units; a string is the value and unit as the author typed it.</p>'];
  parts.push('<h3>shafts</h3>');
  for (const sh of model.shafts) {
    parts.push(`<p><b>${esc(sh.id)}</b>${sh.name ? ` (${esc(sh.name)})` : ''}</p>`);
    parts.push(table(['segment', 'length', 'section', 'sectionEnd', 'material'], sh.segments.map((s, i) => [String(i), typed(s.length), typed(s.section), typed(s.sectionEnd), typed(s.material)])));
  }
  for (const list of LISTS) {
    const items = model[list] as readonly unknown[] | undefined;
    if (!items || items.length === 0) continue;
    parts.push(`<h3>${list}</h3>`, itemsTable(items));
  }
  if (model.limits) parts.push('<h3>limits</h3>', itemsTable([model.limits]));
  return parts.join('\n');
}

function method(model: Model): string {
  const shapes = new Set(model.sections.map((s) => s.shape));
  const tapered = model.shafts.some((s) => s.segments.some((g) => g.sectionEnd !== undefined));
  const items: string[] = [
    'Saint-Venant torsion of circular bars: T = G J dφ/dz, τ = T r / J, J = π/32 (d⁴ − dᵢ⁴); bonded concentric layers share dφ/dz, so T = dφ/dz · Σ G<sub>i</sub> J<sub>i</sub> and τ<sub>i</sub> = G<sub>i</sub> r T / ΣGJ. Source: Gere &amp; Goodno, <i>Mechanics of Materials</i>, torsion of circular bars.',
    'Each uniform segment is a torsional spring k = G J / L between its end stations (stiffness method): K φ = f with K assembled from the springs, consistent loads from the distributed torques; fixed supports, rigid meshes and rigid couplings eliminated exactly as constraints (φ = α x + β); then T = k (φ<sub>end</sub> − φ<sub>start</sub>) and the reactions. Statically indeterminate torsional members: Gere &amp; Goodno, <i>Mechanics of Materials</i>, §3.8.',
  ];
  if (model.gearMeshes?.length || model.couplings?.length)
    items.push(
      'Gear mesh: g = r<sub>a</sub> φ<sub>a</sub> − s r<sub>b</sub> φ<sub>b</sub> − offset (s = −1 for "opposite", +1 for "same"); compliant: F = stiffness · g, torque −F r<sub>a</sub> on shaft a and +s F r<sub>b</sub> on shaft b. Coupling: c = φ<sub>a</sub> − φ<sub>b</sub> − misfit, torque −k c on a, +k c on b.',
    );
  if (tapered) items.push('Tapered segment: flexibility ∫ dz / (G J(z)) with the exact shape function; solid taper k = 3π G d<sub>A</sub>³ d<sub>B</sub>³ / (32 L (d<sub>A</sub>² + d<sub>A</sub> d<sub>B</sub> + d<sub>B</sub>²)). Source: Gere &amp; Goodno, tapered bar in torsion.');
  if (shapes.has('rectangle') || shapes.has('ellipse'))
    items.push('Rectangle: exact Saint-Venant series, J = β h b³, β = ⅓ (1 − (192/π⁵)(b/h) Σ<sub>n odd</sub> tanh(nπh/2b)/n⁵), peak stress at the middle of the long side; ellipse: J = π a³ c³/(a² + c²), τ = 2T/(π a c²). Source: Timoshenko &amp; Goodier, <i>Theory of Elasticity</i>, torsion.');
  if (shapes.has('rectangularTube')) items.push('Closed thin wall (Bredt–Batho) on the wall\'s centre line: J = 4 A<sub>m</sub>² t / s, τ = T / (2 A<sub>m</sub> t).');
  if (shapes.has('thinOpen')) items.push('Thin open section: J = Σ b t³ / 3, τ<sub>max</sub> = T t<sub>max</sub> / J; restrained warping not modelled.');
  if (model.stressRaisers?.some((r) => r.kind === 'shoulder'))
    items.push('Shoulder fillet: K<sub>ts</sub> = C1 + C2 (2h/D) + C3 (2h/D)² + C4 (2h/D)³, h = (D − d)/2, valid for 0.25 ≤ h/r ≤ 4, τ<sub>nom</sub> = 16 T / (π d³). Source: Pilkey &amp; Pilkey, <i>Peterson\'s Stress Concentration Factors</i>, 3rd ed., torsion of a stepped round bar with a shoulder fillet (Chart 3.12 as public copies of the fit cite it).');
  if (model.materials.some((m) => m.shearYield !== undefined))
    items.push('Overload: first yield from the elastic solution, τ = k |T<sub>0</sub> + λ T<sub>1</sub>| = τ<sub>y</sub>; plastic collapse by the lower-bound theorem of plasticity as a linear program: the largest λ for which some torque distribution is in equilibrium with λ · loads and |T| ≤ T<sub>p</sub> everywhere (solid T<sub>p</sub> = 2π τ<sub>y</sub> c³ / 3).');
  if (model.loadCases) items.push('Load cases and combinations: a combination is the factored sum of its cases plus the assembled state (prescribed rotations, misfits, offsets), exactly: one factorisation, one right-hand side per combination.');
  return `<h2>Method</h2><ol>${items.map((i) => `<li>${i}</li>`).join('')}</ol>`;
}

function indeterminacy(model: Model, solution: Solution): string {
  const supports = model.supports?.length ?? 0;
  const meshes = model.gearMeshes?.length ?? 0;
  const couplings = model.couplings?.length ?? 0;
  const unknowns = supports + meshes + couplings;
  const equations = model.shafts.length;
  const degree = unknowns - equations;
  return `<h2>Unknowns and redundants</h2>
<p>Rule: each support carries one unknown reaction torque, each gear mesh one unknown tangential force, each coupling one unknown torque; each shaft gives one independent equation, moment equilibrium about its axis. Degree of static indeterminacy = unknowns − equations.</p>
<p class="eq" data-eq="degree">unknowns = ${supports} supports + ${meshes} meshes + ${couplings} couplings = ${unknowns}; equations = ${equations} shafts; redundants = ${unknowns} − ${equations} = <b>${degree}</b></p>
<p>The stiffness method solved for ${solution.stats.unknowns} unknown rotations (${solution.stats.stations} stations, less those fixed by constraints).</p>`;
}

function segmentsWorked(input: SheetInput): string {
  const parts = ['<h2>Segments: section properties, stiffness, governing stress</h2>'];
  let worked = 0;
  const total = input.solution.shafts.reduce((n, sh) => n + sh.segments.length, 0);
  if (total > MAX_WORKED_SEGMENTS) parts.push(`<p>${total} segments: the first ${MAX_WORKED_SEGMENTS} are worked here; every segment's J, k, peak torque and stress are in the results table.</p>`);
  for (const sh of input.solution.shafts) {
    for (const seg of sh.segments) {
      if (++worked > MAX_WORKED_SEGMENTS) break;
      parts.push(`<div class="segment"><h3>${esc(sh.id)}[${seg.index}] · section ${esc(seg.section)}${seg.sectionEnd ? ` → ${esc(seg.sectionEnd)}` : ''} · z = ${exact(seg.from)} … ${exact(seg.to)} m, L = ${exact(segmentLength(input.model, sh.id, seg.index) ?? seg.to - seg.from)} m</h3>
${segmentWork(input.model, sh, seg)}</div>`);
    }
  }
  const raisers = raisersWork(input.model, input.solution);
  if (raisers) parts.push(raisers);
  return parts.join('\n');
}

/** The loads of one load case (or all without cases) times their factors, by the combination shown. */
function loadFactor(model: Model, solution: Solution): (loadCase: string | undefined) => number {
  if (!model.loadCases) return () => 1;
  const shown = solution.combination;
  const combo = model.combinations?.find((c) => c.id === shown);
  if (combo) return (c) => (c !== undefined ? combo.factors[c] ?? 0 : 0);
  return (c) => (c === shown ? 1 : 0);
}

function equilibrium(input: SheetInput): string {
  const { model, solution } = input;
  const factor = loadFactor(model, solution);
  const parts = [
    '<h2>Equilibrium of each shaft</h2>',
    `<p>On every shaft: applied torques + reactions + mesh and coupling torques = 0. The residual is the engine's |Σ| per shaft.${solution.combination ? ` Loads of combination "${esc(solution.combination)}".` : ''}</p>`,
  ];
  for (const sh of model.shafts) {
    const terms: Array<[string, number]> = [];
    for (const t of model.torques ?? []) {
      if (t.shaft !== sh.id) continue;
      const f = factor(t.case);
      if (f === 0) continue;
      const T = t.torque !== undefined ? si(t.torque, 'torque') : (si(t.power, 'power') ?? NaN) / (si(t.speed, 'angularSpeed') ?? NaN);
      terms.push([`torque ${esc(t.id)}${f !== 1 ? ` × ${f}` : ''}`, (T ?? NaN) * f]);
    }
    for (const d of model.distributedTorques ?? []) {
      if (d.shaft !== sh.id) continue;
      const f = factor(d.case);
      if (f === 0) continue;
      const total = (((si(d.start, 'torquePerLength') ?? NaN) + (si(d.end, 'torquePerLength') ?? NaN)) / 2) * ((si(d.to, 'length') ?? NaN) - (si(d.from, 'length') ?? NaN));
      terms.push([`distributed ${esc(d.id)} (t<sub>start</sub> + t<sub>end</sub>)/2 · (to − from)${f !== 1 ? ` × ${f}` : ''}`, total * f]);
    }
    for (const r of solution.reactions) if (r.shaft === sh.id) terms.push([`reaction ${esc(r.support)}`, r.torque]);
    for (const g of solution.gearMeshes) {
      const m = model.gearMeshes?.find((x) => x.id === g.gearMesh);
      if (m?.a.shaft === sh.id) terms.push([`mesh ${esc(g.gearMesh)} (a)`, g.torqueA]);
      if (m?.b.shaft === sh.id) terms.push([`mesh ${esc(g.gearMesh)} (b)`, g.torqueB]);
    }
    for (const c of solution.couplings) {
      const m = model.couplings?.find((x) => x.id === c.coupling);
      if (m?.a.shaft === sh.id) terms.push([`coupling ${esc(c.coupling)} (a)`, c.torqueA]);
      if (m?.b.shaft === sh.id) terms.push([`coupling ${esc(c.coupling)} (b)`, c.torqueB]);
    }
    const sum = terms.reduce((s, [, v]) => s + v, 0);
    const residual = solution.equilibrium.shafts.find((x) => x.shaft === sh.id)?.residual;
    parts.push(`<h3>${esc(sh.id)}</h3>`);
    parts.push(table(['term', 'torque, N·m'], [...terms.map(([k, v]) => [k, sig(v)]), ['<b>Σ</b>', `<b>${sig(sum)}</b>`], ['residual (engine)', sig(residual)]], nums(1)));
  }
  parts.push(`<p>Largest residual over all shafts: ${sig(solution.equilibrium.maxResidual)} N·m.</p>`);
  return parts.join('\n');
}

function results(input: SheetInput): string {
  const s = input.solution;
  const parts = ['<h2>Results</h2>'];
  if (s.reactions.length) {
    parts.push('<h3>Reactions</h3>', table(['support', 'shaft', 'kind', 'torque, N·m', 'rotation, rad'], s.reactions.map((r) => [esc(r.support), esc(r.shaft), r.kind, sig(r.torque), sig(r.rotation)]), nums(3, 4)));
  }
  const segRows: string[][] = [];
  for (const sh of s.shafts) {
    for (const seg of sh.segments) {
      for (const [i, l] of seg.layers.entries()) {
        segRows.push([
          i === 0 ? `${esc(sh.id)}[${seg.index}]` : '',
          i === 0 ? sig(seg.torsionConstant) : '',
          i === 0 ? sig(seg.stiffness) : '',
          i === 0 ? sig(seg.maxAbsTorque) : '',
          i === 0 ? sig(seg.twist) : '',
          esc(l.material),
          sig(l.maxShear),
          l.utilisation === null ? '—' : sig(l.utilisation, 3),
        ]);
      }
    }
  }
  parts.push('<h3>Segments</h3>', table(['segment', 'J, m⁴', 'k, N·m/rad', 'max |T|, N·m', 'twist, rad', 'layer', 'max τ, Pa', 'utilisation'], segRows, nums(1, 2, 3, 4, 6, 7)));
  parts.push(table(['shaft', 'length, m', 'total twist, rad'], s.shafts.map((sh) => [esc(sh.id), exact(sh.length), sig(sh.totalTwist)]), nums(1, 2)));
  if (s.gearMeshes.length)
    parts.push('<h3>Gear meshes</h3>', table(['mesh', 'force F, N', 'torque on a, N·m', 'torque on b, N·m', 'gap g, m'], s.gearMeshes.map((g) => [esc(g.gearMesh), sig(g.force), sig(g.torqueA), sig(g.torqueB), sig(g.gap)]), nums(1, 2, 3, 4)));
  if (s.couplings.length)
    parts.push('<h3>Couplings</h3>', table(['coupling', 'torque on a, N·m', 'torque on b, N·m', 'twist c, rad'], s.couplings.map((c) => [esc(c.coupling), sig(c.torqueA), sig(c.torqueB), sig(c.twist)]), nums(1, 2, 3)));
  if (s.stressRaisers?.length)
    parts.push(
      '<h3>Stress raisers (local peaks)</h3>',
      table(
        ['raiser', 'shaft', 'z, m', 'K<sub>ts</sub>', 'nominal τ, Pa', 'local peak = K<sub>ts</sub> · τ, Pa', 'utilisation'],
        s.stressRaisers.map((r) => [esc(r.id), esc(r.shaft), exact(r.z), sig(r.factor), sig(r.nominalShear), sig(r.localPeak), r.utilisation === null ? '—' : sig(r.utilisation, 3)]),
        nums(2, 3, 4, 5, 6),
      ),
    );
  return parts.join('\n');
}

function checkRow(c: CheckResult): string[] {
  const where = `${esc(c.shaft)}${c.segment !== undefined ? `[${c.segment}]` : ''}${c.material ? ` ${esc(c.material)}` : ''}${c.raiser ? ` (${esc(c.raiser)})` : ''}`;
  return [c.kind, where, sig(c.value), sig(c.limit), sig(c.utilisation, 3), c.pass ? '<span class="pass">pass</span>' : '<span class="fail">FAIL</span>'];
}

function checks(s: Solution): string {
  if (s.checks.length === 0) return '<h2>Checks</h2><p>No checks: the model gives no allowable stress and no twist limits.</p>';
  const shown = s.checks.slice(0, MAX_CHECKS);
  const failed = s.checks.filter((c) => !c.pass).length;
  return `<h2>Checks</h2><p>${s.stats.checksEvaluated} checks evaluated, ${failed} failed${s.checks.length > shown.length ? `; the worst ${shown.length} listed` : ''}. Utilisation = value / limit; pass when ≤ 1.</p>
${table(['check', 'where', 'value', 'limit', 'utilisation', 'result'], shown.map(checkRow), nums(2, 3, 4))}`;
}

function cases(s: Solution): string {
  const parts: string[] = [];
  if (s.combinations?.length) {
    parts.push('<h2>Load cases and combinations</h2>');
    if (s.combination) parts.push(`<p>The segments, equilibrium, results and checks above show combination "${esc(s.combination)}".</p>`);
    const supports = s.combinations[0].reactions.map((r) => r.support);
    parts.push(
      '<h3>Reactions per combination, N·m</h3>',
      table(['combination', ...supports.map(esc), 'residual, N·m'], s.combinations.map((c) => [esc(c.id), ...supports.map((id) => sig(c.reactions.find((r) => r.support === id)?.torque)), sig(c.equilibrium.maxResidual)]), nums(...supports.map((_, i) => i + 1), supports.length + 1)),
    );
    const failed = s.combinations.map((c) => [esc(c.id), String(c.checks.length), String(c.checks.filter((x) => !x.pass).length)]);
    parts.push(table(['combination', 'checks', 'failed'], failed, nums(1, 2)));
  }
  if (s.envelope) {
    parts.push('<h3>Envelope</h3>', table(['support', 'min, N·m', 'in', 'max, N·m', 'in'], s.envelope.reactions.map((r) => [esc(r.support), sig(r.min), esc(r.minCombination), sig(r.max), esc(r.maxCombination)]), nums(1, 3)));
    const rows: string[][] = [];
    for (const sh of s.envelope.shafts) for (const seg of sh.segments) for (const l of seg.layers) rows.push([`${esc(sh.id)}[${seg.index}]`, esc(l.material), sig(l.maxShear), l.utilisation === null ? '—' : sig(l.utilisation, 3), esc(l.combination)]);
    parts.push(table(['segment', 'layer', 'worst τ, Pa', 'utilisation', 'governing combination'], rows, nums(2, 3)));
  }
  if (s.overload) {
    const o = s.overload;
    parts.push(
      '<h2>Overload</h2>',
      `<p class="eq" data-eq="first-yield">first yield factor λ<sub>y</sub> = <b>${o.firstYieldFactor === null ? 'omitted (see the warnings)' : sig(o.firstYieldFactor)}</b>${o.firstYield ? ` at ${esc(o.firstYield.shaft)}, z = ${o.firstYield.z === null ? 'the whole segment' : exact(o.firstYield.z) + ' m'}, layer ${esc(o.firstYield.layer)}` : ''}</p>`,
      `<p class="eq" data-eq="collapse">collapse factor λ<sub>c</sub> = <b>${o.collapseFactor !== null ? sig(o.collapseFactor) : o.firstYieldFactor === null ? 'omitted (see the warnings)' : 'no collapse mechanism'}</b>${o.plasticAt.length ? `; fully plastic at ${o.plasticAt.map((p) => `${esc(p.shaft)} z = ${exact(p.z)} m`).join(', ')}` : ''}</p>`,
    );
  }
  return parts.join('\n');
}

function dynamics(s: SheetInput['solution']): string {
  if (!s.modes && !s.crossings && !s.forcedResponse) return '';
  const parts = ['<h2>Dynamics</h2>'];
  if (s.modes?.length) parts.push('<h3>modes</h3>', table(['mode', 'frequency, Hz'], s.modes.map((m, i) => [String(i + 1), sig(m.frequency)]), nums(1)));
  if (s.crossings?.length)
    parts.push('<h3>crossings</h3>', table(['mode', 'order', 'speed, rad/s', 'speed, rpm', 'in range'], s.crossings.map((c) => [String(c.mode), String(c.order), sig(c.speed), sig((c.speed * 60) / (2 * Math.PI)), c.inRange ? '<span class="fail">yes</span>' : 'no']), nums(2, 3)));
  if (s.forcedResponse?.segments?.length)
    parts.push('<h3>forcedResponse</h3>', table(['item', 'peak torque, N·m', 'at speed, rad/s'], s.forcedResponse.segments.map((x) => [esc(x.item), sig(x.peakTorque), sig(x.peakSpeed)]), nums(1, 2)));
  return parts.join('\n');
}

function warningsAndCautions(s: Solution): string {
  const w = s.warnings.length ? `<h3>Warnings</h3><ul>${s.warnings.map((x) => `<li>${esc(x.code)}: ${esc(x.message)}</li>`).join('')}</ul>` : '';
  return `<h2>Warnings and cautions</h2>${w}<ul class="cautions">${CAUTIONS.map((c) => `<li>${esc(c)}</li>`).join('')}</ul>`;
}

function signOff(revision: SheetRevision | null): string {
  const history = revision?.review?.history ?? [];
  const last = (state: string): SheetReviewEntry | undefined => [...history].reverse().find((h) => h.state === state);
  const prepared = last('prepared') ?? (revision ? { state: 'prepared', by: revision.author, at: revision.created, note: null } : undefined);
  const rows = (['prepared', 'checked', 'approved'] as const).map((state) => {
    const e = state === 'prepared' ? prepared : last(state);
    return [state, e ? esc(e.by) : '', e ? esc(e.at) : '', e?.note ? esc(e.note) : ''];
  });
  const returned = last('returned');
  if (returned) rows.push(['returned', esc(returned.by), esc(returned.at), esc(returned.note ?? '')]);
  return `<h2>Sign-off</h2>${revision ? '' : '<p class="muted">Unsaved model: no revision, so no review. Save it to have it checked and approved.</p>'}
<table class="signoff"><thead><tr><th>state</th><th>by</th><th>when (UTC)</th><th>note</th></tr></thead><tbody>${rows
    .map((r) => `<tr data-state="${r[0]}">${r.map((c) => `<td>${c}</td>`).join('')}</tr>`)
    .join('')}</tbody></table>`;
}

/** The whole sheet as one HTML document. */
export function renderSheet(input: SheetInput): string {
  const hash = modelHash(input.model);
  const title = `${input.model.name} — ${input.revision ? `revision ${input.revision.revision}` : 'unsaved'} — calculation sheet`;
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${esc(title)}</title><style>${SHEET_CSS}</style></head>
<body>
${header(input, hash)}
${scope(input.model)}
${inputs(input.model)}
${method(input.model)}
${indeterminacy(input.model, input.solution)}
${segmentsWorked(input)}
${equilibrium(input)}
${results(input)}
${checks(input.solution)}
${cases(input.solution)}
${dynamics(input.solution)}
${warningsAndCautions(input.solution)}
${signOff(input.revision)}
</body></html>
`;
}
