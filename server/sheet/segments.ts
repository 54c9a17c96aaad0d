/**
 * The calculation sheet's worked segments: for each segment its section properties and stiffness with
 * the numbers substituted, and at the governing point the shear stress, in SI base units, from the
 * model as typed (converted by the shared unit catalogue) and the solution's own values. Nothing here
 * calls the engine: where a number comes from the engine alone (a series, an exact integral), the
 * sheet says so and prints it.
 */
import type { Model, Section } from '../../shared-types/model.js';
import { isProblem, readQuantity, type QuantityKind } from '../../shared-types/quantity.js';
import type { SegmentResult, ShaftResult } from '../../shared-types/solution.js';
import { esc, exact, printed, sig } from './format.js';

/** An SI number from a typed quantity; null when absent or unreadable (the model solved, so it reads). */
export function si(value: unknown, kind: QuantityKind): number | null {
  if (value === undefined || value === null) return null;
  const r = readQuantity(value, kind);
  return isProblem(r) ? null : r;
}

interface MaterialG {
  readonly G: number;
  /** The line deriving G from E and ν, when the material gives those. */
  readonly line: string | null;
}

/** A material's shear modulus, with its derivation from E and ν where it is given so. */
export function materialG(model: Model, id: string | undefined): MaterialG | null {
  const m = model.materials.find((x) => x.id === id);
  if (!m) return null;
  const G = si(m.G, 'stress');
  if (G !== null) return { G, line: null };
  const E = si(m.E, 'stress');
  if (E === null || m.nu === undefined) return null;
  const g = E / (2 * (1 + m.nu));
  return { G: g, line: `G = E / (2(1 + ν)) = ${exact(E)} / (2 × (1 + ${exact(m.nu)})) = ${exact(g)} Pa` };
}

const eq = (name: string, body: string) => `<p class="eq" data-eq="${esc(name)}">${body}</p>`;

/** "J = π/32 (d⁴ − dᵢ⁴) = …" for one ring; answers the printed J. */
function ringJ(label: string, d: number, di: number, lines: string[]): number {
  const J = (Math.PI / 32) * (d ** 4 - di ** 4);
  const p = sig(J);
  lines.push(eq('J', `${label} = π/32 (d⁴ − dᵢ⁴) = π/32 × (${exact(d)}⁴ − ${exact(di)}⁴) = <b>${p}</b> m⁴`));
  return printed(p);
}

function section(model: Model, id: string | undefined): Section | undefined {
  return model.sections.find((s) => s.id === id);
}

/** A segment's length as typed, in m (what the engine read); null when it cannot be read. */
export function segmentLength(model: Model, shaftId: string, index: number): number | null {
  return si(model.shafts.find((s) => s.id === shaftId)?.segments[index]?.length, 'length');
}

/** The worked lines of one segment (HTML paragraphs). */
export function segmentWork(model: Model, shaft: ShaftResult, seg: SegmentResult): string {
  const lines: string[] = [];
  const typedShaft = model.shafts.find((s) => s.id === shaft.id);
  const typedSeg = typedShaft?.segments[seg.index];
  const sec = section(model, typedSeg?.section);
  const L = si(typedSeg?.length, 'length') ?? seg.to - seg.from;
  const g = materialG(model, typedSeg?.material);
  if (g?.line) lines.push(eq('G', g.line));
  const Tp = sig(seg.maxAbsTorque);
  const T = printed(Tp);
  if (typedSeg?.sectionEnd !== undefined) return taperWork(shaft, seg, sec, section(model, typedSeg.sectionEnd), g, L, lines);

  if (sec && (sec.shape === 'solid' || sec.shape === 'hollow') && g) {
    const d = si(sec.d, 'length')!;
    const di = sec.shape === 'hollow' ? si(sec.di, 'length')! : 0;
    const J = ringJ('J', d, di, lines);
    const k = (g.G * J) / L;
    lines.push(eq('k', `k = GJ/L = ${exact(g.G)} × ${sig(J)} / ${exact(L)} = <b>${sig(k)}</b> N·m/rad`));
    const r = d / 2;
    const tau = (T * r) / J;
    lines.push(eq('tau', `τ = T r / J = ${Tp} × ${exact(r)} / ${sig(J)} = <b>${sig(tau)}</b> Pa <span class="at">at z = ${exact(seg.governingZ)} m, r = d/2</span>`));
    return lines.join('\n');
  }
  if (sec && sec.shape === 'layered' && sec.layers) {
    let inner = si(sec.di, 'length') ?? 0;
    const rings: Array<{ G: number; J: number; r: number; material: string }> = [];
    sec.layers.forEach((layer, i) => {
      const d = si(layer.d, 'length')!;
      const gi = materialG(model, layer.material);
      if (gi?.line) lines.push(eq('G', `${esc(layer.material)}: ${gi.line}`));
      const J = ringJ(`J<sub>${i + 1}</sub> (${esc(layer.material)})`, d, inner, lines);
      rings.push({ G: gi?.G ?? NaN, J, r: d / 2, material: layer.material });
      inner = d;
    });
    const GJ = rings.reduce((s, x) => s + x.G * x.J, 0);
    const GJp = sig(GJ);
    lines.push(eq('GJ', `ΣGJ = ${rings.map((x) => `${exact(x.G)} × ${sig(x.J)}`).join(' + ')} = <b>${GJp}</b> N·m²`));
    const k = printed(GJp) / L;
    lines.push(eq('k', `k = ΣGJ/L = ${GJp} / ${exact(L)} = <b>${sig(k)}</b> N·m/rad`));
    for (const x of rings) {
      const tau = (x.G * x.r * T) / printed(GJp);
      lines.push(eq('tau-layer', `τ (${esc(x.material)}) = G r T / ΣGJ = ${exact(x.G)} × ${exact(x.r)} × ${Tp} / ${GJp} = <b>${sig(tau)}</b> Pa`));
    }
    return lines.join('\n');
  }
  // Non-circular shapes: J and Wt as the engine gives them, with the closed form where there is one.
  const J = seg.torsionConstant;
  if (sec && sec.shape === 'rectangle') {
    const w = si(sec.width, 'length')!;
    const h = si(sec.height, 'length')!;
    const b = Math.min(w, h);
    const hh = Math.max(w, h);
    const beta = J / (hh * b ** 3);
    lines.push(eq('beta', `β = ⅓ (1 − (192/π⁵)(b/h) Σ<sub>n odd</sub> tanh(nπh/2b)/n⁵) = <b>${sig(beta)}</b> <span class="at">(series, h = ${exact(hh)}, b = ${exact(b)})</span>`));
    lines.push(eq('J', `J = β h b³ = ${sig(beta)} × ${exact(hh)} × ${exact(b)}³ = <b>${sig(printed(sig(beta)) * hh * b ** 3)}</b> m⁴`));
  } else if (sec && sec.shape === 'ellipse') {
    const a = Math.max(si(sec.width, 'length')!, si(sec.height, 'length')!) / 2;
    const c = Math.min(si(sec.width, 'length')!, si(sec.height, 'length')!) / 2;
    lines.push(eq('J', `J = π a³ c³ / (a² + c²) = π × ${exact(a)}³ × ${exact(c)}³ / (${exact(a)}² + ${exact(c)}²) = <b>${sig((Math.PI * a ** 3 * c ** 3) / (a * a + c * c))}</b> m⁴`));
  } else if (sec && sec.shape === 'rectangularTube') {
    const w = si(sec.width, 'length')!;
    const h = si(sec.height, 'length')!;
    const t = si(sec.wall, 'length')!;
    const Am = (w - t) * (h - t);
    const s = 2 * (w - t + (h - t));
    lines.push(eq('Am', `A<sub>m</sub> = (w − t)(h − t) = (${exact(w)} − ${exact(t)}) × (${exact(h)} − ${exact(t)}) = <b>${sig(Am)}</b> m²; s = 2((w − t) + (h − t)) = <b>${sig(s)}</b> m`));
    lines.push(eq('J', `J = 4 A<sub>m</sub>² t / s = 4 × ${sig(Am)}² × ${exact(t)} / ${sig(s)} = <b>${sig((4 * printed(sig(Am)) ** 2 * t) / printed(sig(s)))}</b> m⁴ (Bredt)`));
  } else if (sec && sec.shape === 'thinOpen' && sec.walls) {
    const parts = sec.walls.map((x) => ({ b: si(x.length, 'length')!, t: si(x.thickness, 'length')! }));
    lines.push(eq('J', `J = Σ b t³/3 = (${parts.map((p) => `${exact(p.b)} × ${exact(p.t)}³`).join(' + ')}) / 3 = <b>${sig(parts.reduce((s, p) => s + p.b * p.t ** 3, 0) / 3)}</b> m⁴`));
  } else {
    lines.push(eq('J', `J = <b>${sig(J)}</b> m⁴ <span class="at">(as given)</span>`));
  }
  if (g) {
    const Jp = sig(J);
    lines.push(eq('k', `k = GJ/L = ${exact(g.G)} × ${Jp} / ${exact(L)} = <b>${sig((g.G * printed(Jp)) / L)}</b> N·m/rad`));
  }
  if (seg.torsionalModulus !== undefined) {
    const Wt = sig(seg.torsionalModulus);
    lines.push(eq('tau', `τ = T / W<sub>t</sub> = ${Tp} / ${Wt} = <b>${sig(T / printed(Wt))}</b> Pa <span class="at">at z = ${exact(seg.governingZ)} m</span>`));
  }
  return lines.join('\n');
}

/** A tapered segment: J at both ends substituted, the stiffness by its closed form (solid) or the exact integral (hollow). */
function taperWork(shaft: ShaftResult, seg: SegmentResult, a: Section | undefined, b: Section | undefined, g: MaterialG | null, L: number, lines: string[]): string {
  const dA = si(a?.d, 'length');
  const dB = si(b?.d, 'length');
  const diA = a?.shape === 'hollow' ? si(a.di, 'length') ?? 0 : 0;
  const diB = b?.shape === 'hollow' ? si(b.di, 'length') ?? 0 : 0;
  if (dA === null || dB === null || !g) {
    lines.push(eq('k', `k = 1 / ∫ dz/(G J(z)) = <b>${sig(seg.stiffness)}</b> N·m/rad`));
    return lines.join('\n');
  }
  ringJ('J(0)', dA, diA, lines);
  ringJ('J(L)', dB, diB, lines);
  if (diA === 0 && diB === 0) {
    const k = (3 * Math.PI * g.G * dA ** 3 * dB ** 3) / (32 * L * (dA * dA + dA * dB + dB * dB));
    lines.push(eq('k-taper', `k = 3π G d<sub>A</sub>³ d<sub>B</sub>³ / (32 L (d<sub>A</sub>² + d<sub>A</sub>d<sub>B</sub> + d<sub>B</sub>²)) = 3π × ${exact(g.G)} × ${exact(dA)}³ × ${exact(dB)}³ / (32 × ${exact(L)} × (${exact(dA)}² + ${exact(dA)} × ${exact(dB)} + ${exact(dB)}²)) = <b>${sig(k)}</b> N·m/rad`));
  } else {
    lines.push(eq('k-taper', `k = 1 / ∫₀<sup>L</sup> dz / (G J(z)), outer and bore diameters linear in z (exact integral) = <b>${sig(seg.stiffness)}</b> N·m/rad`));
  }
  const z = seg.governingZ - seg.from;
  const d = dA + ((dB - dA) * z) / L;
  const di = diA + ((diB - diA) * z) / L;
  const Jz = sig((Math.PI / 32) * (d ** 4 - di ** 4));
  lines.push(eq('d-taper', `d(z) = d<sub>A</sub> + (d<sub>B</sub> − d<sub>A</sub>) z/L = ${exact(dA)} + (${exact(dB)} − ${exact(dA)}) × ${exact(z)} / ${exact(L)} = ${exact(d)} m${di > 0 ? `; dᵢ(z) = ${exact(di)} m` : ''}`));
  lines.push(eq('J', `J(z) = π/32 (d⁴ − dᵢ⁴) = π/32 × (${exact(d)}⁴ − ${exact(di)}⁴) = <b>${Jz}</b> m⁴`));
  // T at the governing point: the diagram holds every breakpoint, the peak among them (both sides of a jump).
  let T: number | null = null;
  for (let i = 0; i < shaft.diagram.z.length; i++) {
    const Ti = shaft.diagram.torque[i];
    if (shaft.diagram.z[i] === seg.governingZ && (T === null || Math.abs(Ti) > Math.abs(T))) T = Ti;
  }
  if (T === null) {
    lines.push(eq('tau-taper', `τ = T(z) r(z) / J(z), peak at z = ${exact(seg.governingZ)} m: <b>${sig(seg.layers[0]?.maxShear)}</b> Pa`));
  } else {
    const Tp = sig(Math.abs(T));
    const tau = (printed(Tp) * (d / 2)) / printed(Jz);
    lines.push(eq('tau', `τ = T r / J = ${Tp} × ${exact(d / 2)} / ${Jz} = <b>${sig(tau)}</b> Pa <span class="at">at z = ${exact(seg.governingZ)} m, r = d(z)/2 (peak along the taper)</span>`));
  }
  return lines.join('\n');
}
