/**
 * Cross-sections as the client draws and describes them, free of the DOM: the
 * shapes of the model format, the fields each one takes, its outline to scale
 * (metres), the height it shows in a side view (the schematic), and reading the
 * section properties (m⁴, m³) a user types for `custom` and `thinOpen` sections.
 *
 * Section properties (torsion constant J, polar moment Ip, torsional modulus Wt)
 * are never computed here: the engine computes them and the solution carries
 * them; `sectionProperties` only reads them from the segments that use a section.
 */
import { IN } from '../../shared-types/present.js';
import type { Solution } from '../../shared-types/solution.js';
import { type ParsedInput, type UnitSystem, formatNumber, storedToSI } from './units.js';

/** Every section shape of the model format, in the order the editor offers them. */
export const SECTION_SHAPES = ['solid', 'hollow', 'layered', 'rectangle', 'ellipse', 'rectangularTube', 'thinOpen', 'custom'] as const;
export type SectionShapeName = (typeof SECTION_SHAPES)[number];

/** Shapes that are stacks of concentric rings (their properties follow from the rings alone). */
export const ROUND_SHAPES: readonly string[] = ['solid', 'hollow', 'layered'];

/** Every field that belongs to one shape or another (dropped when the shape changes). */
export const SHAPE_FIELDS = ['d', 'di', 'layers', 'width', 'height', 'wall', 'walls', 'torsionConstant', 'torsionalModulus', 'polarMoment', 'plasticTorqueModulus'] as const;

/** A section as the editor holds it (the contract's fields, values as typed). */
export type SectionLike = Readonly<Record<string, unknown>> & { readonly id?: string; readonly shape?: string };

// ---------------------------------------------------------------------------
// Section-property quantities: areaMoment (m⁴) and sectionModulus (m³)

/** The two quantity kinds of section properties (never the same kind as a mass inertia, kg·m²). */
export type SectionKind = 'areaMoment' | 'sectionModulus';

/** Units of the two kinds: the SI value of one unit (1 in = 0.0254 m exactly), and the display unit per system. */
const SECTION_UNITS: Readonly<Record<SectionKind, { display: Readonly<Record<UnitSystem, string>>; units: ReadonlyMap<string, number> }>> = {
  areaMoment: { display: { si: 'mm4', us: 'in4' }, units: new Map([['m4', 1], ['cm4', 1e-8], ['mm4', 1e-12], ['in4', IN ** 4]]) },
  sectionModulus: { display: { si: 'mm3', us: 'in3' }, units: new Map([['m3', 1], ['cm3', 1e-6], ['mm3', 1e-9], ['in3', IN ** 3]]) },
};

/** True for a section-property kind. */
export function isSectionKind(kind: string): kind is SectionKind {
  return kind === 'areaMoment' || kind === 'sectionModulus';
}

/** Display unit symbol ("mm4") of a section-property kind. */
export function sectionUnit(kind: SectionKind, system: UnitSystem): string {
  return SECTION_UNITS[kind].display[system];
}

const NUMBER_UNIT = /^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*([A-Za-z][A-Za-z0-9^*/·]*)?\s*$/;

/** A stored section property (a number in SI, or "<n> <unit>") in SI, or null when it cannot be read. */
export function readSectionQuantity(stored: unknown, kind: SectionKind): number | null {
  if (typeof stored === 'number') return Number.isFinite(stored) ? stored : null;
  if (typeof stored !== 'string') return null;
  const m = NUMBER_UNIT.exec(stored);
  if (!m || m[2] === undefined) return null;
  const f = SECTION_UNITS[kind].units.get(m[2].replace('^', ''));
  const v = Number(m[1]);
  return f === undefined || !Number.isFinite(v) ? null : v * f;
}

/** An SI section property in the display unit of the system. */
export function sectionToDisplay(si: number, kind: SectionKind, system: UnitSystem): number {
  return si / (SECTION_UNITS[kind].units.get(sectionUnit(kind, system)) as number);
}

/** Text of an input holding a section property: the value in the display unit, the raw text when unreadable. */
export function sectionInputText(stored: unknown, kind: SectionKind, system: UnitSystem): string {
  if (stored === undefined || stored === null) return '';
  const si = readSectionQuantity(stored, kind);
  return si === null ? String(stored) : formatNumber(sectionToDisplay(si, kind, system), 6);
}

/** What a typed section property becomes: a plain number is in the display unit ("2.1e5" → "2.1e5 mm4"). */
export function parseSectionInput(text: string, kind: SectionKind, system: UnitSystem): ParsedInput {
  const t = text.trim().replace(/\u2212/g, '-');
  if (t === '') return { value: undefined };
  const m = NUMBER_UNIT.exec(t);
  if (!m) return { value: t, problem: `"${t}" is not "<number> <unit>"` };
  if (m[2] === undefined) return { value: `${t} ${sectionUnit(kind, system)}` };
  if (readSectionQuantity(t, kind) === null) {
    return { value: t, problem: `unknown unit "${m[2]}"; use one of ${[...SECTION_UNITS[kind].units.keys()].join(', ')}` };
  }
  return { value: t };
}

// ---------------------------------------------------------------------------
// Outlines to scale

/** One straight wall of an open section: its centre line from (x0, y0) to (x1, y1) and its thickness, m. */
export interface OpenWall { x0: number; y0: number; x1: number; y1: number; t: number }

/** What a cross-section looks like, in metres, centred on the shaft's axis (y up). */
export type Outline =
  | { kind: 'round'; radii: number[]; bore: number }
  | { kind: 'rectangle'; width: number; height: number }
  | { kind: 'ellipse'; width: number; height: number }
  | { kind: 'tube'; width: number; height: number; wall: number }
  | { kind: 'open'; walls: OpenWall[] }
  | { kind: 'custom'; radius: number | null }
  | { kind: 'none' };

const len = (q: unknown) => Math.max(0, storedToSI(q, 'length') ?? 0);

/**
 * The walls of an open section laid end to end at right angles (→ ↓ ← ↑ …), so two
 * walls draw an angle and three a channel; the model gives only lengths and
 * thicknesses (J = Σ b t³/3 does not depend on how the walls meet). Centred on the
 * bounding box of the centre lines.
 */
export function openWalls(walls: unknown): OpenWall[] {
  const list = Array.isArray(walls) ? (walls as Array<Record<string, unknown>>) : [];
  const dirs = [[1, 0], [0, -1], [-1, 0], [0, 1]];
  let x = 0;
  let y = 0;
  const out: OpenWall[] = list.map((w, i) => {
    const b = len(w.length);
    const [dx, dy] = dirs[i % 4];
    const wall = { x0: x, y0: y, x1: x + dx * b, y1: y + dy * b, t: len(w.thickness) };
    x = wall.x1;
    y = wall.y1;
    return wall;
  });
  if (out.length === 0) return out;
  const xs = out.flatMap((w) => [w.x0, w.x1]);
  const ys = out.flatMap((w) => [w.y0, w.y1]);
  const cx = (Math.min(...xs) + Math.max(...xs)) / 2;
  const cy = (Math.min(...ys) + Math.max(...ys)) / 2;
  return out.map((w) => ({ x0: w.x0 - cx, y0: w.y0 - cy, x1: w.x1 - cx, y1: w.y1 - cy, t: w.t }));
}

/** The outline of a section. A custom section has no shape: it is drawn as the round of radius J/Wt (its effective radius). */
export function sectionOutline(sec: SectionLike | undefined): Outline {
  if (!sec) return { kind: 'none' };
  switch (sec.shape) {
    case 'solid':
      return { kind: 'round', radii: [len(sec.d) / 2], bore: 0 };
    case 'hollow':
      return { kind: 'round', radii: [len(sec.d) / 2], bore: Math.min(len(sec.di), len(sec.d)) / 2 };
    case 'layered': {
      const radii = (Array.isArray(sec.layers) ? (sec.layers as Array<Record<string, unknown>>) : []).map((l) => len(l.d) / 2);
      return { kind: 'round', radii, bore: Math.min(len(sec.di), 2 * Math.max(0, ...radii)) / 2 };
    }
    case 'rectangle':
      return { kind: 'rectangle', width: len(sec.width), height: len(sec.height) };
    case 'ellipse':
      return { kind: 'ellipse', width: len(sec.width), height: len(sec.height) };
    case 'rectangularTube': {
      const width = len(sec.width);
      const height = len(sec.height);
      return { kind: 'tube', width, height, wall: Math.min(len(sec.wall), width / 2, height / 2) };
    }
    case 'thinOpen':
      return { kind: 'open', walls: openWalls(sec.walls) };
    case 'custom': {
      const J = readSectionQuantity(sec.torsionConstant, 'areaMoment');
      const Wt = readSectionQuantity(sec.torsionalModulus, 'sectionModulus');
      return { kind: 'custom', radius: J !== null && Wt !== null && Wt > 0 && J > 0 ? J / Wt : null };
    }
    default:
      return { kind: 'none' };
  }
}

/** Width and height of an outline's bounding box, m (walls with their thickness). */
export function outlineBox(o: Outline): { width: number; height: number } {
  switch (o.kind) {
    case 'round': {
      const d = 2 * Math.max(0, ...o.radii);
      return { width: d, height: d };
    }
    case 'rectangle':
    case 'ellipse':
    case 'tube':
      return { width: o.width, height: o.height };
    case 'open': {
      if (o.walls.length === 0) return { width: 0, height: 0 };
      // A wall's thickness widens it across its centre line only (walls meet on their centre lines).
      const xs = o.walls.flatMap((w) => (w.x0 === w.x1 ? [w.x0 - w.t / 2, w.x0 + w.t / 2] : [w.x0, w.x1]));
      const ys = o.walls.flatMap((w) => (w.y0 === w.y1 ? [w.y0 - w.t / 2, w.y0 + w.t / 2] : [w.y0, w.y1]));
      return { width: Math.max(...xs) - Math.min(...xs), height: Math.max(...ys) - Math.min(...ys) };
    }
    case 'custom':
      return { width: 2 * (o.radius ?? 0), height: 2 * (o.radius ?? 0) };
    default:
      return { width: 0, height: 0 };
  }
}

/**
 * How a section shows in a side view, m: its outer height, the height of its
 * hollow (a bore, or a tube's inside; 0 when none), and its ring diameters
 * (layered: the layers' outer diameters inside out; else the outer height alone).
 */
export function sideView(sec: SectionLike | undefined): { outer: number; inner: number; rings: number[] } {
  const o = sectionOutline(sec);
  const outer = outlineBox(o).height;
  if (o.kind === 'round') return { outer, inner: 2 * o.bore, rings: o.radii.map((r) => 2 * r) };
  if (o.kind === 'tube') return { outer, inner: Math.max(0, o.height - 2 * o.wall), rings: [outer] };
  return { outer, inner: 0, rings: [outer] };
}

// ---------------------------------------------------------------------------
// Properties from the solution

/** A segment of the solution with the fields issue 10 adds (read with care: older solutions lack them). */
export type SegmentWithShape = Solution['shafts'][number]['segments'][number] & {
  sectionEnd?: string;
  torsionConstantEnd?: number;
  torsionalRigidityEnd?: number;
  polarMoment?: number;
  torsionalModulus?: number;
};

/** Section properties as the solution gives them, SI; null where it does not apply (a layered section's Wt). */
export interface SectionProperties {
  /** Torsion constant J, m⁴. */
  J: number;
  /** Polar moment of area Ip, m⁴. */
  Ip: number | null;
  /** Torsional modulus Wt, m³ (τmax = T / Wt for one material). */
  Wt: number | null;
  /** Where they were read: "input, segment 2" (one place; others that use the section agree). */
  from: string;
}

/**
 * A segment's properties at its start (`end` false) or end: the new shapes carry
 * Ip and Wt; a round section of one ring has Ip = J and Wt = J / r (r its outer
 * radius: the layer's at the start, half the end section's d at a taper's end);
 * a layered section has no single Wt.
 */
export function segmentProperties(seg: SegmentWithShape, end: boolean, endSection?: SectionLike): { J: number; Ip: number | null; Wt: number | null } {
  const J = end ? seg.torsionConstantEnd ?? seg.torsionConstant : seg.torsionConstant;
  if (seg.torsionalModulus !== undefined || seg.polarMoment !== undefined) {
    return { J, Ip: seg.polarMoment ?? null, Wt: seg.torsionalModulus ?? null };
  }
  if (seg.layers.length !== 1) return { J, Ip: J, Wt: null };
  const r = end && endSection ? len(endSection.d) / 2 : seg.layers[0].outerRadius;
  return { J, Ip: J, Wt: r > 0 ? J / r : null };
}

/**
 * The properties of every section that a segment uses, by id, from the first
 * segment of the solution that uses it (at its start, or as a taper's end):
 * one pass over the segments, whatever the number of sections.
 */
export function sectionPropertiesById(solution: Solution | null, sections: readonly SectionLike[]): Map<string, SectionProperties> {
  const out = new Map<string, SectionProperties>();
  if (!solution) return out;
  const byId = new Map(sections.map((s) => [s.id, s]));
  for (const sh of solution.shafts) {
    for (const seg of sh.segments as SegmentWithShape[]) {
      const where = `${sh.id}, segment ${seg.index + 1}`;
      if (!out.has(seg.section)) out.set(seg.section, { ...segmentProperties(seg, false), from: where });
      if (seg.sectionEnd !== undefined && !out.has(seg.sectionEnd)) {
        out.set(seg.sectionEnd, { ...segmentProperties(seg, true, byId.get(seg.sectionEnd)), from: `${where} (its end)` });
      }
    }
  }
  return out;
}

/** The properties of one section (see `sectionPropertiesById`), or null when no segment uses it. */
export function sectionProperties(solution: Solution | null, id: string, sections: readonly SectionLike[]): SectionProperties | null {
  return sectionPropertiesById(solution, sections).get(id) ?? null;
}

// ---------------------------------------------------------------------------
// Side view of a shaft (the schematic)

/** One segment as the side view draws it, m: from z0 to z1, its outer and hollow heights at both ends. */
export interface ProfileSegment {
  index: number;
  z0: number;
  z1: number;
  shape: string;
  /** Outer height at z0 and at z1 (equal unless tapered). */
  outer0: number;
  outer1: number;
  /** Height of the hollow (bore or tube inside) at z0 and z1; 0 when solid. */
  inner0: number;
  inner1: number;
  /** Ring diameters of a layered section, inside out (else the outer height alone). */
  rings: number[];
  /** True when the segment has an end section (`sectionEnd`). */
  tapered: boolean;
}

/**
 * The side view of one shaft's segments: each from its start section to its end
 * section (a taper varies linearly between them). A negative or unreadable length
 * draws as nothing; an unknown section as height 0.
 */
export function shaftProfile(segments: ReadonlyArray<Readonly<Record<string, unknown>>>, sections: readonly SectionLike[]): ProfileSegment[] {
  const byId = new Map(sections.map((s) => [s.id, s]));
  let z = 0;
  return segments.map((seg, index) => {
    const L = len(seg.length);
    const a = sideView(byId.get(seg.section as string));
    const tapered = typeof seg.sectionEnd === 'string' && seg.sectionEnd !== '';
    const b = tapered ? sideView(byId.get(seg.sectionEnd as string)) : a;
    const shape = String(byId.get(seg.section as string)?.shape ?? 'solid');
    const out: ProfileSegment = { index, z0: z, z1: z + L, shape, outer0: a.outer, outer1: b.outer, inner0: a.inner, inner1: b.inner, rings: a.rings, tapered };
    z += L;
    return out;
  });
}

/** Outer height of a shaft's side view at z, m (linear inside a taper; the last segment past the end). */
export function outerAt(profile: readonly ProfileSegment[], z: number): number {
  const s = profile.find((p) => z >= p.z0 - 1e-12 && z <= p.z1 + 1e-12) ?? profile[profile.length - 1];
  if (!s) return 0;
  const t = s.z1 > s.z0 ? Math.min(1, Math.max(0, (z - s.z0) / (s.z1 - s.z0))) : 0;
  return s.outer0 + t * (s.outer1 - s.outer0);
}
