/**
 * The model format, version 1, as TypeBox schemas: one source for the
 * TypeScript types, request validation and the OpenAPI document.
 *
 * The schemas check shape (fields, types, enums). What needs the whole model
 * (units of the right kind, references that resolve, points on their shaft,
 * positive sizes) is checked by `server/engine/normalise.ts`, which names each
 * field by JSON pointer in the same way.
 */
import Type, { type Static } from 'typebox';

/** Current model format identifier. */
export const MODEL_FORMAT = 'shaftnet/1';

const Id = Type.String({ minLength: 1, maxLength: 100, description: 'Unique within its list.' });
const Ref = (what: string) => Type.String({ minLength: 1, maxLength: 100, description: `Id of a ${what}.` });
const Text = (max: number) => Type.String({ maxLength: max });

/** A number in SI base units, or a string "<number> <unit>". */
export const Quantity = Type.Union([Type.Number(), Type.String({ maxLength: 64 })], {
  description: 'A number in SI base units, or "<number> <unit>" such as "40 mm" or "79.3 GPa".',
});
export type Quantity = Static<typeof Quantity>;

const strict = { additionalProperties: false } as const;

export const Material = Type.Object(
  {
    id: Id,
    name: Type.Optional(Text(200)),
    G: Type.Optional(Quantity),
    E: Type.Optional(Quantity),
    nu: Type.Optional(Type.Number({ description: "Poisson's ratio, with E instead of G." })),
    density: Type.Optional(Quantity),
    allowableShear: Type.Optional(Quantity),
    shearYield: Type.Optional(Quantity),
  },
  strict,
);
export type Material = Static<typeof Material>;

export const Layer = Type.Object({ d: Quantity, material: Ref('material') }, strict);
export type Layer = Static<typeof Layer>;

export const SectionShape = Type.Union([
  Type.Literal('solid'),
  Type.Literal('hollow'),
  Type.Literal('layered'),
  Type.Literal('rectangle'),
  Type.Literal('ellipse'),
  Type.Literal('rectangularTube'),
  Type.Literal('thinOpen'),
  Type.Literal('custom'),
]);
export type SectionShape = Static<typeof SectionShape>;

/** One wall of a thin open section: its centre-line length and thickness. */
export const OpenWall = Type.Object({ length: Quantity, thickness: Quantity }, strict);
export type OpenWall = Static<typeof OpenWall>;

/**
 * Solid needs d; hollow needs d and di; layered needs layers (inside out) and an optional bore di.
 * rectangle and ellipse need width and height (full axes); rectangularTube width, height (outside)
 * and wall; thinOpen walls (and polarMoment for inertia); custom torsionConstant and
 * torsionalModulus (polarMoment, plasticTorqueModulus optional).
 */
export const Section = Type.Object(
  {
    id: Id,
    name: Type.Optional(Text(200)),
    shape: SectionShape,
    d: Type.Optional(Quantity),
    di: Type.Optional(Quantity),
    layers: Type.Optional(Type.Array(Layer, { minItems: 1, maxItems: 32 })),
    width: Type.Optional(Quantity),
    height: Type.Optional(Quantity),
    wall: Type.Optional(Quantity),
    walls: Type.Optional(Type.Array(OpenWall, { minItems: 1, maxItems: 64 })),
    polarMoment: Type.Optional(Quantity),
    torsionConstant: Type.Optional(Quantity),
    torsionalModulus: Type.Optional(Quantity),
    plasticTorqueModulus: Type.Optional(Quantity),
  },
  strict,
);
export type Section = Static<typeof Section>;

export const Segment = Type.Object(
  {
    length: Quantity,
    section: Ref('section'),
    /** Tapered segment: the section at its end (solid–solid or hollow–hollow with `section`). */
    sectionEnd: Type.Optional(Ref('section')),
    material: Type.Optional(Ref('material')),
  },
  strict,
);
export type Segment = Static<typeof Segment>;

export const Shaft = Type.Object(
  {
    id: Id,
    name: Type.Optional(Text(200)),
    segments: Type.Array(Segment, { minItems: 1 }),
  },
  strict,
);
export type Shaft = Static<typeof Shaft>;

export const Support = Type.Object(
  {
    id: Id,
    shaft: Ref('shaft'),
    at: Quantity,
    kind: Type.Union([Type.Literal('fixed'), Type.Literal('spring')]),
    rotation: Type.Optional(Quantity),
    stiffness: Type.Optional(Quantity),
  },
  strict,
);
export type Support = Static<typeof Support>;

export const PointTorque = Type.Object(
  {
    id: Id,
    shaft: Ref('shaft'),
    at: Quantity,
    /** The load case it belongs to: required when the model has loadCases, refused otherwise. */
    case: Type.Optional(Ref('load case')),
    torque: Type.Optional(Quantity),
    power: Type.Optional(Quantity),
    speed: Type.Optional(Quantity),
  },
  strict,
);
export type PointTorque = Static<typeof PointTorque>;

export const DistributedTorque = Type.Object(
  {
    id: Id,
    shaft: Ref('shaft'),
    case: Type.Optional(Ref('load case')),
    from: Quantity,
    to: Quantity,
    start: Quantity,
    end: Quantity,
  },
  strict,
);
export type DistributedTorque = Static<typeof DistributedTorque>;

export const GearEnd = Type.Object(
  {
    shaft: Ref('shaft'),
    at: Quantity,
    radius: Type.Optional(Quantity),
    teeth: Type.Optional(Type.Integer({ minimum: 1, maximum: 100000 })),
  },
  strict,
);
export type GearEnd = Static<typeof GearEnd>;

export const GearMesh = Type.Object(
  {
    id: Id,
    a: GearEnd,
    b: GearEnd,
    module: Type.Optional(Quantity),
    sense: Type.Union([Type.Literal('opposite'), Type.Literal('same')]),
    stiffness: Type.Optional(Quantity),
    offset: Type.Optional(Quantity),
  },
  strict,
);
export type GearMesh = Static<typeof GearMesh>;

export const CouplingEnd = Type.Object({ shaft: Ref('shaft'), at: Quantity }, strict);
export type CouplingEnd = Static<typeof CouplingEnd>;

export const Coupling = Type.Object(
  {
    id: Id,
    a: CouplingEnd,
    b: CouplingEnd,
    stiffness: Type.Optional(Quantity),
    misfit: Type.Optional(Quantity),
  },
  strict,
);
export type Coupling = Static<typeof Coupling>;

export const Disc = Type.Object({ id: Id, shaft: Ref('shaft'), at: Quantity, inertia: Quantity }, strict);
export type Disc = Static<typeof Disc>;

/** A local stress raiser: a shoulder fillet (factor from a published fit) or a factor given by the user. */
export const StressRaiser = Type.Object(
  {
    id: Id,
    shaft: Ref('shaft'),
    at: Quantity,
    kind: Type.Union([Type.Literal('shoulder'), Type.Literal('factor')]),
    fillet: Type.Optional(Quantity),
    factor: Type.Optional(Type.Number()),
    note: Type.Optional(Text(200)),
  },
  strict,
);
export type StressRaiser = Static<typeof StressRaiser>;

/** A named set of loads (point and distributed torques name it by `case`). */
export const LoadCase = Type.Object({ id: Id, name: Type.Optional(Text(200)) }, strict);
export type LoadCase = Static<typeof LoadCase>;

/** A combination of load cases: each case's loads times its factor, plus the assembled state. */
export const Combination = Type.Object(
  {
    id: Id,
    name: Type.Optional(Text(200)),
    factors: Type.Record(Type.String({ minLength: 1, maxLength: 100 }), Type.Number(), { description: 'Factor by load case id.' }),
  },
  strict,
);
export type Combination = Static<typeof Combination>;

export const Limits = Type.Object(
  { twistRate: Type.Optional(Quantity), totalTwist: Type.Optional(Quantity) },
  strict,
);
export type Limits = Static<typeof Limits>;

/** A harmonic torque of `order` × the reference shaft's speed, at a point (dynamics). */
export const Excitation = Type.Object(
  { id: Id, shaft: Ref('shaft'), at: Quantity, amplitude: Quantity, order: Type.Number({ description: 'Cycles per revolution of the reference shaft (> 0).' }) },
  strict,
);
export type Excitation = Static<typeof Excitation>;

/**
 * Torsional dynamics (contract, "Dynamics"): natural frequencies and modes, speeds to avoid in the
 * operating range of `speed.shaft`, and the forced response to the excitations.
 */
export const Dynamics = Type.Object(
  {
    /** How many of the lowest natural frequencies to find (default 6; rigid-body modes count). */
    modes: Type.Optional(Type.Number({ description: 'Lowest natural frequencies to find, a positive integer (default 6).' })),
    /** Every mode up to this frequency instead of `modes`. */
    maxFrequency: Type.Optional(Quantity),
    speed: Type.Optional(Type.Object({ shaft: Ref('shaft'), min: Quantity, max: Quantity }, strict)),
    orders: Type.Optional(Type.Array(Type.Number(), { maxItems: 64, description: 'Excitation orders per revolution of speed.shaft.' })),
    margin: Type.Optional(Type.Number({ description: 'Relative widening of the operating range around each crossing (0.1 = ±10 %).' })),
    damping: Type.Optional(Type.Number({ description: 'Damping ratio ζ of every elastic part (hysteretic: k(1 + 2iζ)).' })),
    excitations: Type.Optional(Type.Array(Excitation)),
  },
  strict,
);
export type Dynamics = Static<typeof Dynamics>;

export const Model = Type.Object(
  {
    format: Type.Literal(MODEL_FORMAT),
    name: Text(200),
    notes: Type.Optional(Text(20000)),
    materials: Type.Array(Material),
    sections: Type.Array(Section),
    shafts: Type.Array(Shaft, { minItems: 1 }),
    supports: Type.Optional(Type.Array(Support)),
    torques: Type.Optional(Type.Array(PointTorque)),
    distributedTorques: Type.Optional(Type.Array(DistributedTorque)),
    gearMeshes: Type.Optional(Type.Array(GearMesh)),
    couplings: Type.Optional(Type.Array(Coupling)),
    discs: Type.Optional(Type.Array(Disc)),
    stressRaisers: Type.Optional(Type.Array(StressRaiser)),
    limits: Type.Optional(Limits),
    loadCases: Type.Optional(Type.Array(LoadCase, { minItems: 1 })),
    combinations: Type.Optional(Type.Array(Combination, { minItems: 1 })),
    dynamics: Type.Optional(Dynamics),
  },
  { $id: 'Model', additionalProperties: false, description: 'A Shaftnet model, format shaftnet/1.' },
);
export type Model = Static<typeof Model>;
