/**
 * The solution format, version 1: what the engine answers for a model. All
 * numbers are SI (m, rad, N·m, Pa, N, rad/m). Signs follow the model format:
 * right-hand rule about each shaft's own +z.
 */
import Type, { type Static } from 'typebox';
import { ForcedResponse } from './forced-response.js';

/** Current solution format identifier. */
export const SOLUTION_FORMAT = 'shaftnet-solution/1';

const Num = Type.Number();
const NullableNum = Type.Union([Type.Number(), Type.Null()]);

export const Station = Type.Object({
  z: Num,
  rotation: Num,
  /** T(z−): internal torque just before z; null at the start of the shaft. */
  torqueLeft: NullableNum,
  /** T(z+): internal torque just after z; null at the end of the shaft. */
  torqueRight: NullableNum,
});
export type Station = Static<typeof Station>;

export const LayerResult = Type.Object({
  material: Type.String(),
  /** Outer radius of the layer, m: where its shear stress peaks. */
  outerRadius: Num,
  /** Largest |τ| in the layer over the segment, Pa. */
  maxShear: Num,
  allowableShear: NullableNum,
  /** maxShear / allowableShear, or null without an allowable. */
  utilisation: NullableNum,
  shearYield: NullableNum,
});
export type LayerResult = Static<typeof LayerResult>;

export const SegmentResult = Type.Object({
  index: Type.Integer(),
  section: Type.String(),
  from: Num,
  to: Num,
  /** Torsion constant J of the section, m⁴: the polar second moment of area, summed over the rings of a layered section. */
  torsionConstant: Num,
  /** Σ G·J over the layers, N·m². */
  torsionalRigidity: Num,
  /** G·J / (to − from) of the whole segment, N·m/rad; of a tapered one the exact 1/∫dz/(G·J(z)). */
  stiffness: Num,
  /** Tapered segments only: the id of the end section (torsionConstant and torsionalRigidity are then those at the start). */
  sectionEnd: Type.Optional(Type.String()),
  /** Tapered segments only: J at the end, m⁴. */
  torsionConstantEnd: Type.Optional(Num),
  /** Tapered segments only: G·J at the end, N·m². */
  torsionalRigidityEnd: Type.Optional(Num),
  /** Non-circular sections only: polar moment of area Ip, m⁴ (null where the section does not give it). */
  polarMoment: Type.Optional(NullableNum),
  /** Non-circular sections only: torsional modulus Wt, m³ (τmax = T/Wt; the layer's outerRadius is J/Wt). */
  torsionalModulus: Type.Optional(Num),
  maxAbsTorque: Num,
  /** z where |T| peaks in the segment (the governing point); in a tapered segment, where τ peaks. */
  governingZ: Num,
  maxTwistRate: Num,
  /** φ(to) − φ(from), rad. */
  twist: Num,
  layers: Type.Array(LayerResult),
});
export type SegmentResult = Static<typeof SegmentResult>;

export const Diagram = Type.Object({
  z: Type.Array(Num),
  torque: Type.Array(Num),
  rotation: Type.Array(Num),
  /** Signed shear stress at the outer fibre of the layer that governs, Pa. */
  shear: Type.Array(Num),
});
export type Diagram = Static<typeof Diagram>;

export const ShaftResult = Type.Object({
  id: Type.String(),
  name: Type.Optional(Type.String()),
  length: Num,
  stations: Type.Array(Station),
  segments: Type.Array(SegmentResult),
  /** max φ − min φ along the shaft, rad: the largest relative twist between two sections. */
  totalTwist: Num,
  diagram: Diagram,
});
export type ShaftResult = Static<typeof ShaftResult>;

export const ReactionResult = Type.Object({
  support: Type.String(),
  shaft: Type.String(),
  kind: Type.Union([Type.Literal('fixed'), Type.Literal('spring')]),
  /** Torque the support puts on the shaft, N·m. */
  torque: Num,
  /** Rotation of the shaft at the support, rad. */
  rotation: Num,
});
export type ReactionResult = Static<typeof ReactionResult>;

export const GearMeshResult = Type.Object({
  gearMesh: Type.String(),
  /** Tangential force F of the contract (F = stiffness·g), N. */
  force: Num,
  /** Torque the mesh puts on shaft a, N·m. */
  torqueA: Num,
  /** Torque the mesh puts on shaft b, N·m. */
  torqueB: Num,
  radiusA: Num,
  radiusB: Num,
  /** g = r_a φ_a − s r_b φ_b − offset, m (zero for a rigid mesh). */
  gap: Num,
});
export type GearMeshResult = Static<typeof GearMeshResult>;

export const CouplingResult = Type.Object({
  coupling: Type.String(),
  torqueA: Num,
  torqueB: Num,
  /** c = φ_a − φ_b − misfit, rad (zero for a rigid coupling). */
  twist: Num,
});
export type CouplingResult = Static<typeof CouplingResult>;

export const CheckResult = Type.Object({
  kind: Type.Union([Type.Literal('shear'), Type.Literal('twistRate'), Type.Literal('totalTwist'), Type.Literal('localPeak'), Type.Literal('crossing')]),
  shaft: Type.String(),
  segment: Type.Optional(Type.Integer()),
  material: Type.Optional(Type.String()),
  layer: Type.Optional(Type.Integer()),
  value: Num,
  limit: Num,
  utilisation: Num,
  pass: Type.Boolean(),
  /** localPeak checks: the stress raiser's id. */
  raiser: Type.Optional(Type.String()),
  /**
   * crossing checks (dynamics): the mode (1-based, as in `modes`) and the order whose crossing speed
   * (`value`, rad/s) lies in the operating range widened by the margin; `limit` is the nearer edge of
   * that band, `utilisation` 1 at the edge rising to 2 at its centre; it never passes.
   */
  mode: Type.Optional(Type.Integer()),
  order: Type.Optional(Num),
});
export type CheckResult = Static<typeof CheckResult>;

/** A stress raiser's local peak beside the nominal stress (nominal results are unchanged). */
export const StressRaiserResult = Type.Object({
  id: Type.String(),
  shaft: Type.String(),
  z: Num,
  kind: Type.Union([Type.Literal('shoulder'), Type.Literal('factor')]),
  /** Kts: from the shoulder fit, or the user's factor. */
  factor: Num,
  /** Nominal peak |τ| at z on the smaller side (the larger nominal), Pa. */
  nominalShear: Num,
  /** factor · nominalShear, Pa: a local peak. */
  localPeak: Num,
  material: Type.String(),
  allowableShear: NullableNum,
  utilisation: NullableNum,
  note: Type.Optional(Type.String()),
});
export type StressRaiserResult = Static<typeof StressRaiserResult>;

export const Warning = Type.Object({
  code: Type.String(),
  message: Type.String(),
  shafts: Type.Optional(Type.Array(Type.String())),
  connections: Type.Optional(Type.Array(Type.String())),
});
export type Warning = Static<typeof Warning>;

/**
 * Overload factors (contract, "Overload"): the factor on the loads, the assembled state held, at
 * first yield and at plastic collapse (lower-bound theorem, an LP), and where.
 */
export const Overload = Type.Object({
  firstYieldFactor: Type.Union([Num, Type.Null()]),
  /** z is null where a whole segment reaches yield at once (uniform torque). */
  firstYield: Type.Union([Type.Object({ shaft: Type.String(), z: Type.Union([Num, Type.Null()]), layer: Type.String() }), Type.Null()]),
  collapseFactor: Type.Union([Num, Type.Null()]),
  /** Places at full plastic torque in every collapse distribution. */
  plasticAt: Type.Array(Type.Object({ shaft: Type.String(), z: Num })),
  /**
   * 'none' (collapseFactor null) when no collapse mechanism exists, or the factors are omitted (a warning says why);
   * 'omitted' (collapseFactor null): a combination whose collapse factor was not sought (SN_OVERLOAD_OMITTED).
   */
  collapse: Type.Union([Type.Literal('mechanism'), Type.Literal('none'), Type.Literal('omitted')]),
});
export type Overload = Static<typeof Overload>;

/** One combination's results (a model with load cases): what is not station by station. */
export const CombinationResult = Type.Object({
  id: Type.String(),
  name: Type.Optional(Type.String()),
  reactions: Type.Array(Type.Object({ support: Type.String(), torque: Num })),
  gearMeshes: Type.Array(Type.Object({ gearMesh: Type.String(), force: Num, torqueA: Num, torqueB: Num })),
  couplings: Type.Array(Type.Object({ coupling: Type.String(), torqueA: Num, torqueB: Num })),
  segments: Type.Array(
    Type.Object({
      shaft: Type.String(),
      index: Type.Integer(),
      maxAbsTorque: Num,
      governingZ: Num,
      maxTwistRate: Num,
      twist: Num,
      layers: Type.Array(Type.Object({ material: Type.String(), maxShear: Num, utilisation: NullableNum })),
    }),
  ),
  checks: Type.Array(CheckResult),
  equilibrium: Type.Object({ maxResidual: Num }),
  /** Only when some material has shearYield (collapse: see API.md for which combinations get it). */
  overload: Type.Optional(Overload),
});
export type CombinationResult = Static<typeof CombinationResult>;

/** Extremes over the combinations, with the combination that governs each. */
export const EnvelopeResult = Type.Object({
  reactions: Type.Array(Type.Object({ support: Type.String(), min: Num, max: Num, minCombination: Type.String(), maxCombination: Type.String() })),
  shafts: Type.Array(
    Type.Object({
      id: Type.String(),
      /** In station order; null where a side does not exist (as in `stations`). */
      stations: Type.Object({
        z: Type.Array(Num),
        torqueLeftMin: Type.Array(NullableNum),
        torqueLeftMax: Type.Array(NullableNum),
        torqueRightMin: Type.Array(NullableNum),
        torqueRightMax: Type.Array(NullableNum),
        rotationMin: Type.Array(Num),
        rotationMax: Type.Array(Num),
      }),
      segments: Type.Array(
        Type.Object({
          index: Type.Integer(),
          maxAbsTorque: Num,
          combination: Type.String(),
          layers: Type.Array(Type.Object({ material: Type.String(), maxShear: Num, utilisation: NullableNum, combination: Type.String() })),
        }),
      ),
    }),
  ),
});
export type EnvelopeResult = Static<typeof EnvelopeResult>;

/** A share of a mode's strain or kinetic energy: a segment ("shaft[j]"), spring support, mesh, coupling or disc. */
export const EnergyShare = Type.Object({ item: Type.String(), share: Num });
export type EnergyShare = Static<typeof EnergyShare>;

/** A natural mode (contract, "Dynamics"): scaled so that its largest |φ| at the stations is +1. */
export const ModeResult = Type.Object({
  /** Hz; 0 for a rigid-body mode. */
  frequency: Num,
  /** rad/s. */
  angularFrequency: Num,
  rigidBody: Type.Boolean(),
  shafts: Type.Array(
    Type.Object({
      id: Type.String(),
      /** The stations' z, m, and the mode's rotation there (rad, scaled), in station order. */
      z: Type.Array(Num),
      rotation: Type.Array(Num),
      /** The shape along the shaft for drawing: the stations and exact interior points where it curves. */
      diagram: Type.Object({ z: Type.Array(Num), rotation: Type.Array(Num) }),
    }),
  ),
  energy: Type.Object({
    /** Shares of the strain energy (sum 1) over segments, spring supports, compliant meshes and couplings; null for a rigid-body mode. */
    strain: Type.Union([Type.Array(EnergyShare), Type.Null()]),
    /** Shares of the kinetic energy (sum 1) over discs and segments with inertia. */
    kinetic: Type.Array(EnergyShare),
  }),
});
export type ModeResult = Static<typeof ModeResult>;

/** A mode meeting an excitation order: order × speed = the mode's frequency (contract, "Speeds to avoid"). */
export const CrossingResult = Type.Object({
  /** 1-based index into `modes`. */
  mode: Type.Integer(),
  order: Num,
  /** Speed of the reference shaft, rad/s. */
  speed: Num,
  /** min·(1 − margin) ≤ speed ≤ max·(1 + margin): a failing check of kind 'crossing'. */
  inRange: Type.Boolean(),
});
export type CrossingResult = Static<typeof CrossingResult>;

export const Solution = Type.Object(
  {
    format: Type.Literal(SOLUTION_FORMAT),
    name: Type.String(),
    /** A model with load cases: the id of the combination the single-state fields show. */
    combination: Type.Optional(Type.String()),
    shafts: Type.Array(ShaftResult),
    reactions: Type.Array(ReactionResult),
    gearMeshes: Type.Array(GearMeshResult),
    couplings: Type.Array(CouplingResult),
    equilibrium: Type.Object({
      /** Largest |Σ torques on a shaft| over all shafts, N·m. */
      maxResidual: Num,
      shafts: Type.Array(Type.Object({ shaft: Type.String(), residual: Num })),
    }),
    /** The checks, worst utilisation first: all of them up to 10,000, else the worst 10,000 (stats.checksEvaluated counts all). */
    checks: Type.Array(CheckResult),
    /** Only when the model has stress raisers. */
    stressRaisers: Type.Optional(Type.Array(StressRaiserResult)),
    /** Only when some material has shearYield. */
    overload: Type.Optional(Overload),
    /** A model with load cases: every combination's results, and the envelope over them. */
    combinations: Type.Optional(Type.Array(CombinationResult)),
    envelope: Type.Optional(EnvelopeResult),
    /** Only with `dynamics`: the natural modes, lowest first (rigid-body modes at 0 Hz among them). */
    modes: Type.Optional(Type.Array(ModeResult)),
    /** Only with `dynamics` and a `speed`: every non-rigid mode with every order. */
    crossings: Type.Optional(Type.Array(CrossingResult)),
    /** Only with `dynamics`, excitations and a `speed`: the forced response over the running range. */
    forcedResponse: Type.Optional(ForcedResponse),
    warnings: Type.Array(Warning),
    stats: Type.Object({
      stations: Type.Integer(),
      unknowns: Type.Integer(),
      /** Nonzeros of the factor L (without the diagonal): fill. */
      factorNonzeros: Type.Integer(),
      /** Checks evaluated (the list holds at most 10,000, worst first). */
      checksEvaluated: Type.Integer(),
    }),
  },
  { $id: 'Solution', description: 'The answer for a model, SI units.' },
);
export type Solution = Static<typeof Solution>;
