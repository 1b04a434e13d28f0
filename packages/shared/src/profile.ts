import { z } from "zod";

/**
 * Rate profiles: the tuning of the control step for one operator on one arm. Stored SI; every field
 * name carries its unit. σ (singular values of the 6×n geometric Jacobian with [m; rad] rows) and λ are
 * in metres ("M") for the translation-dominated directions, as in METHODS.md §8; manipulability w of a
 * 6×6 Jacobian is in m³ ("M3").
 */
const finite = (what: string) => z.number({ error: `${what} must be a number` }).refine(Number.isFinite, `${what} must be finite`);
const positive = (what: string) => finite(what).refine((v) => v > 0, `${what} must be above zero`);
const nonNegative = (what: string) => finite(what).refine((v) => v >= 0, `${what} must be zero or more`);

export const GUARD_POLICIES = ["damp-through", "stop-before"] as const;
export const guardPolicySchema = z.enum(GUARD_POLICIES);
export type GuardPolicy = z.infer<typeof guardPolicySchema>;

/** The guard policies as people read them (the labels map of labels.ts lists this one too). */
export const GUARD_POLICY_LABELS: Record<GuardPolicy, string> = {
  "damp-through": "Damp through",
  "stop-before": "Stop before, until acknowledged",
};

export const DAMPING_KINDS = ["fixed", "singular-value", "manipulability"] as const;

export const dampingSchemeSchema = z.discriminatedUnion("kind", [
  /** A constant λ (Wampler 1986; Nakamura & Hanafusa 1986). */
  z.object({ kind: z.literal("fixed"), lambdaM: nonNegative("λ").refine((v) => v <= 1, "λ above 1000 mm is not a useful damping") }),
  /** λ² = (1 − (σ_min/ε)²)·λmax² inside σ_min < ε (Chiaverini, Siciliano & Egeland 1994). */
  z.object({
    kind: z.literal("singular-value"),
    epsilonM: positive("ε").refine((v) => v <= 1, "ε above 1000 mm is not a useful region width"),
    lambdaMaxM: positive("λmax").refine((v) => v <= 1, "λmax above 1000 mm is not a useful damping"),
  }),
  /** λ = λ0·(1 − w/w0) inside w < w0, i.e. k = λ² = λ0²(1 − w/w0)² (Nakamura & Hanafusa 1986, from memory). */
  z.object({
    kind: z.literal("manipulability"),
    w0M3: positive("w0"),
    lambda0M: positive("λ0").refine((v) => v <= 1, "λ0 above 1000 mm is not a useful damping"),
  }),
]);
export type DampingSchemeParams = z.infer<typeof dampingSchemeSchema>;

export const profileParamsSchema = z
  .object({
    damping: dampingSchemeSchema,
    /**
     * Numerical filtering (Maciejewski & Klein 1988): damp only the singular directions whose σ is below ε,
     * every one of them, instead of all directions. The name is historical; kept so stored versions parse.
     */
    dampSmallestOnly: z.boolean(),
    /** One cap per joint, rad/s (m/s for a prismatic joint). Checked against the arm's joint count. */
    jointRateCapsRadPerS: z.array(positive("a joint rate cap")).min(1).max(12),
    tcpLinearCapMPerS: positive("the TCP linear cap").refine((v) => v <= 2, "the TCP linear cap must be at most 2000 mm/s"),
    tcpAngularCapRadPerS: positive("the TCP angular cap").refine((v) => v <= 2 * Math.PI, "the TCP angular cap must be at most 360 deg/s"),
    /** Stand-off from each joint limit that motion never enters. */
    jointLimitMarginRad: nonNegative("the joint-limit margin").refine((v) => v <= 0.5, "the joint-limit margin must be at most 28.6 deg"),
    /** Width of the slow-down zone before the stand-off. */
    jointLimitSlowZoneRad: nonNegative("the slow-down zone").refine((v) => v <= 1, "the slow-down zone must be at most 57.3 deg"),
    guard: z.object({
      policy: guardPolicySchema,
      /** "stop-before": hold when σ_min would fall below this, until the operator acknowledges. */
      sigmaStopM: positive("the guard threshold").refine((v) => v <= 0.5, "the guard threshold must be at most 500 mm"),
    }),
    /** No input for this long → controlled stop. Common practice 100–250 ms (METHODS.md §8). */
    watchdogMs: z.number().int("whole milliseconds").min(20, "the watchdog must be at least 20 ms").max(2000, "the watchdog must be at most 2000 ms"),
    shaping: z.object({
      /** Stick deadband as a fraction of full deflection, rescaled (common practice 5–15 %). */
      deadband: finite("the deadband").refine((v) => v >= 0 && v <= 0.5, "the deadband must be 0–50 %"),
      /** 0 = linear, 1 = cubic: out = (1 − e)·x + e·x³. */
      expo: finite("the expo").refine((v) => v >= 0 && v <= 1, "the expo must be 0–1"),
      /** Slew-rate (acceleration) limits on the commanded twist; they also set the controlled-stop ramp. */
      linearAccelMPerS2: positive("the linear acceleration limit").refine((v) => v <= 20, "at most 20 m/s²"),
      angularAccelRadPerS2: positive("the angular acceleration limit").refine((v) => v <= 100, "at most 100 rad/s²"),
    }),
    speedOverride: z
      .object({
        defaultPercent: z.number().int().min(1, "at least 1 %").max(100, "at most 100 %"),
        maxPercent: z.number().int().min(1, "at least 1 %").max(100, "at most 100 %"),
      })
      .refine((o) => o.defaultPercent <= o.maxPercent, { message: "the default override must not exceed the maximum", path: ["defaultPercent"] }),
    tickRateHz: z.number().int("a whole number of hertz").min(125, "the tick rate must be 125–1000 Hz").max(1000, "the tick rate must be 125–1000 Hz"),
    /**
     * Closed-loop drift correction gain K (closed-loop inverse kinematics, Siciliano et al. 2009, ch. 3);
     * 0 = off. The discrete error update is e ← (1 − K·dt)·e, so 0 < K·dt ≤ 1 converges without
     * overshoot; above 1 the discrete loop overshoots and oscillates (derived; see the refine below).
     */
    driftCorrectionGainPerS: nonNegative("the drift-correction gain"),
    // The fields below came after the first stored versions. Their defaults are what a version without
    // them means: it still parses, and its stored SHA-256 (taken over the JSON as saved) is never
    // recomputed from the parsed object, so an old approval stays valid.
    /**
     * Fraction of each joint's rated acceleration (the arm's maxAccel, or its default) the step may use
     * to change q̇ per tick; the whole q̇ change is scaled by one factor (PRODUCT.md step 6). 0.5 is our
     * choice (common practice, no source).
     */
    jointAccelFraction: finite("the joint acceleration fraction")
      .refine((v) => v > 0 && v <= 1, "the joint acceleration fraction must be above 0 and at most 100 %")
      .default(0.5),
    /**
     * Drift correction re-anchors the reference pose when the error grows beyond this (the arm was held
     * back by a limit, not drifting). 5 mm default (the value the step used before it became a field), at
     * most 50 mm: our choice, no source.
     */
    driftReanchorM: positive("the re-anchor distance").refine((v) => v <= 0.05, "the re-anchor distance must be at most 50 mm").default(0.005),
    /**
     * Redundant arms (n > 6): a null-space term (I − J⁺J)·q̇₀, q̇₀ = −gain·∇H(q) with H a joint-limit cost
     * (Liégeois 1977) keeps joints away from their limits. Ignored on arms with six joints or fewer.
     */
    nullSpace: z
      .object({
        enabled: z.boolean({ error: "null-space on/off must be true or false" }),
        gainPerS: nonNegative("the null-space gain"),
      })
      .default(() => ({ enabled: false, gainPerS: 0.5 })),
  })
  .refine((p) => p.driftCorrectionGainPerS / p.tickRateHz <= 1, {
    // e_{k+1} = (1 − K·dt)·e_k: for K·dt ≤ 1 the error decays monotonically, above 1 it changes sign each
    // tick (overshoot), above 2 it grows (derived).
    message: "the drift-correction gain must satisfy K·dt ≤ 1 at this tick rate (above 1 the discrete loop overshoots)",
    path: ["driftCorrectionGainPerS"],
  })
  .refine((p) => p.damping.kind !== "singular-value" || p.guard.sigmaStopM <= p.damping.epsilonM, {
    message: "the guard threshold should lie inside the damped region (≤ ε)",
    path: ["guard", "sigmaStopM"],
  });
export type ProfileParams = z.infer<typeof profileParamsSchema>;

/** Defaults for a new profile on an arm with the given rated joint speeds (rad/s). */
export function defaultProfileParams(ratedJointSpeedsRadPerS: readonly number[]): ProfileParams {
  return {
    damping: { kind: "singular-value", epsilonM: 0.04, lambdaMaxM: 0.04 },
    dampSmallestOnly: false,
    jointRateCapsRadPerS: ratedJointSpeedsRadPerS.map((s) => Math.round(s * 0.5 * 1e6) / 1e6),
    tcpLinearCapMPerS: 0.25,
    tcpAngularCapRadPerS: Math.PI / 2,
    jointLimitMarginRad: (5 * Math.PI) / 180,
    jointLimitSlowZoneRad: (15 * Math.PI) / 180,
    // Stop before the singular region until the operator acknowledges: the singularity protection of
    // ISO 10218-1:2011 ("singularity protection", 5.11 in METHODS.md §7 — clause number and wording from
    // memory, not verified; that edition was replaced in February 2025 by ISO 10218-1:2025, whose
    // numbering differs). The site's ceilings may still allow damp-through.
    guard: { policy: "stop-before", sigmaStopM: 0.02 },
    watchdogMs: 200,
    shaping: { deadband: 0.1, expo: 0.3, linearAccelMPerS2: 1.0, angularAccelRadPerS2: 4.0 },
    speedOverride: { defaultPercent: 50, maxPercent: 100 },
    tickRateHz: 500,
    driftCorrectionGainPerS: 0,
    jointAccelFraction: 0.5,
    driftReanchorM: 0.005,
    nullSpace: { enabled: false, gainPerS: 0.5 },
  };
}

/**
 * Profile-version states. approved versions are locked (a DB trigger refuses UPDATE/DELETE). withdrawn: a
 * submission taken back by its author or replaced by a newer submission of the profile (migration 0016).
 */
export const VERSION_STATES = ["draft", "submitted", "approved", "rejected", "superseded", "retired", "withdrawn"] as const;
export const versionStateSchema = z.enum(VERSION_STATES);
export type VersionState = z.infer<typeof versionStateSchema>;

// ---------------------------------------------------------------------------------------------------
// Site ceilings
// ---------------------------------------------------------------------------------------------------

/**
 * TCP speed at most 250 mm/s in manual reduced speed: the figure is from ISO 10218-1:2011, confirmed in
 * secondary sources only (METHODS.md §7; the clause, 5.6 "reduced speed control", is from memory, not
 * verified). That edition was replaced in February 2025 by ISO 10218-1:2025, which keeps a reduced-speed
 * mode; whether it keeps the same figure was not checked. The default linear ceiling.
 */
export const ISO_10218_REDUCED_SPEED_M_PER_S = 0.25;

/**
 * Distance covered by a controlled stop from `speedMPerS` at a constant deceleration `decelMPerS2`:
 * v²/(2a) (constant-deceleration kinematics, derived). Infinity when the deceleration is not positive.
 */
export function controlledStopDistanceM(speedMPerS: number, decelMPerS2: number): number {
  if (!(decelMPerS2 > 0)) return Infinity;
  const v = Math.abs(speedMPerS);
  return (v * v) / (2 * decelMPerS2);
}

/** A profile's top TCP linear speed: its linear cap at the highest override it allows. */
export function topTcpSpeedMPerS(params: Pick<ProfileParams, "tcpLinearCapMPerS" | "speedOverride">): number {
  return (params.tcpLinearCapMPerS * params.speedOverride.maxPercent) / 100;
}

export const EVIDENCE_RULES = ["builtin-trials", "none"] as const;
export type EvidenceRule = (typeof EVIDENCE_RULES)[number];

export const ceilingsSchema = z.object({
  tcpLinearMaxMPerS: positive("the TCP linear ceiling").refine((v) => v <= 2, "at most 2000 mm/s"),
  tcpAngularMaxRadPerS: positive("the TCP angular ceiling").refine((v) => v <= 2 * Math.PI, "at most 360 deg/s"),
  /** Each joint-rate cap may be at most this fraction of that joint's rated speed (arm maxSpeed). */
  jointSpeedFractionMax: finite("the joint-speed fraction").refine((v) => v > 0 && v <= 1, "must be above 0 and at most 100 %"),
  watchdogMaxMs: z.number().int().min(20, "at least 20 ms").max(2000, "at most 2000 ms"),
  allowedGuardPolicies: z.array(guardPolicySchema).min(1, "allow at least one guard policy").refine((a) => new Set(a).size === a.length, "each policy once"),
  /** The smallest damping allowed at the singularity (λmax, λ0 or fixed λ). */
  lambdaMaxMinM: nonNegative("the smallest λmax").refine((v) => v <= 1, "at most 1000 mm"),
  // The two below came after ceilings revision 1 was stored; their defaults let that row parse.
  /**
   * Longest controlled stop from a version's top TCP speed, v²/(2a). 50 mm default: common practice, no
   * source. At most 1 m (our bound on a useful ceiling).
   */
  stoppingDistanceMaxM: positive("the longest stopping distance").refine((v) => v <= 1, "at most 1000 mm").default(0.05),
  /**
   * Smallest TCP linear deceleration (shaping.linearAccelMPerS2, which also sets the controlled-stop ramp).
   * 0.5 m/s² default: our choice, common practice, no source. At most 20 m/s² (the profile's own bound).
   */
  decelerationMinMPerS2: positive("the smallest deceleration").refine((v) => v <= 20, "at most 20 m/s²").default(0.5),
  /**
   * The evidence a version must be submitted with (issue 10). "builtin-trials" (the default): a run of every
   * built-in trial of its arm with the version's parameters (the server runs any not attached), none
   * stalled by a numerical fault or by falling behind — a hold of the stop-before guard is the profile's
   * own answer and counts as finished — and none stopping farther than stoppingDistanceMaxM, predicted or
   * measured. "none": no evidence required.
   */
  evidenceRequired: z.enum(EVIDENCE_RULES).default("builtin-trials"),
});
export type Ceilings = z.infer<typeof ceilingsSchema>;

export const DEFAULT_CEILINGS: Ceilings = {
  tcpLinearMaxMPerS: ISO_10218_REDUCED_SPEED_M_PER_S,
  tcpAngularMaxRadPerS: Math.PI / 2,
  jointSpeedFractionMax: 0.75,
  watchdogMaxMs: 300,
  allowedGuardPolicies: ["damp-through", "stop-before"],
  lambdaMaxMinM: 0.01,
  stoppingDistanceMaxM: 0.05,
  decelerationMinMPerS2: 0.5,
  evidenceRequired: "builtin-trials",
};

export interface CeilingViolation {
  /** Dotted path of the profile field, e.g. "tcpLinearCapMPerS" or "jointRateCapsRadPerS.3". */
  field: string;
  /** The ceiling it exceeds, e.g. "tcpLinearMaxMPerS". */
  ceiling: keyof Ceilings;
  message: string;
}

const mmPerS = (v: number) => `${Math.round(v * 1000 * 10) / 10} mm/s`;
const mm = (v: number) => `${Math.round(v * 1000 * 10) / 10} mm`;
const mPerS2 = (v: number) => `${Math.round(v * 1000) / 1000} m/s²`;
const degPerS = (v: number) => `${Math.round(((v * 180) / Math.PI) * 10) / 10} deg/s`;

/** The damping a profile applies at the singularity itself (σ_min = 0 or w = 0). */
export function dampingAtSingularityM(d: DampingSchemeParams): number {
  return d.kind === "fixed" ? d.lambdaM : d.kind === "singular-value" ? d.lambdaMaxM : d.lambda0M;
}

/**
 * Every way a profile's parameters exceed the site ceilings; empty when compliant. `ratedJointSpeedsRadPerS`
 * are the arm's joint maxSpeed values (a joint without one is not bounded by the fraction ceiling).
 */
export function checkCeilings(
  params: ProfileParams,
  ceilings: Ceilings,
  ratedJointSpeedsRadPerS: readonly (number | undefined)[],
): CeilingViolation[] {
  const out: CeilingViolation[] = [];
  if (params.tcpLinearCapMPerS > ceilings.tcpLinearMaxMPerS + 1e-12) {
    out.push({
      field: "tcpLinearCapMPerS",
      ceiling: "tcpLinearMaxMPerS",
      message: `TCP linear cap ${mmPerS(params.tcpLinearCapMPerS)} exceeds the site ceiling of ${mmPerS(ceilings.tcpLinearMaxMPerS)}`,
    });
  }
  if (params.tcpAngularCapRadPerS > ceilings.tcpAngularMaxRadPerS + 1e-12) {
    out.push({
      field: "tcpAngularCapRadPerS",
      ceiling: "tcpAngularMaxRadPerS",
      message: `TCP angular cap ${degPerS(params.tcpAngularCapRadPerS)} exceeds the site ceiling of ${degPerS(ceilings.tcpAngularMaxRadPerS)}`,
    });
  }
  params.jointRateCapsRadPerS.forEach((cap, i) => {
    const rated = ratedJointSpeedsRadPerS[i];
    if (rated === undefined) return;
    const limit = rated * ceilings.jointSpeedFractionMax;
    if (cap > limit + 1e-12) {
      out.push({
        field: `jointRateCapsRadPerS.${i}`,
        ceiling: "jointSpeedFractionMax",
        message: `joint ${i + 1} cap ${degPerS(cap)} exceeds ${Math.round(ceilings.jointSpeedFractionMax * 100)} % of its rated ${degPerS(rated)} (${degPerS(limit)})`,
      });
    }
  });
  if (params.watchdogMs > ceilings.watchdogMaxMs) {
    out.push({
      field: "watchdogMs",
      ceiling: "watchdogMaxMs",
      message: `watchdog ${params.watchdogMs} ms is longer than the site ceiling of ${ceilings.watchdogMaxMs} ms`,
    });
  }
  if (!ceilings.allowedGuardPolicies.includes(params.guard.policy)) {
    out.push({
      field: "guard.policy",
      ceiling: "allowedGuardPolicies",
      message: `the guard policy "${GUARD_POLICY_LABELS[params.guard.policy]}" is not allowed at this site (allowed: ${ceilings.allowedGuardPolicies.map((p) => GUARD_POLICY_LABELS[p]).join(", ")})`,
    });
  }
  const lambdaAtSingularity = dampingAtSingularityM(params.damping);
  if (lambdaAtSingularity < ceilings.lambdaMaxMinM - 1e-12) {
    const field = params.damping.kind === "fixed" ? "damping.lambdaM" : params.damping.kind === "singular-value" ? "damping.lambdaMaxM" : "damping.lambda0M";
    out.push({
      field,
      ceiling: "lambdaMaxMinM",
      message: `damping at the singularity ${mm(lambdaAtSingularity)} is below the site minimum of ${mm(ceilings.lambdaMaxMinM)}`,
    });
  }
  const decel = params.shaping.linearAccelMPerS2;
  if (decel < ceilings.decelerationMinMPerS2 - 1e-12) {
    out.push({
      field: "shaping.linearAccelMPerS2",
      ceiling: "decelerationMinMPerS2",
      message: `linear deceleration ${mPerS2(decel)} is below the site minimum of ${mPerS2(ceilings.decelerationMinMPerS2)}`,
    });
  }
  const topSpeed = topTcpSpeedMPerS(params);
  const stop = controlledStopDistanceM(topSpeed, decel);
  if (stop > ceilings.stoppingDistanceMaxM + 1e-12) {
    out.push({
      field: "shaping.linearAccelMPerS2",
      ceiling: "stoppingDistanceMaxM",
      message: `a controlled stop from the top speed ${mmPerS(topSpeed)} (TCP cap at ${params.speedOverride.maxPercent} % override) at ${mPerS2(decel)} takes ${mm(stop)} (v²/2a), longer than the site maximum of ${mm(ceilings.stoppingDistanceMaxM)}`,
    });
  }
  return out;
}

// ---------------------------------------------------------------------------------------------------
// Warnings: allowed, but worth a second look
// ---------------------------------------------------------------------------------------------------

export interface ProfileWarning {
  /** Dotted path of the profile field, as in CeilingViolation. */
  field: string;
  message: string;
}

/**
 * Settings the schema accepts but a reviewer should look at twice. Never a refusal: a version with
 * warnings may be saved, submitted and approved.
 */
export function profileWarnings(params: ProfileParams): ProfileWarning[] {
  const out: ProfileWarning[] = [];
  const d = params.damping;
  if (d.kind === "singular-value" && d.lambdaMaxM > d.epsilonM + 1e-12) {
    // Along a singular direction DLS has gain σ/(σ² + λ²) (Buss 2004 notes; Deo & Walker 1995), i.e.
    // σ²/(σ² + λ²) of the undamped 1/σ. With the
    // schedule λ² = (1 − (σ/ε)²)·λmax², at σ = ε/√2 that is ε²/(ε² + λmax²), below one half when
    // λmax > ε (derived).
    out.push({
      field: "damping.lambdaMaxM",
      message: `λmax ${d.lambdaMaxM} m is above the damped region ε ${d.epsilonM} m: the tool passes less than half the commanded speed along the weak direction already at σ_min = ε/√2, well before the singularity`,
    });
  }
  return out;
}
