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

export const DAMPING_KINDS = ["fixed", "singular-value", "manipulability"] as const;

export const dampingSchemeSchema = z.discriminatedUnion("kind", [
  /** A constant λ (Wampler 1986; Nakamura & Hanafusa 1986). */
  z.object({ kind: z.literal("fixed"), lambdaM: nonNegative("λ").refine((v) => v <= 1, "λ above 1 m is not a useful damping") }),
  /** λ² = (1 − (σ_min/ε)²)·λmax² inside σ_min < ε (Chiaverini, Siciliano & Egeland 1994). */
  z.object({
    kind: z.literal("singular-value"),
    epsilonM: positive("ε").refine((v) => v <= 1, "ε above 1 m is not a useful region width"),
    lambdaMaxM: positive("λmax").refine((v) => v <= 1, "λmax above 1 m is not a useful damping"),
  }),
  /** λ = λ0·(1 − w/w0) inside w < w0, i.e. k = λ² = λ0²(1 − w/w0)² (Nakamura & Hanafusa 1986, from memory). */
  z.object({
    kind: z.literal("manipulability"),
    w0M3: positive("w0"),
    lambda0M: positive("λ0").refine((v) => v <= 1, "λ0 above 1 m is not a useful damping"),
  }),
]);
export type DampingSchemeParams = z.infer<typeof dampingSchemeSchema>;

export const profileParamsSchema = z
  .object({
    damping: dampingSchemeSchema,
    /** Damp only the smallest singular direction (numerical filtering, Maciejewski & Klein 1988). */
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
      sigmaStopM: positive("the guard threshold").refine((v) => v <= 0.5, "the guard threshold must be at most 0.5 m"),
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
    /** Closed-loop drift correction gain K; 0 = off. Stable for 0 < K·dt < 2 (Siciliano et al., CLIK). */
    driftCorrectionGainPerS: nonNegative("the drift-correction gain"),
  })
  .refine((p) => p.driftCorrectionGainPerS / p.tickRateHz < 2, {
    message: "the drift-correction gain must satisfy K·dt < 2 at this tick rate",
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
    guard: { policy: "damp-through", sigmaStopM: 0.02 },
    watchdogMs: 200,
    shaping: { deadband: 0.1, expo: 0.3, linearAccelMPerS2: 1.0, angularAccelRadPerS2: 4.0 },
    speedOverride: { defaultPercent: 50, maxPercent: 100 },
    tickRateHz: 500,
    driftCorrectionGainPerS: 0,
  };
}

/** Profile-version states. approved versions are locked (a DB trigger refuses UPDATE/DELETE). */
export const VERSION_STATES = ["draft", "submitted", "approved", "rejected", "superseded", "retired"] as const;
export const versionStateSchema = z.enum(VERSION_STATES);
export type VersionState = z.infer<typeof versionStateSchema>;

// ---------------------------------------------------------------------------------------------------
// Site ceilings
// ---------------------------------------------------------------------------------------------------

/** ISO 10218-1:2011 (manual reduced speed): TCP speed at most 250 mm/s. The default linear ceiling. */
export const ISO_10218_REDUCED_SPEED_M_PER_S = 0.25;

export const ceilingsSchema = z.object({
  tcpLinearMaxMPerS: positive("the TCP linear ceiling").refine((v) => v <= 2, "at most 2000 mm/s"),
  tcpAngularMaxRadPerS: positive("the TCP angular ceiling").refine((v) => v <= 2 * Math.PI, "at most 360 deg/s"),
  /** Each joint-rate cap may be at most this fraction of that joint's rated speed (arm maxSpeed). */
  jointSpeedFractionMax: finite("the joint-speed fraction").refine((v) => v > 0 && v <= 1, "must be above 0 and at most 100 %"),
  watchdogMaxMs: z.number().int().min(20, "at least 20 ms").max(2000, "at most 2000 ms"),
  allowedGuardPolicies: z.array(guardPolicySchema).min(1, "allow at least one guard policy").refine((a) => new Set(a).size === a.length, "each policy once"),
  /** The smallest damping allowed at the singularity (λmax, λ0 or fixed λ). */
  lambdaMaxMinM: nonNegative("the smallest λmax").refine((v) => v <= 1, "at most 1 m"),
});
export type Ceilings = z.infer<typeof ceilingsSchema>;

export const DEFAULT_CEILINGS: Ceilings = {
  tcpLinearMaxMPerS: ISO_10218_REDUCED_SPEED_M_PER_S,
  tcpAngularMaxRadPerS: Math.PI / 2,
  jointSpeedFractionMax: 0.75,
  watchdogMaxMs: 300,
  allowedGuardPolicies: ["damp-through", "stop-before"],
  lambdaMaxMinM: 0.01,
};

export interface CeilingViolation {
  /** Dotted path of the profile field, e.g. "tcpLinearCapMPerS" or "jointRateCapsRadPerS.3". */
  field: string;
  /** The ceiling it exceeds, e.g. "tcpLinearMaxMPerS". */
  ceiling: keyof Ceilings;
  message: string;
}

const mmPerS = (v: number) => `${Math.round(v * 1000 * 10) / 10} mm/s`;
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
      message: `guard policy "${params.guard.policy}" is not allowed at this site (allowed: ${ceilings.allowedGuardPolicies.join(", ")})`,
    });
  }
  const lambdaAtSingularity = dampingAtSingularityM(params.damping);
  if (lambdaAtSingularity < ceilings.lambdaMaxMinM - 1e-12) {
    const field = params.damping.kind === "fixed" ? "damping.lambdaM" : params.damping.kind === "singular-value" ? "damping.lambdaMaxM" : "damping.lambda0M";
    out.push({
      field,
      ceiling: "lambdaMaxMinM",
      message: `damping at the singularity ${lambdaAtSingularity} m is below the site minimum of ${ceilings.lambdaMaxMinM} m`,
    });
  }
  return out;
}
