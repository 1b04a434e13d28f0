import { describe, expect, it } from "vitest";
import { armModelSchema } from "./arm.ts";
import {
  ceilingsSchema,
  checkCeilings,
  controlledStopDistanceM,
  DEFAULT_CEILINGS,
  defaultProfileParams,
  profileParamsSchema,
  profileWarnings,
  type ProfileParams,
} from "./profile.ts";

// Rated speeds of the six-axis demo arm (PRODUCT.md table): 150, 150, 190, 300, 300, 450 deg/s.
const RATED_RAD_PER_S = [150, 150, 190, 300, 300, 450].map((d) => (d * Math.PI) / 180);
const base = (): ProfileParams => defaultProfileParams(RATED_RAD_PER_S);

/** A version as stored before jointAccelFraction, driftReanchorM and nullSpace existed (JSON as saved). */
function storedBeforeTheNewFields(): Record<string, unknown> {
  const { jointAccelFraction: _a, driftReanchorM: _r, nullSpace: _n, ...old } = JSON.parse(JSON.stringify(base())) as ProfileParams;
  return old;
}

describe("profile parameters added after the first stored versions", () => {
  it("a version stored without them still parses, with the documented defaults", () => {
    const old = storedBeforeTheNewFields();
    expect(old).not.toHaveProperty("jointAccelFraction");
    const parsed = profileParamsSchema.parse(old);
    expect(parsed.jointAccelFraction).toBe(0.5);
    expect(parsed.driftReanchorM).toBe(0.005);
    expect(parsed.nullSpace).toEqual({ enabled: false, gainPerS: 0.5 });
  });

  it("parsing an old version does not change the object it was given, and two parses do not share the default null-space object", () => {
    const old = storedBeforeTheNewFields();
    const text = JSON.stringify(old);
    const a = profileParamsSchema.parse(old);
    const b = profileParamsSchema.parse(JSON.parse(text));
    expect(JSON.stringify(old)).toBe(text);
    a.nullSpace.enabled = true;
    expect(b.nullSpace.enabled).toBe(false);
  });

  it("the joint acceleration fraction must be above 0 and at most 1", () => {
    expect(profileParamsSchema.safeParse({ ...base(), jointAccelFraction: 1 }).success).toBe(true);
    for (const bad of [0, -0.1, 1.01, Number.NaN]) {
      const r = profileParamsSchema.safeParse({ ...base(), jointAccelFraction: bad });
      expect(r.success).toBe(false);
      expect(r.error?.issues[0]?.path).toEqual(["jointAccelFraction"]);
    }
  });

  it("the re-anchor distance must be above 0 and at most 50 mm", () => {
    expect(profileParamsSchema.safeParse({ ...base(), driftReanchorM: 0.05 }).success).toBe(true);
    for (const bad of [0, -0.001, 0.0501]) expect(profileParamsSchema.safeParse({ ...base(), driftReanchorM: bad }).success).toBe(false);
  });

  it("the null-space gain must be zero or more, and its switch a boolean", () => {
    expect(profileParamsSchema.safeParse({ ...base(), nullSpace: { enabled: true, gainPerS: 0 } }).success).toBe(true);
    expect(profileParamsSchema.safeParse({ ...base(), nullSpace: { enabled: true, gainPerS: -1 } }).success).toBe(false);
    expect(profileParamsSchema.safeParse({ ...base(), nullSpace: { enabled: "yes", gainPerS: 1 } }).success).toBe(false);
  });
});

describe("drift-correction gain", () => {
  // e_{k+1} = (1 − K·dt)·e_k (derived): K·dt ≤ 1 converges without overshoot, above 1 it overshoots.
  it("K·dt = 1 is accepted and K·dt = 1.5 is refused on the gain field (the review measured 73,900 °/s² at 1.5)", () => {
    expect(profileParamsSchema.safeParse({ ...base(), tickRateHz: 500, driftCorrectionGainPerS: 500 }).success).toBe(true);
    const r = profileParamsSchema.safeParse({ ...base(), tickRateHz: 500, driftCorrectionGainPerS: 750 });
    expect(r.success).toBe(false);
    expect(r.error?.issues[0]).toMatchObject({ path: ["driftCorrectionGainPerS"], message: expect.stringContaining("K·dt ≤ 1") });
  });
});

describe("default profile", () => {
  it("stops before the singular region (stop-before guard) with its threshold inside the damped region", () => {
    const p = base();
    expect(p.guard.policy).toBe("stop-before");
    expect(p.damping.kind === "singular-value" && p.guard.sigmaStopM <= p.damping.epsilonM).toBe(true);
    expect(profileParamsSchema.parse(p)).toEqual(p);
  });

  it("is within the default site ceilings, which still allow both guard policies", () => {
    expect(checkCeilings(base(), DEFAULT_CEILINGS, RATED_RAD_PER_S)).toEqual([]);
    expect(DEFAULT_CEILINGS.allowedGuardPolicies).toEqual(["damp-through", "stop-before"]);
  });
});

describe("profile warnings", () => {
  it("warn, without refusing, when λmax is above ε", () => {
    const p: ProfileParams = { ...base(), damping: { kind: "singular-value", epsilonM: 0.04, lambdaMaxM: 0.06 } };
    expect(profileParamsSchema.safeParse(p).success).toBe(true);
    const warnings = profileWarnings(p);
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatchObject({ field: "damping.lambdaMaxM", message: expect.stringContaining("above the damped region") });
  });

  it("say nothing when λmax is at most ε, or for the other schemes", () => {
    expect(profileWarnings(base())).toEqual([]);
    expect(profileWarnings({ ...base(), damping: { kind: "fixed", lambdaM: 0.5 } })).toEqual([]);
  });

  it("the warning's claim holds: at σ = ε/√2 the weak direction passes under half the undamped rate when λmax > ε", () => {
    // DLS gain σ/(σ² + λ²) (Buss 2004 notes; Deo & Walker 1995) against the undamped 1/σ; the schedule
    // λ² = (1 − (σ/ε)²)·λmax² (Chiaverini, Siciliano & Egeland 1994).
    const eps = 0.04;
    const ratio = (lambdaMax: number) => {
      const sigma = eps / Math.SQRT2;
      const lambda2 = (1 - (sigma / eps) ** 2) * lambdaMax ** 2;
      return (sigma * sigma) / (sigma * sigma + lambda2);
    };
    expect(ratio(0.04)).toBeCloseTo(0.5, 12);
    expect(ratio(0.041)).toBeLessThan(0.5);
    expect(ratio(0.039)).toBeGreaterThan(0.5);
  });
});

describe("stopping-distance and deceleration ceilings", () => {
  it("a controlled stop covers v²/2a: 200 mm/s at 0.1 m/s² takes 200 mm (the review's 2.0 s, 200 mm stop)", () => {
    // Constant-deceleration kinematics (derived): d = v²/(2a), t = v/a = 2.0 s.
    expect(controlledStopDistanceM(0.2, 0.1)).toBeCloseTo(0.2, 12);
    expect(controlledStopDistanceM(0.25, 1)).toBeCloseTo(0.03125, 12);
    expect(controlledStopDistanceM(-0.25, 1)).toBeCloseTo(0.03125, 12);
    expect(controlledStopDistanceM(0.1, 0)).toBe(Infinity);
  });

  it("ceilings stored before these fields parse with 50 mm and 0.5 m/s²", () => {
    // The defaults without the two later fields (the stored revision 1 itself: the server's ceilings.test.ts).
    const { stoppingDistanceMaxM, decelerationMinMPerS2, ...older } = DEFAULT_CEILINGS;
    expect([stoppingDistanceMaxM, decelerationMinMPerS2]).toEqual([0.05, 0.5]);
    const parsed = ceilingsSchema.parse(older);
    expect(parsed.stoppingDistanceMaxM).toBe(0.05);
    expect(parsed.decelerationMinMPerS2).toBe(0.5);
    expect(parsed).toEqual(DEFAULT_CEILINGS);
  });

  it("a version with a 0.1 m/s² ramp is refused on both: deceleration below the minimum, stop longer than 50 mm", () => {
    const p: ProfileParams = { ...base(), shaping: { ...base().shaping, linearAccelMPerS2: 0.1 } };
    const violations = checkCeilings(p, DEFAULT_CEILINGS, RATED_RAD_PER_S);
    expect(violations.map((v) => v.ceiling).sort()).toEqual(["decelerationMinMPerS2", "stoppingDistanceMaxM"]);
    expect(violations.every((v) => v.field === "shaping.linearAccelMPerS2")).toBe(true);
    // 250 mm/s at 0.1 m/s²: 0.0625/0.2 = 312.5 mm (derived).
    expect(violations.find((v) => v.ceiling === "stoppingDistanceMaxM")!.message).toContain("312.5 mm");
  });

  it("the stop is taken from the top speed the override allows: 250 mm/s at 0.6 m/s² is 52 mm (refused), at 90 % override 42 mm (allowed)", () => {
    const at = (maxPercent: number): ProfileParams => ({
      ...base(),
      shaping: { ...base().shaping, linearAccelMPerS2: 0.6 },
      speedOverride: { defaultPercent: 50, maxPercent },
    });
    // 0.25²/(2·0.6) = 52.08 mm; 0.225²/(2·0.6) = 42.19 mm (derived).
    expect(checkCeilings(at(100), DEFAULT_CEILINGS, RATED_RAD_PER_S).map((v) => v.ceiling)).toEqual(["stoppingDistanceMaxM"]);
    expect(checkCeilings(at(90), DEFAULT_CEILINGS, RATED_RAD_PER_S)).toEqual([]);
  });

  it("a site can tighten both: 30 mm refuses the default 31.25 mm stop, a 1.5 m/s² minimum refuses the default 1 m/s² ramp", () => {
    const tight = { ...DEFAULT_CEILINGS, stoppingDistanceMaxM: 0.03, decelerationMinMPerS2: 1.5 };
    expect(checkCeilings(base(), tight, RATED_RAD_PER_S).map((v) => v.ceiling).sort()).toEqual(["decelerationMinMPerS2", "stoppingDistanceMaxM"]);
  });

  it("the ceilings themselves are bounded: positive, at most 1 m and 20 m/s²", () => {
    for (const bad of [{ stoppingDistanceMaxM: 0 }, { stoppingDistanceMaxM: 1.5 }, { decelerationMinMPerS2: 0 }, { decelerationMinMPerS2: 25 }]) {
      expect(ceilingsSchema.safeParse({ ...DEFAULT_CEILINGS, ...bad }).success).toBe(false);
    }
  });
});

describe("arm joints", () => {
  const joint = { type: "revolute", a: 0, alpha: 0, d: 0, theta: 0, maxSpeed: 2 };
  it("may carry a rated acceleration that is positive and finite", () => {
    expect(armModelSchema.safeParse({ convention: "standard", joints: [{ ...joint, maxAccel: 8 }] }).success).toBe(true);
    expect(armModelSchema.safeParse({ convention: "standard", joints: [joint] }).success).toBe(true);
    for (const bad of [0, -1, Infinity]) {
      expect(armModelSchema.safeParse({ convention: "standard", joints: [{ ...joint, maxAccel: bad }] }).success).toBe(false);
    }
  });
});
