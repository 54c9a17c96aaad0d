/**
 * Section properties for Saint-Venant torsion of circular sections.
 *
 * A section is a stack of bonded concentric rings (a solid or hollow section is
 * one ring). Plane sections stay plane and every ring shares the twist rate
 * θ = dφ/dz, so the rings act as torsional springs in parallel:
 * T = θ·Σ G_i J_i, and in ring i τ(r) = G_i·r·θ, largest at its outer radius.
 */

/** A ring of a section with its material resolved. */
export interface SectionLayer {
  readonly materialId: string;
  readonly G: number;
  readonly rInner: number;
  readonly rOuter: number;
  /** Polar second moment of area of the ring, m⁴. */
  readonly J: number;
  readonly allowableShear: number | null;
  readonly shearYield: number | null;
}

interface RingInput {
  readonly rInner: number;
  readonly rOuter: number;
  readonly material: { readonly id: string; readonly G: number; readonly allowableShear: number | null; readonly shearYield: number | null };
}

/** Polar second moment of area of a ring, J = π (r_o⁴ − r_i⁴) / 2. */
export function ringPolarMoment(rInner: number, rOuter: number): number {
  // (r_o² − r_i²)(r_o² + r_i²) keeps precision for thin rings, where r_o⁴ − r_i⁴ cancels.
  const o2 = rOuter * rOuter;
  const i2 = rInner * rInner;
  return (Math.PI / 2) * (o2 - i2) * (o2 + i2);
}

/** Resolves rings into layers with their polar moments. */
export function buildSectionLayers(rings: readonly RingInput[]): SectionLayer[] {
  return rings.map((r) => ({
    materialId: r.material.id,
    G: r.material.G,
    rInner: r.rInner,
    rOuter: r.rOuter,
    J: ringPolarMoment(r.rInner, r.rOuter),
    allowableShear: r.material.allowableShear,
    shearYield: r.material.shearYield,
  }));
}
