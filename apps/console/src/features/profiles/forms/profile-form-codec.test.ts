import { describe, expect, it } from "vitest";
import { z } from "zod";
import { defaultProfileParams, type JointKind } from "@jogwright/shared";
import { messagesByPath } from "../../../lib/form-codec.test-support.ts";
import { profileFormCodec, profileFormValuesOf, type ProfileFormValues } from "./profile-form-codec.ts";

// Conversions: 1 m/s = 1000 mm/s, 1 rad = 180/π deg, 1 = 100 % (derived, SI definitions). A six-joint arm
// whose last joint slides (prismatic: its cap is m/s, shown as mm/s).
const KINDS: JointKind[] = ["revolute", "revolute", "revolute", "revolute", "revolute", "prismatic"];
const RATED = [Math.PI, Math.PI, Math.PI, 2 * Math.PI, 2 * Math.PI, 0.5];
const codec = profileFormCodec(KINDS);
const params = defaultProfileParams(RATED);
const uiDefaults = (): ProfileFormValues => profileFormValuesOf(params, "", KINDS);

const fieldErrors = (values: ProfileFormValues): Record<string, string> => messagesByPath(z.safeDecode(codec, values));

describe("the profile form codec", () => {
  it("encodes SI parameters into UI units: mm/s, deg/s, %, and mm/s for a prismatic joint's cap", () => {
    const ui = z.encode(codec, { params: { ...params, tcpLinearCapMPerS: 0.25, tcpAngularCapRadPerS: Math.PI / 4 }, note: "n" });
    expect(ui.tcpLinearCapMmPerS).toBe(250);
    expect(ui.tcpAngularCapDegPerS).toBe(45);
    expect(ui.jointRateCapsDegPerS[0]).toBe(90); // half of π rad/s = 90 deg/s
    expect(ui.jointRateCapsDegPerS[5]).toBe(250); // half of 0.5 m/s = 250 mm/s
    expect(ui.note).toBe("n");
  });

  it("decodes UI values into SI parameters and a trimmed note", () => {
    const ui = uiDefaults();
    ui.tcpLinearCapMmPerS = 200;
    ui.jointLimitMarginDeg = 5;
    ui.jointRateCapsDegPerS = [...ui.jointRateCapsDegPerS.slice(0, 5), 100];
    ui.note = "  slower  ";
    const out = z.decode(codec, ui);
    expect(out.params.tcpLinearCapMPerS).toBeCloseTo(0.2, 12);
    expect(out.params.jointLimitMarginRad).toBeCloseTo((5 * Math.PI) / 180, 12);
    expect(out.params.jointRateCapsRadPerS[5]).toBeCloseTo(0.1, 12); // 100 mm/s on the sliding joint
    expect(out.note).toBe("slower");
  });

  it("round-trips the defaults: decode after encode gives the SI parameters back (to float precision)", () => {
    const out = z.decode(codec, z.encode(codec, { params, note: "" }));
    expect(out.params.tcpLinearCapMPerS).toBeCloseTo(params.tcpLinearCapMPerS, 9);
    out.params.jointRateCapsRadPerS.forEach((v, i) => expect(v).toBeCloseTo(params.jointRateCapsRadPerS[i]!, 4));
    expect(out.params.damping).toEqual(params.damping);
  });

  it("puts a value the server would refuse on its UI field, including a joint's cap and a cross-field rule", () => {
    // profileParamsSchema: the TCP linear cap is at most 2 m/s (2000 mm/s).
    expect(fieldErrors({ ...uiDefaults(), tcpLinearCapMmPerS: 2500 })).toEqual({ tcpLinearCapMmPerS: "The TCP linear cap must be at most 2000 mm/s" });
    const caps = [...uiDefaults().jointRateCapsDegPerS];
    caps[2] = -1;
    expect(Object.keys(fieldErrors({ ...uiDefaults(), jointRateCapsDegPerS: caps }))).toEqual(["jointRateCapsDegPerS.2"]);
    // The default override may not exceed the maximum (a refine on speedOverride, path defaultPercent).
    expect(fieldErrors({ ...uiDefaults(), overrideDefaultPercent: 90, overrideMaxPercent: 50 })).toEqual({
      overrideDefaultPercent: "The default override must not exceed the maximum",
    });
  });

  it("asks for a number in the field's unit for an empty box, but ignores the hidden fields of another damping scheme", () => {
    expect(fieldErrors({ ...uiDefaults(), tcpLinearCapMmPerS: Number.NaN })).toEqual({ tcpLinearCapMmPerS: "Enter a number in mm/s" });
    // The defaults use the singular-value scheme: an empty λ (fixed scheme) does not block, an empty ε does.
    expect(fieldErrors({ ...uiDefaults(), lambdaMm: Number.NaN })).toEqual({});
    expect(fieldErrors({ ...uiDefaults(), epsilonMm: Number.NaN })).toMatchObject({ epsilonMm: "Enter a number in mm" });
    // A unitless field (expo) asks for a number, not "a number in —".
    expect(fieldErrors({ ...uiDefaults(), expo: Number.NaN })).toEqual({ expo: "Enter a number" });
  });

  it("edits damping in mm, as the drive page shows it: ε 40 mm ⇄ 0.04 m, λmax 12.5 mm → 0.0125 m", () => {
    // Issue 13 item 12: one unit for σ, ε and λ everywhere (PRODUCT.md: mm at the UI edge). ×1000, derived.
    const ui = z.encode(codec, { params, note: "" });
    expect(ui.epsilonMm).toBe(40);
    expect(ui.lambdaMaxMm).toBe(40);
    expect(ui.sigmaStopMm).toBe(params.guard.sigmaStopM * 1000);
    const out = z.decode(codec, { ...ui, lambdaMaxMm: 12.5 });
    expect(out.params.damping).toEqual({ kind: "singular-value", epsilonM: 0.04, lambdaMaxM: 0.0125 });
    // The shared bound "at most 1 m" reads in the field's unit.
    expect(fieldErrors({ ...ui, epsilonMm: 1500 })).toMatchObject({ epsilonMm: "ε above 1000 mm is not a useful region width" });
  });
});
