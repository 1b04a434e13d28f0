import { describe, expect, it } from "vitest";
import { z } from "zod";
import { DEFAULT_CEILINGS } from "@jogwright/shared";
import { messagesByPath } from "../../../lib/form-codec.test-support.ts";
import { ceilingsFormCodec, ceilingsFormValuesOf, type CeilingsFormValues } from "./ceilings-form-codec.ts";

// Conversions: 1 m/s = 1000 mm/s, 1 rad = 180/π deg, 1 = 100 % (derived, SI definitions).

const uiDefaults = (): CeilingsFormValues => ceilingsFormValuesOf(DEFAULT_CEILINGS, "");

/** The form errors zodResolver would show: dotted UI path → message. */
const fieldErrors = (values: unknown): Record<string, string> => messagesByPath(z.safeDecode(ceilingsFormCodec, values as CeilingsFormValues));

describe("the ceilings form codec", () => {
  it("encodes the stored SI ceilings into the units people set them in", () => {
    const ui = z.encode(ceilingsFormCodec, { ceilings: DEFAULT_CEILINGS, note: "why" });
    expect(ui).toEqual({
      tcpLinearMaxMmPerS: 250, // 0.25 m/s
      tcpAngularMaxDegPerS: 90, // π/2 rad/s
      jointSpeedFractionMaxPercent: 75, // 0.75
      watchdogMaxMs: 300,
      allowedGuardPolicies: ["damp-through", "stop-before"],
      lambdaMaxMinMm: 10, // 0.01 m: damping in mm, as on the profile form and the drive page (issue 13, item 12)
      stoppingDistanceMaxMm: 50, // 0.05 m
      decelerationMinMPerS2: 0.5,
      evidenceRequired: "builtin-trials", // the default rule of issue 10
      note: "why",
    });
  });

  it("decodes UI values into SI ceilings and a trimmed note", () => {
    const out = z.decode(ceilingsFormCodec, { ...uiDefaults(), tcpLinearMaxMmPerS: 200, tcpAngularMaxDegPerS: 45, jointSpeedFractionMaxPercent: 50, stoppingDistanceMaxMm: 30, lambdaMaxMinMm: 12.5, note: "  lower  " });
    expect(out.ceilings.lambdaMaxMinM).toBeCloseTo(0.0125, 12);
    expect(out.ceilings.tcpLinearMaxMPerS).toBeCloseTo(0.2, 12);
    expect(out.ceilings.tcpAngularMaxRadPerS).toBeCloseTo(Math.PI / 4, 12);
    expect(out.ceilings.jointSpeedFractionMax).toBeCloseTo(0.5, 12);
    expect(out.ceilings.stoppingDistanceMaxM).toBeCloseTo(0.03, 12);
    expect(out.note).toBe("lower");
  });

  it("round-trips: encode after decode gives the same UI values", () => {
    const ui = { ...uiDefaults(), tcpLinearMaxMmPerS: 123.4, tcpAngularMaxDegPerS: 33.33 };
    expect(z.encode(ceilingsFormCodec, z.decode(ceilingsFormCodec, ui))).toEqual(ui);
  });

  it("puts a value the server would refuse on its UI field, with the shared schema's message", () => {
    // ceilingsSchema: the TCP linear ceiling is at most 2 m/s; 2500 mm/s is 2.5 m/s.
    expect(fieldErrors({ ...uiDefaults(), tcpLinearMaxMmPerS: 2500 })).toEqual({ tcpLinearMaxMmPerS: "At most 2000 mm/s" });
    expect(fieldErrors({ ...uiDefaults(), jointSpeedFractionMaxPercent: 0 })).toEqual({ jointSpeedFractionMaxPercent: "Must be above 0 and at most 100 %" });
    expect(fieldErrors({ ...uiDefaults(), allowedGuardPolicies: false })).toEqual({ allowedGuardPolicies: "Allow at least one guard policy" });
  });

  it("asks for a number when a box is empty (NaN) and refuses a note over 2000 characters", () => {
    expect(fieldErrors({ ...uiDefaults(), watchdogMaxMs: Number.NaN })).toEqual({ watchdogMaxMs: "Enter a number in ms" });
    expect(fieldErrors({ ...uiDefaults(), note: "x".repeat(2001) })).toEqual({ note: "At most 2000 characters" });
  });
});
