import { describe, expect, it } from "vitest";
import { defaultProfileParams, profileParamsSchema, type ProfileParams } from "./profile.ts";
import {
  diffProfileParams,
  labelForProfilePath,
  NUMERIC_PROFILE_FIELDS,
  profileParamsFromUi,
  profileParamsToUi,
  uiKeyForProfilePath,
} from "./profile-fields.ts";

// Rated speeds of the six-axis demo arm (PRODUCT.md table): 150, 150, 190, 300, 300, 450 deg/s.
const RATED_RAD_PER_S = [150, 150, 190, 300, 300, 450].map((d) => (d * Math.PI) / 180);
const base = (): ProfileParams => defaultProfileParams(RATED_RAD_PER_S);

describe("profile field metadata", () => {
  it("gives every numeric field a label, a UI unit and conversions that round-trip", () => {
    for (const field of NUMERIC_PROFILE_FIELDS) {
      expect(field.label.length).toBeGreaterThan(0);
      expect(field.uiUnit.length).toBeGreaterThan(0);
      expect(field.toSi(field.toUi(0.123))).toBeCloseTo(0.123, 12);
    }
  });

  it("converts the TCP linear cap 0.25 m/s to 250 mm/s and back (ISO 10218-1:2011 reduced speed)", () => {
    const ui = profileParamsToUi(base());
    expect(ui.tcpLinearCapMmPerS).toBe(250);
    // π/2 rad/s = 90 deg/s (derived).
    expect(ui.tcpAngularCapDegPerS).toBe(90);
    // 5 deg margin, 15 deg slow-down zone, deadband 0.1 = 10 %.
    expect(ui.jointLimitMarginDeg).toBe(5);
    expect(ui.jointLimitSlowZoneDeg).toBe(15);
    expect(ui.deadbandPercent).toBe(10);
    // Joint caps default to half the rated speed: 75 deg/s for joint 1 (defaultProfileParams).
    expect(ui.jointRateCapsDegPerS[0]).toBe(75);
    expect(ui.jointRateCapsDegPerS[5]).toBe(225);
  });

  it("turns UI values back into SI parameters that the shared schema accepts", () => {
    const ui = profileParamsToUi(base());
    ui.tcpLinearCapMmPerS = 180;
    const parsed = profileParamsSchema.parse(profileParamsFromUi(ui));
    expect(parsed.tcpLinearCapMPerS).toBeCloseTo(0.18, 12);
    expect(parsed.jointRateCapsRadPerS[0]).toBeCloseTo((75 * Math.PI) / 180, 12);
    expect(parsed.damping).toEqual({ kind: "singular-value", epsilonM: 0.04, lambdaMaxM: 0.04 });
  });

  it("edits σ, ε and λ in mm, the unit the drive page shows them in, and stores them in m", () => {
    // Issue 13 item 12: one unit for damping everywhere; PRODUCT.md converts lengths to mm at the UI edge.
    const ui = profileParamsToUi(base());
    // defaultProfileParams: ε = λmax = 0.04 m → 40 mm (derived: ×1000).
    expect(ui.epsilonMm).toBe(40);
    expect(ui.lambdaMaxMm).toBe(40);
    for (const path of ["damping.lambdaM", "damping.epsilonM", "damping.lambdaMaxM", "damping.lambda0M", "guard.sigmaStopM"]) {
      expect(NUMERIC_PROFILE_FIELDS.find((f) => f.path === path)?.uiUnit, path).toBe("mm");
    }
    ui.epsilonMm = 150.5;
    ui.sigmaStopMm = 12.5;
    const parsed = profileParamsSchema.parse(profileParamsFromUi(ui));
    expect(parsed.damping).toEqual({ kind: "singular-value", epsilonM: 0.1505, lambdaMaxM: 0.04 });
    expect(parsed.guard.sigmaStopM).toBeCloseTo(0.0125, 12);
  });

  it("carries only the damping fields of the chosen scheme", () => {
    const ui = profileParamsToUi(base());
    ui.dampingKind = "fixed";
    const candidate = profileParamsFromUi(ui);
    expect(candidate.damping).toEqual({ kind: "fixed", lambdaM: 0.02 });
  });

  it("maps profile paths to form keys and labels", () => {
    expect(uiKeyForProfilePath("tcpLinearCapMPerS")).toBe("tcpLinearCapMmPerS");
    expect(uiKeyForProfilePath("jointRateCapsRadPerS.3")).toBe("jointRateCapsDegPerS.3");
    expect(uiKeyForProfilePath("guard.sigmaStopM")).toBe("sigmaStopMm");
    expect(labelForProfilePath("jointRateCapsRadPerS.3")).toBe("Joint 4 rate cap");
    expect(labelForProfilePath("watchdogMs")).toBe("Input watchdog");
  });
});

describe("diffProfileParams", () => {
  it("reports no change between a profile and itself after a UI round trip", () => {
    const a = base();
    const b = profileParamsSchema.parse(profileParamsFromUi(profileParamsToUi(a)));
    expect(diffProfileParams(a, b).filter((r) => r.changed)).toEqual([]);
  });

  it("reports a changed TCP cap in mm/s and nothing else", () => {
    const a = base();
    const b = { ...base(), tcpLinearCapMPerS: 0.3 };
    const changed = diffProfileParams(a, b).filter((r) => r.changed);
    expect(changed).toEqual([
      { field: "tcpLinearCapMPerS", label: "TCP linear cap", group: "Speed caps", uiUnit: "mm/s", before: 250, after: 300, changed: true },
    ]);
  });

  it("shows joint caps in deg/s, one row per joint", () => {
    const a = base();
    const b = base();
    b.jointRateCapsRadPerS[2] = (100 * Math.PI) / 180;
    const rows = diffProfileParams(a, b).filter((r) => r.field.startsWith("jointRateCapsRadPerS."));
    expect(rows).toHaveLength(6);
    const joint3 = rows[2]!;
    expect(joint3).toMatchObject({ label: "Joint 3 rate cap", uiUnit: "deg/s", before: 95, after: 100, changed: true });
  });

  it("shows damping fields of a scheme only one side uses as null on the other", () => {
    const a = base();
    const b: ProfileParams = { ...base(), damping: { kind: "fixed", lambdaM: 0.03 } };
    const rows = diffProfileParams(a, b);
    expect(rows.find((r) => r.field === "damping.kind")).toMatchObject({ before: "Singular-value schedule", after: "Fixed λ", changed: true });
    expect(rows.find((r) => r.field === "damping.lambdaM")).toMatchObject({ before: null, after: 30, uiUnit: "mm", changed: true });
    expect(rows.find((r) => r.field === "damping.lambdaMaxM")).toMatchObject({ before: 40, after: null, changed: true });
    expect(rows.find((r) => r.field === "damping.w0M3")).toBeUndefined();
  });

  it("keeps the form's group order", () => {
    const groups = diffProfileParams(base(), base()).map((r) => r.group);
    const order = [...new Set(groups)];
    expect(order).toEqual(["Damping", "Speed caps", "Joint limits", "Singularity guard", "Input", "Override", "Loop", "Redundancy"]);
  });

  it("shows the new fields in their UI units: joint acceleration in %, the re-anchor distance in mm, the null-space switch and gain", () => {
    const a = base();
    const b: ProfileParams = { ...base(), jointAccelFraction: 0.8, driftReanchorM: 0.01, nullSpace: { enabled: true, gainPerS: 2 } };
    const changed = diffProfileParams(a, b).filter((r) => r.changed);
    expect(changed).toEqual([
      { field: "jointAccelFraction", label: "Joint acceleration, of rated", group: "Speed caps", uiUnit: "%", before: 50, after: 80, changed: true },
      { field: "driftReanchorM", label: "Drift re-anchor distance", group: "Loop", uiUnit: "mm", before: 5, after: 10, changed: true },
      { field: "nullSpace.enabled", label: "Null-space term", group: "Redundancy", uiUnit: "—", before: false, after: true, changed: true },
      { field: "nullSpace.gainPerS", label: "Null-space gain", group: "Redundancy", uiUnit: "1/s", before: 0.5, after: 2, changed: true },
    ]);
  });
});

describe("the new profile fields through the form", () => {
  it("round-trip through the UI values: joint acceleration as %, re-anchor as mm, the null-space switch as a boolean", () => {
    const params: ProfileParams = { ...base(), jointAccelFraction: 0.25, driftReanchorM: 0.012, nullSpace: { enabled: true, gainPerS: 1.5 } };
    const ui = profileParamsToUi(params);
    expect(ui.jointAccelPercent).toBe(25);
    expect(ui.driftReanchorMm).toBe(12);
    expect(ui.nullSpaceEnabled).toBe(true);
    expect(ui.nullSpaceGainPerS).toBe(1.5);
    const back = profileParamsSchema.parse(profileParamsFromUi(ui));
    expect(back.jointAccelFraction).toBeCloseTo(0.25, 12);
    expect(back.driftReanchorM).toBeCloseTo(0.012, 12);
    expect(back.nullSpace).toEqual({ enabled: true, gainPerS: 1.5 });
    expect(uiKeyForProfilePath("nullSpace.enabled")).toBe("nullSpaceEnabled");
    expect(uiKeyForProfilePath("nullSpace.gainPerS")).toBe("nullSpaceGainPerS");
    expect(uiKeyForProfilePath("driftReanchorM")).toBe("driftReanchorMm");
  });
});
