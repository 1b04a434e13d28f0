import { describe, expect, it } from "vitest";
import { z } from "zod";
import type { TrialDefinition } from "@jogwright/shared";
import { itPutsServerPathsOnFields, refusedPaths } from "../../../lib/form-codec.test-support.ts";
import { trialFormCodec, uiPathOfTrialPath } from "./trial-form-codec.ts";

// Conversions: 1 m = 1000 mm, 1 rad = 180/π deg (SI definitions).
const kinds = ["revolute", "revolute", "revolute", "revolute", "revolute", "prismatic"] as const;
const { codec } = trialFormCodec([...kinds]);

const definition: TrialDefinition = {
  name: "Sway",
  description: "",
  startPose: [0, -Math.PI / 9, Math.PI / 6, 0, Math.PI / 4, 0.05],
  segments: [
    { kind: "twist", frame: "tool", linearMPerS: [0, 0.05, 0], angularRadPerS: [0, 0, Math.PI / 18], durationS: 2 },
    { kind: "waypoint", positionM: [0.5, 0, 0.4], speedMPerS: 0.1, timeoutS: 10 },
    { kind: "expression", frame: "world", linear: ["0", "50 mm/s * sin(2 pi t / 4 s)", "0"], angular: ["0", "0", "0"], durationS: 4 },
  ],
};

describe("the trial form codec", () => {
  it("shows lengths in mm, angles in deg and a sliding joint in mm, and decodes back to SI", () => {
    const ui = z.encode(codec, definition);
    expect(ui.startPose).toEqual([0, -20, 30, 0, 45, 50]);
    expect(ui.segments[0]).toMatchObject({ kind: "twist", frame: "tool", linearMmPerS: [0, 50, 0], angularDegPerS: [0, 0, 10] });
    expect(ui.segments[1]).toMatchObject({ kind: "waypoint", positionMm: [500, 0, 400], speedMmPerS: 100, timeoutS: 10 });
    const back = z.decode(codec, ui);
    expect(back.startPose[1]).toBeCloseTo(-Math.PI / 9, 9);
    expect(back.startPose[5]).toBeCloseTo(0.05, 12);
    expect(back.segments[2]).toEqual(definition.segments[2]);
  });

  it("puts the shared schema's refusals on the UI fields", () => {
    const ui = z.encode(codec, definition);
    const bad = { ...ui, segments: [{ ...ui.segments[1]!, speedMmPerS: 5000 }] }; // 5 m/s, above the 2 m/s a trial may ask
    const result = z.safeDecode(codec, bad);
    expect(result.success).toBe(false);
    expect(refusedPaths(result)).toContain("segments.0.speedMmPerS");
  });

  itPutsServerPathsOnFields(uiPathOfTrialPath, {
    "segments.2.linearMPerS.0": "segments.2.linearMmPerS.0",
    "segments.1.positionM.2": "segments.1.positionMm.2",
    "segments.0.linear.1": "segments.0.linear.1",
    "startPose.3": "startPose.3",
  });
});
