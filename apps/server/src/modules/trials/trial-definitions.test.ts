import { compileArm, demoArms, findDemoArm, forwardPoseInto, geometricJacobian } from "@jogwright/kinematics";
import { defaultProfileParams, trialDefinitionSchema, type TrialDefinition } from "@jogwright/shared";
import { describe, expect, it } from "vitest";
import { builtinTrials, sigmaMinAt, WRIST_START_ANGLE, wristJointIndex } from "./builtin.ts";
import { checkTrial, compileTrial, TrialInvalidError } from "./compile.ts";
import { computeTrialMetrics } from "./metrics.ts";
import { runTrial } from "./runner.ts";

const six = findDemoArm("cell-arm-6")!;
const seven = findDemoArm("cell-arm-7")!;

function expressionTrial(linear: [string, string, string], angular: [string, string, string], durationS = 2): TrialDefinition {
  return trialDefinitionSchema.parse({ name: "expr", startPose: six.readyPose, segments: [{ kind: "expression", frame: "world", linear, angular, durationS }] });
}

describe("custom trials: expressions parsed and checked with mathjs, sampled before the run", () => {
  it("samples the issue's example `0.1 m/s * sin(2 pi t / 4 s)` at every tick, and converts units to SI", () => {
    const def = expressionTrial(["0.1 m/s * sin(2 pi t / 4 s)", "20 mm/s", "0"], ["0", "10 deg/s", "0.1 / s"]);
    const c = compileTrial(def, six.model, 500);
    const seg = c.segments[0]!;
    expect(seg.kind).toBe("samples");
    if (seg.kind !== "samples") return;
    expect(seg.ticks).toBe(1000);
    for (const k of [0, 125, 250, 999]) {
      const t = k / 500;
      expect(seg.samples[k * 6]).toBeCloseTo(0.1 * Math.sin((2 * Math.PI * t) / 4), 12);
      expect(seg.samples[k * 6 + 1]).toBeCloseTo(0.02, 12); // 20 mm/s
      expect(seg.samples[k * 6 + 4]).toBeCloseTo((10 * Math.PI) / 180, 12); // 10 deg/s
      expect(seg.samples[k * 6 + 5]).toBeCloseTo(0.1, 12); // 0.1 /s taken as rad/s
    }
  });

  it("names the segment and field of every error, and refuses what is not a number, unit, t or allowed function", () => {
    const def = trialDefinitionSchema.parse({
      name: "bad",
      startPose: six.readyPose,
      segments: [
        { kind: "twist", frame: "world", linearMPerS: [0, 0, 0], angularRadPerS: [0, 0, 0], durationS: 1 },
        { kind: "expression", frame: "tool", linear: ["sin(t)", "1 m", "foo"], angular: ["import(1)", "0", "2 m/s"], durationS: 1 },
      ],
    });
    const issues = checkTrial(def, six.model);
    const byPath = Object.fromEntries(issues.map((i) => [i.path, i.message]));
    expect(Object.keys(byPath).sort()).toEqual(["segments.1.angular.0", "segments.1.angular.2", "segments.1.linear.0", "segments.1.linear.1", "segments.1.linear.2"]);
    expect(byPath["segments.1.linear.0"]).toMatch(/^segment 2, linear x: .*t is a time in seconds/);
    expect(byPath["segments.1.linear.1"]).toMatch(/^segment 2, linear y: gives 1 m, not a speed/);
    expect(byPath["segments.1.linear.2"]).toMatch(/"foo"/);
    expect(byPath["segments.1.angular.0"]).toMatch(/^segment 2, angular x: uses "import", which is not allowed/);
    expect(byPath["segments.1.angular.2"]).toMatch(/not an angular speed/);
    expect(() => compileTrial(def, six.model, 500)).toThrow(TrialInvalidError);
  });

  it("checks the start pose against the arm: joint count and limits", () => {
    const def = trialDefinitionSchema.parse({ name: "x", startPose: [0, 0, 0], segments: [{ kind: "twist", frame: "world", linearMPerS: [0, 0, 0], angularRadPerS: [0, 0, 0], durationS: 1 }] });
    expect(checkTrial(def, six.model)[0]).toMatchObject({ path: "startPose", message: expect.stringMatching(/needs 6 joint positions/) });
    const out = trialDefinitionSchema.parse({ ...def, startPose: [0, 0, 0, 0, 3, 0] });
    expect(checkTrial(out, six.model)[0]).toMatchObject({ path: "startPose.4", message: "joint 5 starts outside its limits" });
  });

  it("the schema refuses a trial longer than 60 s, non-finite numbers and a missing segment, each with its path", () => {
    const twist = { kind: "twist", frame: "world", linearMPerS: [0, 0, 0], angularRadPerS: [0, 0, 0], durationS: 40 };
    const long = trialDefinitionSchema.safeParse({ name: "x", startPose: six.readyPose, segments: [twist, twist] });
    expect(long.success).toBe(false);
    expect(long.error!.issues[0]!.path).toEqual(["segments"]);
    const nan = trialDefinitionSchema.safeParse({ name: "x", startPose: six.readyPose, segments: [{ ...twist, linearMPerS: [Number.NaN, 0, 0] }] });
    expect(nan.error!.issues[0]!.path).toEqual(["segments", 0, "linearMPerS", 0]);
    expect(trialDefinitionSchema.safeParse({ name: "x", startPose: six.readyPose, segments: [] }).success).toBe(false);
  });
});

describe("built-in trials, generated from each arm's geometry", () => {
  it("six-axis arm: all seven kinds; the wrist line starts at q5 = 12° and its run passes through wrist alignment", () => {
    const { trials, notApplicable } = builtinTrials(six);
    expect(notApplicable).toEqual([]);
    expect(trials.map((t) => t.kind)).toEqual([
      "wrist-line", "wrist-near-miss-3mm", "wrist-near-miss-10mm", "wrist-lost-rotation", "elbow-reach", "shoulder-pass", "guard-ramp",
    ]);
    for (const t of trials) expect(checkTrial(trialDefinitionSchema.parse(t.definition), six.model)).toEqual([]);
    const line = trials[0]!.definition;
    expect(line.startPose[4]).toBeCloseTo(WRIST_START_ANGLE, 15);
    const params = defaultProfileParams(six.model.joints.map((j) => j.maxSpeed!));
    params.guard = { policy: "damp-through", sigmaStopM: 0.02 };
    const s = runTrial(six.model, params, compileTrial(line, six.model, params.tickRateHz));
    const m = computeTrialMetrics(s, { jointCaps: params.jointRateCapsRadPerS, epsilonM: 0.04, wristJoint: 4 });
    // σ_min at the start is outside the damping region (ε = 0.04); on the line it falls to (almost) zero.
    expect(sigmaMinAt(six.model, line.startPose)).toBeGreaterThan(0.04);
    expect(m.singularity.minSigma).toBeLessThan(1e-3);
    expect(m.singularity.wristBranch!.crossedZero).toBe(true);
    expect(m.finished).toBe(true);
  });

  it("the near misses start exactly 3 mm and 10 mm across the wrist line, with the same orientation", () => {
    const { trials } = builtinTrials(six);
    const kernel = compileArm(six.model);
    const pose = (q: readonly number[]) => forwardPoseInto(kernel, q, new Float64Array(16));
    const line = trials.find((t) => t.kind === "wrist-line")!.definition;
    const seg = line.segments[0]!;
    if (seg.kind !== "twist") throw new Error("the wrist line is a twist");
    const dir = seg.linearMPerS.map((v) => v / Math.hypot(...seg.linearMPerS));
    const p0 = pose(line.startPose);
    for (const [kind, offset] of [["wrist-near-miss-3mm", 0.003], ["wrist-near-miss-10mm", 0.01]] as const) {
      const p = pose(trials.find((t) => t.kind === kind)!.definition.startPose);
      const d = [p[3]! - p0[3]!, p[7]! - p0[7]!, p[11]! - p0[11]!];
      expect(Math.hypot(...d)).toBeCloseTo(offset, 9);
      expect(d[0]! * dir[0]! + d[1]! * dir[1]! + d[2]! * dir[2]!).toBeCloseTo(0, 9); // across the line
      for (const i of [0, 1, 2, 4, 5, 6, 8, 9, 10]) expect(p[i]).toBeCloseTo(p0[i]!, 9);
    }
  });

  it("the lost rotation is the twist the Jacobian cannot produce at wrist alignment (Jᵀ·u = 0), at 0.3 rad/s", () => {
    const { trials } = builtinTrials(six);
    const t = trials.find((x) => x.kind === "wrist-lost-rotation")!.definition;
    const seg = t.segments[0]!;
    if (seg.kind !== "twist") throw new Error("a twist");
    const u = [...seg.linearMPerS, ...seg.angularRadPerS];
    expect(Math.hypot(...seg.angularRadPerS)).toBeCloseTo(0.3, 9);
    const aligned = [...t.startPose];
    aligned[4] = 0;
    const J = geometricJacobian(six.model, aligned);
    for (let c = 0; c < 6; c++) {
      let dot = 0;
      for (let r = 0; r < 6; r++) dot += J[r * 6 + c]! * u[r]!;
      expect(Math.abs(dot)).toBeLessThan(1e-9);
    }
  });

  it("the elbow reach stretches the arm out (σ_min near zero) and still finishes; the guard ramp trips the stop-before guard", () => {
    const { trials } = builtinTrials(six);
    const params = defaultProfileParams(six.model.joints.map((j) => j.maxSpeed!));
    const run = (kind: string, policy: "damp-through" | "stop-before") => {
      params.guard = { policy, sigmaStopM: 0.02 };
      const def = trials.find((t) => t.kind === kind)!.definition;
      const s = runTrial(six.model, params, compileTrial(def, six.model, params.tickRateHz));
      return computeTrialMetrics(s, { jointCaps: params.jointRateCapsRadPerS, epsilonM: 0.04, wristJoint: 4 });
    };
    const reach = run("elbow-reach", "damp-through");
    expect(reach.singularity.minSigma).toBeLessThan(0.01);
    expect(reach.finished).toBe(true);
    const ramp = run("guard-ramp", "stop-before");
    expect(ramp.singularity.guardStops).toBeGreaterThanOrEqual(1);
    expect(ramp.singularity.minSigma).toBeGreaterThan(0.015);
    expect(ramp.finished).toBe(false);
  });

  it("seven-axis arm: no wrist-alignment trials (not singular for a redundant arm), with the reason; the others exist", () => {
    expect(wristJointIndex(seven.model)).toBe(5);
    const { trials, notApplicable } = builtinTrials(seven);
    expect(trials.map((t) => t.kind)).toEqual(["elbow-reach", "shoulder-pass", "guard-ramp"]);
    expect(notApplicable.map((x) => x.kind)).toEqual(["wrist-line", "wrist-near-miss-3mm", "wrist-near-miss-10mm", "wrist-lost-rotation"]);
    expect(notApplicable[0]!.reason).toMatch(/joint 6 at zero is not a singular configuration/);
    for (const t of trials) expect(checkTrial(trialDefinitionSchema.parse(t.definition), seven.model)).toEqual([]);
  });

  it("every demo arm's built-ins are valid trial definitions (the schema) and deterministic", () => {
    for (const arm of demoArms) {
      const a = builtinTrials(arm), b = builtinTrials(arm);
      expect(JSON.stringify(a)).toBe(JSON.stringify(b));
      for (const t of a.trials) expect(trialDefinitionSchema.safeParse(t.definition).success).toBe(true);
    }
  });
});
