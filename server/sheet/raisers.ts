/**
 * The calculation sheet's worked stress raisers: a shoulder's factor from the published fit with
 * every coefficient substituted (the fit as server/engine/stress-raisers.ts cites it: Pilkey &
 * Pilkey, Peterson's Stress Concentration Factors, 3rd ed., torsion of a stepped round bar with a
 * shoulder fillet), and each local peak K · τ_nominal. D and d are read from the typed sections on
 * either side of the shoulder; the nominal stress is the solution's.
 */
import type { Model } from '../../shared-types/model.js';
import type { Solution, StressRaiserResult } from '../../shared-types/solution.js';
import { esc, exact, printed, sig } from './format.js';
import { si } from './segments.js';

/** A printed value as a term after an operator: a negative one in parentheses. */
const term = (text: string) => (text.startsWith('-') ? `(${text})` : text);

const eq = (name: string, body: string) => `<p class="eq" data-eq="${esc(name)}">${body}</p>`;

/** Outer diameter of the typed section of a segment (solid or hollow), m; null for other shapes. */
function outerDiameter(model: Model, shaftId: string, index: number, end: 'start' | 'end'): number | null {
  const seg = model.shafts.find((s) => s.id === shaftId)?.segments[index];
  const id = end === 'end' && seg?.sectionEnd !== undefined ? seg.sectionEnd : seg?.section;
  const sec = model.sections.find((s) => s.id === id);
  return sec && (sec.shape === 'solid' || sec.shape === 'hollow') ? si(sec.d, 'length') : null;
}

/** D and d either side of a station, m. */
function diameters(model: Model, solution: Solution, r: StressRaiserResult): { D: number; d: number } | null {
  const shaft = solution.shafts.find((s) => s.id === r.shaft);
  if (!shaft) return null;
  const left = shaft.segments.find((s) => s.to === r.z);
  const right = shaft.segments.find((s) => s.from === r.z);
  if (!left || !right) return null;
  const a = outerDiameter(model, r.shaft, left.index, 'end');
  const b = outerDiameter(model, r.shaft, right.index, 'start');
  if (a === null || b === null) return null;
  return { D: Math.max(a, b), d: Math.min(a, b) };
}

function shoulderLines(model: Model, solution: Solution, r: StressRaiserResult, lines: string[]): string {
  const typed = model.stressRaisers?.find((x) => x.id === r.id);
  const fillet = si(typed?.fillet, 'length');
  const dd = diameters(model, solution, r);
  if (fillet === null || !dd) {
    lines.push(eq('kts', `K<sub>ts</sub> = <b>${sig(r.factor)}</b> <span class="at">(shoulder fit)</span>`));
    return sig(r.factor);
  }
  const { D, d } = dd;
  const h = (D - d) / 2;
  const hr = sig(h / fillet);
  const q = sig(Math.sqrt(printed(hr)));
  const [Q, HR] = [printed(q), printed(hr)];
  const c = [0.905 + 0.783 * Q - 0.075 * HR, -0.437 - 1.969 * Q + 0.553 * HR, 1.557 + 1.073 * Q - 0.578 * HR, -1.061 + 0.171 * Q + 0.086 * HR].map((x) => sig(x));
  const x = sig((2 * h) / D);
  const X = printed(x);
  const C = c.map(printed);
  const kts = sig(C[0] + C[1] * X + C[2] * X * X + C[3] * X ** 3);
  lines.push(eq('h', `h = (D − d)/2 = (${exact(D)} − ${exact(d)}) / 2 = ${exact(h)} m; r = ${exact(fillet)} m; h/r = <b>${hr}</b>; √(h/r) = <b>${q}</b>; 2h/D = <b>${x}</b>`));
  lines.push(eq('c1', `C1 = 0.905 + 0.783 √(h/r) − 0.075 h/r = <b>${c[0]}</b>`));
  lines.push(eq('c2', `C2 = −0.437 − 1.969 √(h/r) + 0.553 h/r = <b>${c[1]}</b>`));
  lines.push(eq('c3', `C3 = 1.557 + 1.073 √(h/r) − 0.578 h/r = <b>${c[2]}</b>`));
  lines.push(eq('c4', `C4 = −1.061 + 0.171 √(h/r) + 0.086 h/r = <b>${c[3]}</b>`));
  lines.push(eq('kts', `K<sub>ts</sub> = C1 + C2 (2h/D) + C3 (2h/D)² + C4 (2h/D)³ = ${c[0]} + ${term(c[1])} × ${x} + ${term(c[2])} × ${x}² + ${term(c[3])} × ${x}³ = <b>${kts}</b>`));
  return kts;
}

/** The worked lines of every stress raiser (HTML), or '' without any. */
export function raisersWork(model: Model, solution: Solution): string {
  const list = solution.stressRaisers ?? [];
  if (list.length === 0) return '';
  const parts: string[] = [];
  for (const r of list) {
    const lines: string[] = [];
    const K = r.kind === 'shoulder' ? shoulderLines(model, solution, r, lines) : exact(r.factor);
    if (r.kind === 'factor') lines.push(eq('k-factor', `K = <b>${K}</b> <span class="at">(given${r.note ? `: ${esc(r.note)}` : ''})</span>`));
    const nominal = sig(r.nominalShear);
    lines.push(eq('local', `τ<sub>local</sub> = K · τ<sub>nominal</sub> = ${K} × ${nominal} = <b>${sig(printed(K) * printed(nominal))}</b> Pa <span class="at">(τ<sub>nominal</sub> on the smaller side at z = ${exact(r.z)} m)</span>`));
    parts.push(`<div class="segment"><h3>${esc(r.id)} · ${r.kind} on ${esc(r.shaft)} at z = ${exact(r.z)} m</h3>\n${lines.join('\n')}</div>`);
  }
  return parts.join('\n');
}
