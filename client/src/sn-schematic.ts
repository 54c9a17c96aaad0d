import { LitElement, css, html, nothing, svg, type SVGTemplateResult } from 'lit';
import { type EditModel, stressRaisersOf } from './model-edits.js';
import { type ProfileSegment, type SectionLike, outerAt, shaftProfile } from './section-geometry.js';
import { type UnitSystem, formatQuantity, storedToSI } from './units.js';
import type { SelectDetail } from './sn-table.js';

const W = 900; // px, drawing width of the viewBox
const LEFT = 96; // px, room for shaft names
const RIGHT = 28; // px
const ROW_PAD = 58; // px above and below the largest diameter, for symbols

interface ShaftGeom {
  index: number;
  id: string;
  name: string;
  length: number; // m
  segs: ProfileSegment[];
  y: number; // px, axis
}

/**
 * A to-scale side view of every shaft: lengths and diameters (a section's
 * height) to one scale (diameters exaggerated, and said so, when the shafts are
 * very slender), tapered segments drawn tapered, with supports, point and
 * distributed torques, discs, gears, couplings and stress raisers, and the
 * meshes and couplings drawn as links between shafts. Clicking an item selects
 * it; the selected item comes down as a pointer and is highlighted.
 *
 * @fires sn-select - {pointer}: an item was clicked
 */
export class SnSchematic extends LitElement {
  static override styles = css`
    :host { display: block; }
    svg { width: 100%; height: auto; display: block; font-family: system-ui, sans-serif; }
    .item { cursor: pointer; }
    .item:hover { opacity: 0.8; }
    .note { font-size: 11px; fill: #6b665e; }
    .label { font-size: 11px; fill: #1f2326; }
    .shaftname { font-size: 12px; font-weight: 600; fill: #1d3a4a; }
    .flag { font-size: 11px; fill: #b3261e; font-weight: 600; }
    .sel { stroke: #d48a1a !important; stroke-width: 3 !important; }
    .seltext { fill: #b36a00 !important; font-weight: 700; }
  `;

  static override properties = {
    model: { attribute: false },
    system: { type: String },
    selected: { type: String },
    flaggedShafts: { attribute: false },
  };

  declare model: EditModel | null;
  declare system: UnitSystem;
  declare selected: string;
  /** Ids of shafts to mark as free to spin. */
  declare flaggedShafts: readonly string[];

  constructor() {
    super();
    this.model = null;
    this.system = 'si';
    this.selected = '';
    this.flaggedShafts = [];
  }

  override render() {
    const m = this.model;
    if (!m) return nothing;
    const geoms = this.geometry(m);
    const maxLen = Math.max(1e-9, ...geoms.map((g) => g.length));
    const sx = (W - LEFT - RIGHT) / maxLen; // px per m of length
    const maxD = Math.max(1e-9, ...geoms.flatMap((g) => g.segs.map((s) => Math.max(s.outer0, s.outer1))));
    let sd = sx; // px per m of diameter: the same scale as lengths when it fits
    let scaleNote = 'Lengths and diameters to one scale.';
    if (maxD * sd > 70) {
      sd = 70 / maxD;
      scaleNote = `Diameters drawn at ${fmtRatio(sd / sx)} of the length scale.`;
    } else if (maxD * sd < 14) {
      sd = 14 / maxD;
      scaleNote = `Diameters exaggerated ×${fmtRatio(sd / sx)} against lengths.`;
    }
    const gearRadii = (m.gearMeshes ?? []).flatMap((g) => [gearRadius(g.a, g.module), gearRadius(g.b, g.module)]).filter((r): r is number => r !== null);
    const maxR = Math.max(1e-9, ...gearRadii);
    const sg = Math.min(sd, 34 / maxR); // px per m of gear radius
    const rowH = maxD * sd + 2 * ROW_PAD;
    geoms.forEach((g, i) => (g.y = 30 + ROW_PAD + (maxD * sd) / 2 + i * rowH));
    const height = 30 + geoms.length * rowH + 34;
    const X = (z: number) => LEFT + z * sx;
    const byId = new Map(geoms.map((g) => [g.id, g]));
    const at = (shaft: string, q: unknown) => {
      const g = byId.get(shaft);
      const z = storedToSI(q, 'length');
      return g && z !== null ? { g, x: X(z), z } : null;
    };
    const halfD = (g: ShaftGeom, z: number) => (g.segs.length ? (outerAt(g.segs, z) * sd) / 2 : 6);
    const isSel = (p: string) => this.selected !== '' && (this.selected === p || this.selected.startsWith(p + '/'));
    const parts: SVGTemplateResult[] = [];
    const gears: SVGTemplateResult[] = []; // drawn over the shafts

    // Links between shafts first, so the shafts draw over them.
    (m.gearMeshes ?? []).forEach((gm, i) => {
      const p = `/gearMeshes/${i}`;
      const a = at(gm.a.shaft, gm.a.at);
      const b = at(gm.b.shaft, gm.b.at);
      const ra = gearRadius(gm.a, gm.module);
      const rb = gearRadius(gm.b, gm.module);
      if (!a || !b) return;
      const ha = Math.max(halfD(a.g, a.z) + 5, (ra ?? maxR / 2) * sg);
      const hb = Math.max(halfD(b.g, b.z) + 5, (rb ?? maxR / 2) * sg);
      const down = a.g.y <= b.g.y;
      const ya = a.g.y + (down ? ha : -ha);
      const yb = b.g.y + (down ? -hb : hb);
      parts.push(svg`<g class="item" data-pointer=${p} @click=${() => this.pick(p)}>
        <path d="M${a.x} ${ya} C ${a.x} ${(ya + yb) / 2}, ${b.x} ${(ya + yb) / 2}, ${b.x} ${yb}" fill="none" stroke="#7a4fa0" stroke-width="2" stroke-dasharray="6 3" class=${isSel(p) ? 'sel' : ''}/>
        <text class="label ${isSel(p) ? 'seltext' : ''}" x=${(a.x + b.x) / 2 + 6} y=${(ya + yb) / 2} fill="#7a4fa0">${gm.id} (${gm.sense})</text>
      </g>`);
      for (const [e, h] of [[a, ha], [b, hb]] as const) {
        gears.push(svg`<rect data-pointer=${p} @click=${() => this.pick(p)} x=${e.x - 4} y=${e.g.y - h} width="8" height=${2 * h}
          fill="url(#teeth)" stroke="#7a4fa0" stroke-width="1.2" class="item ${isSel(p) ? 'sel' : ''}"/>`);
      }
    });
    (m.couplings ?? []).forEach((c, i) => {
      const p = `/couplings/${i}`;
      const a = at(c.a.shaft, c.a.at);
      const b = at(c.b.shaft, c.b.at);
      if (!a || !b) return;
      const fa = halfD(a.g, a.z) + 7;
      const fb = halfD(b.g, b.z) + 7;
      const down = a.g.y <= b.g.y;
      const ya = a.g.y + (down ? fa : -fa);
      const yb = b.g.y + (down ? -fb : fb);
      parts.push(svg`<g class="item" data-pointer=${p} @click=${() => this.pick(p)}>
        <path d="M${a.x} ${ya} C ${a.x + 30} ${(ya + yb) / 2}, ${b.x - 30} ${(ya + yb) / 2}, ${b.x} ${yb}" fill="none" stroke="#2f7d5b" stroke-width="2" stroke-dasharray="2 3" class=${isSel(p) ? 'sel' : ''}/>
        <rect x=${a.x - 3} y=${a.g.y - fa} width="6" height=${2 * fa} fill="#2f7d5b" class=${isSel(p) ? 'sel' : ''}/>
        <rect x=${b.x - 3} y=${b.g.y - fb} width="6" height=${2 * fb} fill="#2f7d5b" class=${isSel(p) ? 'sel' : ''}/>
        <text class="label ${isSel(p) ? 'seltext' : ''}" x=${(a.x + b.x) / 2 + 8} y=${(ya + yb) / 2 + 4} fill="#2f7d5b">${c.id}${c.stiffness === undefined ? ' (rigid)' : ''}</text>
      </g>`);
    });

    for (const g of geoms) {
      const flagged = this.flaggedShafts.includes(g.id);
      const sp = `/shafts/${g.index}`;
      parts.push(svg`<line x1=${X(0) - 8} x2=${X(g.length) + 8} y1=${g.y} y2=${g.y} stroke="#8a857c" stroke-dasharray="10 3 2 3"/>`);
      parts.push(svg`<g class="item" data-pointer=${sp} @click=${() => this.pick(sp)}>
        <text class="shaftname ${isSel(sp) ? 'seltext' : ''}" x="6" y=${g.y + 4}>${g.id}</text>
        ${flagged ? svg`<text class="flag" x="6" y=${g.y + 18}>free to spin</text>` : nothing}
      </g>`);
      for (const s of g.segs) {
        const p = `${sp}/segments/${s.index}`;
        const x0 = X(s.z0);
        const w = Math.max(1, (s.z1 - s.z0) * sx);
        const sel = this.selected === p;
        const fills = ['#b9c3c9', '#d9b77e', '#9fb8a6', '#c7a3a3'];
        const stroke = flagged ? '#b3261e' : '#4a5258';
        // A band from height h0 at x0 to h1 at x0 + w, centred on the axis (a rectangle unless tapered).
        const band = (h0: number, h1: number) =>
          `M${x0} ${g.y - (h0 * sd) / 2} L${x0 + w} ${g.y - (h1 * sd) / 2} L${x0 + w} ${g.y + (h1 * sd) / 2} L${x0} ${g.y + (h0 * sd) / 2} Z`;
        const rings = s.shape === 'layered' && s.rings.length ? [...s.rings].sort((a, b) => b - a) : [s.outer0];
        parts.push(svg`<g class="item" data-pointer=${p} data-tapered=${s.tapered ? 'true' : 'false'} @click=${(e: Event) => { e.stopPropagation(); this.pick(p); }}>
          ${s.tapered
            ? svg`<path d=${band(s.outer0, s.outer1)} fill=${fills[0]} stroke=${stroke} stroke-width="1.2" class=${sel ? 'sel' : ''}/>`
            : rings.map((d, k) => svg`<path d=${band(d, d)}
              fill=${fills[(rings.length - 1 - k) % fills.length]} stroke=${stroke} stroke-width=${k === 0 ? 1.2 : 0.6} class=${sel && k === 0 ? 'sel' : ''}/>`)}
          ${s.inner0 > 0 || s.inner1 > 0 ? svg`<path d=${band(s.inner0, s.inner1)} fill="#f4f2ee" stroke="#4a5258" stroke-width="0.6" stroke-dasharray="3 2"/>` : nothing}
          ${s.tapered && w > 40 ? svg`<text class="note" x=${x0 + w / 2} y=${g.y + 4} text-anchor="middle">taper</text>` : nothing}
        </g>`);
      }
    }

    parts.push(...gears);

    (m.distributedTorques ?? []).forEach((q, i) => {
      const p = `/distributedTorques/${i}`;
      const a = at(q.shaft, q.from);
      const b = at(q.shaft, q.to);
      const t0 = storedToSI(q.start, 'torquePerLength') ?? 0;
      const t1 = storedToSI(q.end, 'torquePerLength') ?? 0;
      if (!a || !b) return;
      const top = a.g.y - halfD(a.g, a.z) - 8;
      const peak = Math.max(Math.abs(t0), Math.abs(t1), 1e-12);
      const h0 = 4 + (18 * Math.abs(t0)) / peak;
      const h1 = 4 + (18 * Math.abs(t1)) / peak;
      const ticks = Math.max(2, Math.round((b.x - a.x) / 14));
      parts.push(svg`<g class="item" data-pointer=${p} @click=${() => this.pick(p)}>
        <path d="M${a.x} ${top} L${a.x} ${top - h0} L${b.x} ${top - h1} L${b.x} ${top} Z" fill="#e6d3ec" stroke="#7a4fa0" stroke-width="1" class=${isSel(p) ? 'sel' : ''}/>
        ${Array.from({ length: ticks + 1 }, (_, k) => {
          const x = a.x + ((b.x - a.x) * k) / ticks;
          return svg`<line x1=${x} x2=${x} y1=${top} y2=${top - (h0 + ((h1 - h0) * k) / ticks)} stroke="#7a4fa0" stroke-width="0.6"/>`;
        })}
        <text class="label ${isSel(p) ? 'seltext' : ''}" x=${b.x - 2} y=${top - h1 - 4} text-anchor="end">${q.id}</text>
      </g>`);
    });

    (m.torques ?? []).forEach((t, i) => {
      const p = `/torques/${i}`;
      const a = at(t.shaft, t.at);
      if (!a) return;
      let value: number | null = storedToSI(t.torque, 'torque');
      if (t.torque === undefined) {
        const P = storedToSI(t.power, 'power');
        const w = storedToSI(t.speed, 'angularSpeed');
        value = P !== null && w ? P / w : null;
      }
      const dir = (value ?? 1) >= 0 ? 1 : -1;
      const y = a.g.y - halfD(a.g, a.z) - 42;
      const x1 = a.x - dir * 16;
      const x2 = a.x + dir * 16;
      parts.push(svg`<g class="item" data-pointer=${p} @click=${() => this.pick(p)}>
        <line x1=${a.x} x2=${a.x} y1=${y + 4} y2=${a.g.y - halfD(a.g, a.z)} stroke="#c0392b" stroke-width="1" stroke-dasharray="2 2"/>
        <line x1=${x1} x2=${x2} y1=${y} y2=${y} stroke="#c0392b" stroke-width="2.2" class=${isSel(p) ? 'sel' : ''}/>
        <path d="M${x2} ${y} l${-dir * 7} -4 l0 8 Z M${x2 - dir * 6} ${y} l${-dir * 7} -4 l0 8 Z" fill="#c0392b"/>
        <text class="label ${isSel(p) ? 'seltext' : ''}" x=${a.x} y=${y - 7} text-anchor="middle">${t.id} ${value === null ? '' : formatQuantity(value, 'torque', this.system, 3)}</text>
      </g>`);
    });

    (m.supports ?? []).forEach((s, i) => {
      const p = `/supports/${i}`;
      const a = at(s.shaft, s.at);
      if (!a) return;
      const yb = a.g.y + halfD(a.g, a.z);
      const sel = isSel(p) ? 'sel' : '';
      const body =
        s.kind === 'spring'
          ? svg`<path d="M${a.x} ${yb} l0 4 l-6 3 l12 4 l-12 4 l12 4 l-6 3 l0 4" fill="none" stroke="#1d3a4a" stroke-width="1.5" class=${sel}/>
                <line x1=${a.x - 10} x2=${a.x + 10} y1=${yb + 26} y2=${yb + 26} stroke="#1d3a4a" stroke-width="2"/>`
          : svg`<rect x=${a.x - 9} y=${yb} width="18" height="12" fill="url(#hatch)" stroke="#1d3a4a" stroke-width="1.5" class=${sel}/>
                <line x1=${a.x - 13} x2=${a.x + 13} y1=${yb + 12} y2=${yb + 12} stroke="#1d3a4a" stroke-width="2"/>`;
      parts.push(svg`<g class="item" data-pointer=${p} @click=${() => this.pick(p)}>
        <rect x=${a.x - 14} y=${yb} width="28" height="40" fill="transparent"/>
        ${body}
        <text class="label ${isSel(p) ? 'seltext' : ''}" x=${a.x} y=${yb + 40} text-anchor="middle">${s.id}</text>
      </g>`);
    });

    (m.discs ?? []).forEach((d, i) => {
      const p = `/discs/${i}`;
      const a = at(d.shaft, d.at);
      if (!a) return;
      const h = halfD(a.g, a.z) * 1.9 + 6;
      parts.push(svg`<g class="item" data-pointer=${p} @click=${() => this.pick(p)}>
        <ellipse cx=${a.x - 9} cy=${a.g.y} rx="4" ry=${h} fill="#e8b04b" stroke="#8a6420" stroke-width="1" class=${isSel(p) ? 'sel' : ''}/>
        <text class="label ${isSel(p) ? 'seltext' : ''}" x=${a.x - 9} y=${a.g.y - h - 3} text-anchor="middle">${d.id}</text>
      </g>`);
    });

    // Stress raisers: a notch mark (a triangle pointing at the surface) under the shaft, with its id and what it is.
    stressRaisersOf(m).forEach((r, i) => {
      const p = `/stressRaisers/${i}`;
      const a = at(r.shaft, r.at);
      if (!a) return;
      const yb = a.g.y + halfD(a.g, a.z);
      const what = r.kind === 'shoulder' ? `fillet ${r.fillet === undefined ? '?' : formatQuantity(storedToSI(r.fillet, 'length'), 'length', this.system, 3)}` : `Kts ${r.factor ?? '?'}`;
      parts.push(svg`<g class="item raiser" data-pointer=${p} data-raiser=${r.id} @click=${() => this.pick(p)}>
        <path d="M${a.x} ${yb + 1} l-6 10 l12 0 Z" fill="#fff" stroke="#8c1d18" stroke-width="1.6" class=${isSel(p) ? 'sel' : ''}/>
        <line x1=${a.x} x2=${a.x} y1=${a.g.y - halfD(a.g, a.z)} y2=${yb} stroke="#8c1d18" stroke-width="1" stroke-dasharray="1 2"/>
        <text class="label ${isSel(p) ? 'seltext' : ''}" x=${a.x + 8} y=${yb + 20}>${r.id} ${what}</text>
      </g>`);
    });

    const bar = scaleBar(maxLen);
    return html`<svg viewBox="0 0 ${W} ${height}" role="img" aria-label="Schematic of the shafts, to scale">
      <defs>
        <pattern id="hatch" width="5" height="5" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
          <line x1="0" y1="0" x2="0" y2="5" stroke="#1d3a4a" stroke-width="1.2" />
        </pattern>
        <pattern id="teeth" width="8" height="4" patternUnits="userSpaceOnUse">
          <rect width="8" height="4" fill="#efe6f4" /><line x1="0" y1="0" x2="8" y2="0" stroke="#7a4fa0" stroke-width="0.8" />
        </pattern>
      </defs>
      ${parts}
      <g transform="translate(${LEFT} ${height - 22})">
        <line x1="0" x2=${bar.length * sx} y1="0" y2="0" stroke="#1f2326" stroke-width="2" />
        <line x1="0" x2="0" y1="-4" y2="4" stroke="#1f2326" /><line x1=${bar.length * sx} x2=${bar.length * sx} y1="-4" y2="4" stroke="#1f2326" />
        <text class="note" x=${bar.length * sx + 8} y="4">${formatQuantity(bar.length, 'length', this.system, 3)}</text>
        <text class="note" x=${bar.length * sx + 90} y="4">${scaleNote} Gears: pitch radii not to scale.</text>
      </g>
    </svg>`;
  }

  private geometry(m: EditModel): ShaftGeom[] {
    const sections = m.sections as unknown as SectionLike[];
    return m.shafts.map((sh, index) => {
      const segs = shaftProfile(sh.segments as unknown as Array<Record<string, unknown>>, sections);
      return { index, id: sh.id, name: sh.name ?? '', length: segs.length ? segs[segs.length - 1].z1 : 0, segs, y: 0 };
    });
  }

  private pick(pointer: string): void {
    this.dispatchEvent(new CustomEvent<SelectDetail>('sn-select', { detail: { pointer }, bubbles: true, composed: true }));
  }
}

/** Pitch radius of a gear end in m: its radius, or teeth × module / 2. */
function gearRadius(end: { radius?: unknown; teeth?: number }, module: unknown): number | null {
  const r = end.radius !== undefined ? storedToSI(end.radius, 'length') : null;
  const mod = storedToSI(module, 'length');
  const fromTeeth = end.teeth !== undefined && mod !== null ? (end.teeth * mod) / 2 : null;
  const radius = end.radius !== undefined ? r : fromTeeth;
  return radius !== null && radius > 0 ? radius : null;
}

/** A round length (1, 2 or 5 × 10ⁿ m) about a fifth of the longest shaft. */
function scaleBar(maxLen: number): { length: number } {
  const target = maxLen / 5;
  const p = Math.pow(10, Math.floor(Math.log10(target)));
  const step = [1, 2, 5, 10].map((k) => k * p).reduce((best, v) => (Math.abs(v - target) < Math.abs(best - target) ? v : best));
  return { length: step };
}

function fmtRatio(r: number): string {
  return r >= 1 ? String(Number(r.toPrecision(2))) : `1/${Number((1 / r).toPrecision(2))}`;
}

customElements.define('sn-schematic', SnSchematic);

declare global {
  interface HTMLElementTagNameMap {
    'sn-schematic': SnSchematic;
  }
}
