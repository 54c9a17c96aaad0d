import { LitElement, css, html, nothing, svg, type SVGTemplateResult } from 'lit';
import { type Outline, type SectionLike, type SectionProperties, outlineBox, sectionOutline, sectionToDisplay, sectionUnit } from './section-geometry.js';
import { type UnitSystem, formatNumber, formatQuantity, formatValue, prettyUnit, displayUnit } from './units.js';

const VW = 130; // px, viewBox width of the drawing
const VH = 100; // px, viewBox height
const PAD = 12; // px around the outline, room for the scale bar

/**
 * One cross-section drawn to scale (its own scale, given by a bar under it), with
 * its properties beside it: torsion constant J, polar moment Ip and torsional
 * modulus Wt as the solution gives them for a segment that uses the section, or
 * a note that no segment uses it (or that there is no solution yet).
 */
export class SnSectionView extends LitElement {
  static override styles = css`
    :host { display: inline-flex; gap: 8px; align-items: flex-start; border: 1px solid #dcd7cd; border-radius: 4px; padding: 4px 8px 4px 4px; background: #fff; }
    svg { width: 130px; height: 100px; flex: none; font-family: system-ui, sans-serif; }
    .note { font-size: 9px; fill: #6b665e; }
    dl { margin: 0; font-size: 12px; display: grid; grid-template-columns: auto auto; gap: 1px 8px; align-content: start; }
    dt { color: #4a5258; }
    dd { margin: 0; font-variant-numeric: tabular-nums; text-align: right; }
    h5 { margin: 0 0 3px; font-size: 12.5px; color: #1d3a4a; }
    .muted { color: #6b665e; font-size: 11.5px; max-width: 15em; }
  `;

  static override properties = {
    section: { attribute: false },
    properties: { attribute: false },
    system: { type: String },
    solved: { type: Boolean },
  };

  declare section: SectionLike | null;
  declare properties: SectionProperties | null;
  declare system: UnitSystem;
  /** A solution is at hand (else the properties wait for one). */
  declare solved: boolean;

  constructor() {
    super();
    this.section = null;
    this.properties = null;
    this.system = 'si';
    this.solved = false;
  }

  override render() {
    const sec = this.section;
    if (!sec) return nothing;
    const o = sectionOutline(sec);
    const box = outlineBox(o);
    const span = Math.max(box.width, box.height);
    const s = span > 0 ? Math.min((VW - 2 * PAD) / Math.max(box.width, 1e-12), (VH - 2 * PAD - 8) / Math.max(box.height, 1e-12)) : 0; // px per m
    const cx = VW / 2;
    const cy = (VH - 10) / 2;
    const bar = roundLength(span / 3);
    const p = this.properties;
    const am = (v: number | null) => (v === null ? '—' : `${formatNumber(sectionToDisplay(v, 'areaMoment', this.system), 4)} ${prettyUnit(sectionUnit('areaMoment', this.system))}`);
    const sm = (v: number | null) => (v === null ? '—' : `${formatNumber(sectionToDisplay(v, 'sectionModulus', this.system), 4)} ${prettyUnit(sectionUnit('sectionModulus', this.system))}`);
    return html`<svg viewBox="0 0 ${VW} ${VH}" role="img" aria-label=${`Cross-section ${sec.id ?? ''} (${sec.shape ?? ''}), to scale`} data-section=${sec.id ?? ''}>
        <line x1=${cx - 6} x2=${cx + 6} y1=${cy} y2=${cy} stroke="#8a857c" stroke-width="0.6" />
        <line x1=${cx} x2=${cx} y1=${cy - 6} y2=${cy + 6} stroke="#8a857c" stroke-width="0.6" />
        ${s > 0 ? drawOutline(o, cx, cy, s) : svg`<text class="note" x=${cx} y=${cy} text-anchor="middle">no size yet</text>`}
        ${s > 0 && bar > 0
          ? svg`<g data-scale=${bar}><line x1="6" x2=${6 + bar * s} y1=${VH - 6} y2=${VH - 6} stroke="#1f2326" stroke-width="1.5" />
              <text class="note" x=${10 + bar * s} y=${VH - 3}>${formatQuantity(bar, 'length', this.system, 3)}</text></g>`
          : nothing}
        ${o.kind === 'custom' ? svg`<text class="note" x=${cx} y="10" text-anchor="middle">a round, r = J/Wt</text>` : nothing}
        ${o.kind === 'open' ? svg`<text class="note" x=${cx} y="10" text-anchor="middle">walls at right angles</text>` : nothing}
      </svg>
      <div>
        <h5>${sec.id} <span class="muted">${sec.shape}</span></h5>
        ${p
          ? html`<dl data-props=${sec.id ?? ''}>
              <dt title="Torsion constant (sets stiffness)">J</dt><dd data-j=${p.J}>${am(p.J)}</dd>
              <dt title="Polar moment of area (sets rotary inertia)">Ip</dt><dd data-ip=${p.Ip ?? ''}>${am(p.Ip)}</dd>
              <dt title="Torsional modulus: τmax = T / Wt">Wt</dt><dd data-wt=${p.Wt ?? ''}>${sm(p.Wt)}</dd>
            </dl>
            <div class="muted">from ${p.from}${sec.shape === 'layered' ? '; layered: stress per layer, no single Wt' : ''}</div>`
          : html`<div class="muted" data-props-none>${this.solved ? 'Not used by any segment.' : 'Properties come with the results.'}</div>`}
        ${sizeLine(sec, o, this.system)}
      </div>`;
  }
}

/** A round length (1, 2 or 5 × 10ⁿ m) near `target`. */
function roundLength(target: number): number {
  if (!(target > 0)) return 0;
  const p = Math.pow(10, Math.floor(Math.log10(target)));
  return [1, 2, 5, 10].map((k) => k * p).reduce((best, v) => (Math.abs(v - target) < Math.abs(best - target) ? v : best));
}

/** The outline as SVG, centred at (cx, cy), `s` px per m (y up in the model, down on screen). */
function drawOutline(o: Outline, cx: number, cy: number, s: number): SVGTemplateResult {
  const fill = '#b9c3c9';
  const stroke = '#4a5258';
  switch (o.kind) {
    case 'round': {
      const fills = ['#b9c3c9', '#d9b77e', '#9fb8a6', '#c7a3a3'];
      const rings = [...o.radii].map((r, i) => ({ r, i })).sort((a, b) => b.r - a.r);
      return svg`${rings.map(({ r, i }) => svg`<circle cx=${cx} cy=${cy} r=${r * s} fill=${fills[i % fills.length]} stroke=${stroke} stroke-width="1"/>`)}
        ${o.bore > 0 ? svg`<circle cx=${cx} cy=${cy} r=${o.bore * s} fill="#fff" stroke=${stroke} stroke-width="0.8"/>` : nothing}`;
    }
    case 'rectangle':
      return svg`<rect x=${cx - (o.width * s) / 2} y=${cy - (o.height * s) / 2} width=${o.width * s} height=${o.height * s} fill=${fill} stroke=${stroke}/>`;
    case 'ellipse':
      return svg`<ellipse cx=${cx} cy=${cy} rx=${(o.width * s) / 2} ry=${(o.height * s) / 2} fill=${fill} stroke=${stroke}/>`;
    case 'tube': {
      const w = o.width * s;
      const h = o.height * s;
      const t = o.wall * s;
      // Outer rectangle clockwise, inner counter-clockwise: the even-odd rule leaves the inside empty.
      const d = `M${cx - w / 2} ${cy - h / 2} h${w} v${h} h${-w} Z M${cx - w / 2 + t} ${cy - h / 2 + t} v${h - 2 * t} h${w - 2 * t} v${-(h - 2 * t)} Z`;
      return svg`<path d=${d} fill=${fill} fill-rule="evenodd" stroke=${stroke}/>`;
    }
    case 'open':
      return svg`${o.walls.map((w) => {
        const x0 = Math.min(w.x0, w.x1) - (w.y0 === w.y1 ? 0 : w.t / 2);
        const x1 = Math.max(w.x0, w.x1) + (w.y0 === w.y1 ? 0 : w.t / 2);
        const y0 = Math.min(w.y0, w.y1) - (w.x0 === w.x1 ? 0 : w.t / 2);
        const y1 = Math.max(w.y0, w.y1) + (w.x0 === w.x1 ? 0 : w.t / 2);
        return svg`<rect x=${cx + x0 * s} y=${cy - y1 * s} width=${Math.max(0.5, (x1 - x0) * s)} height=${Math.max(0.5, (y1 - y0) * s)} fill=${fill} stroke=${stroke} stroke-width="0.8"/>`;
      })}`;
    case 'custom':
      return o.radius === null
        ? svg`<text class="note" x=${cx} y=${cy} text-anchor="middle">J or Wt missing</text>`
        : svg`<circle cx=${cx} cy=${cy} r=${o.radius * s} fill="none" stroke=${stroke} stroke-dasharray="4 2"/>`;
    default:
      return svg``;
  }
}

/** The outline's size in words, for readers of the drawing ("60 × 20 mm"). */
function sizeLine(sec: SectionLike, o: Outline, system: UnitSystem) {
  const u = prettyUnit(displayUnit('length', system));
  const L = (m: number) => formatValue(m, 'length', system, 4);
  let text = '';
  if (o.kind === 'rectangle' || o.kind === 'ellipse') text = `${L(o.width)} × ${L(o.height)} ${u}`;
  else if (o.kind === 'tube') text = `${L(o.width)} × ${L(o.height)} ${u}, wall ${L(o.wall)} ${u}`;
  else if (o.kind === 'open') text = `${o.walls.length} wall${o.walls.length === 1 ? '' : 's'}`;
  else if (o.kind === 'round' && sec.shape !== 'layered') text = `d ${L(2 * Math.max(0, ...o.radii))}${o.bore > 0 ? `, bore ${L(2 * o.bore)}` : ''} ${u}`;
  return text ? html`<div class="muted" data-size>${text}</div>` : nothing;
}

customElements.define('sn-section-view', SnSectionView);

declare global {
  interface HTMLElementTagNameMap {
    'sn-section-view': SnSectionView;
  }
}
