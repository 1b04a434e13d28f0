import { z } from "zod";
import { singleLineName } from "./text.ts";

/**
 * Scripted trials of the tuning bench (issue 10). A trial is a start pose and segments; SI units (m, rad, s)
 * and names that carry them. A twist expression is text that the server parses and checks with mathjs (units
 * allowed, e.g. `0.1 m/s * sin(2 pi t / 4 s)`; `t` is the time since the segment began, in seconds) and
 * samples once before a run. The schema checks shape and ranges; the server checks the expressions and
 * reports each error with its segment and field.
 */

const finite = z.number().refine(Number.isFinite, "must be a finite number");
const vec3 = z.tuple([finite, finite, finite]);
export const TRIAL_FRAMES = ["world", "tool"] as const;
const frame = z.enum(TRIAL_FRAMES);

/** The longest trial [s]: a run keeps every tick's state (1 kHz → 60,000 samples). */
export const TRIAL_MAX_DURATION_S = 60;
export const TRIAL_MAX_SEGMENTS = 20;
/** A linear speed a trial may ask for [m/s]; the profile's caps still apply in the run. */
export const TRIAL_MAX_SPEED_M_PER_S = 2;
export const TRIAL_MAX_EXPRESSION_LENGTH = 200;

const duration = z
  .number()
  .refine(Number.isFinite, "must be a finite number")
  .refine((v) => v > 0, "must be above 0 s")
  .refine((v) => v <= TRIAL_MAX_DURATION_S, `at most ${TRIAL_MAX_DURATION_S} s`);

const expression = z
  .string()
  .trim()
  .min(1, "write an expression (0 for none)")
  .max(TRIAL_MAX_EXPRESSION_LENGTH, `at most ${TRIAL_MAX_EXPRESSION_LENGTH} characters`);

export const twistSegmentSchema = z.object({
  kind: z.literal("twist"),
  frame,
  linearMPerS: vec3,
  angularRadPerS: vec3,
  durationS: duration,
});

export const waypointSegmentSchema = z.object({
  kind: z.literal("waypoint"),
  /** The TCP position to move to, world frame [m]; the orientation is held. */
  positionM: vec3,
  speedMPerS: z
    .number()
    .refine(Number.isFinite, "must be a finite number")
    .refine((v) => v > 0, "must be above 0 m/s")
    .refine((v) => v <= TRIAL_MAX_SPEED_M_PER_S, `at most ${TRIAL_MAX_SPEED_M_PER_S} m/s`),
  /** Give up after this long if the waypoint is not reached [s]. */
  timeoutS: duration.default(20),
});

export const expressionSegmentSchema = z.object({
  kind: z.literal("expression"),
  frame,
  /** vx, vy, vz: a speed (m/s, mm/s, …; a plain number is m/s). */
  linear: z.tuple([expression, expression, expression]),
  /** ωx, ωy, ωz: an angular speed (rad/s, deg/s; a plain number is rad/s). */
  angular: z.tuple([expression, expression, expression]),
  durationS: duration,
});

export const trialSegmentSchema = z.discriminatedUnion("kind", [twistSegmentSchema, waypointSegmentSchema, expressionSegmentSchema]);
export type TrialSegment = z.infer<typeof trialSegmentSchema>;

export const trialDefinitionSchema = z
  .object({
    name: singleLineName({ requiredMessage: "a trial needs a name", max: 120 }),
    description: z.string().max(2000, "at most 2000 characters").default(""),
    /** Joint positions at the start [rad or m], one per joint of the arm (checked against the arm). */
    startPose: z.array(finite).min(1).max(12),
    segments: z.array(trialSegmentSchema).min(1, "a trial needs at least one segment").max(TRIAL_MAX_SEGMENTS, `at most ${TRIAL_MAX_SEGMENTS} segments`),
  })
  .superRefine((t, ctx) => {
    const total = t.segments.reduce((s, seg) => s + (seg.kind === "waypoint" ? seg.timeoutS : seg.durationS), 0);
    if (total > TRIAL_MAX_DURATION_S) {
      ctx.addIssue({ code: "custom", path: ["segments"], message: `the segments last ${total.toFixed(1)} s together; at most ${TRIAL_MAX_DURATION_S} s` });
    }
  });
export type TrialDefinition = z.infer<typeof trialDefinitionSchema>;

/** Built-in trials, generated from each arm's geometry (never hand-placed). */
export const builtinTrialKindSchema = z.enum([
  "wrist-line",
  "wrist-near-miss-3mm",
  "wrist-near-miss-10mm",
  "wrist-lost-rotation",
  "elbow-reach",
  "shoulder-pass",
  "guard-ramp",
]);
export const BUILTIN_TRIAL_KINDS = builtinTrialKindSchema.options;
export type BuiltinTrialKind = (typeof BUILTIN_TRIAL_KINDS)[number];

// ----------------------------------------------------------------------------------------------------
// Sweeps: one or two profile parameters over ranges, across chosen trials
// ----------------------------------------------------------------------------------------------------

/** Parameters a sweep may vary (paths into ProfileParams), with their labels and SI units. */
export const SWEEP_PARAMETERS = {
  "damping.lambdaMaxM": { label: "λmax", unit: "m" },
  "damping.epsilonM": { label: "ε", unit: "m" },
  "guard.sigmaStopM": { label: "σ stop", unit: "m" },
  tcpLinearCapMPerS: { label: "TCP linear cap", unit: "m/s" },
  "shaping.linearAccelMPerS2": { label: "linear acceleration limit", unit: "m/s²" },
  jointAccelFraction: { label: "joint acceleration fraction", unit: "" },
  driftCorrectionGainPerS: { label: "drift correction gain", unit: "1/s" },
} as const;
export type SweepParameter = keyof typeof SWEEP_PARAMETERS;
export const sweepParameterSchema = z.enum(Object.keys(SWEEP_PARAMETERS) as [SweepParameter, ...SweepParameter[]]);

/** What a sweep point is judged by: the worst over its trials (all to be made small). */
export const SWEEP_OBJECTIVES = {
  maxDeviationM: { label: "max path deviation", unit: "m" },
  rmsDeviationM: { label: "RMS path deviation", unit: "m" },
  lagM: { label: "lag", unit: "m" },
  peakWristAccelRadPerS2: { label: "peak wrist acceleration", unit: "rad/s²" },
  peakJointRateFraction: { label: "peak joint rate / cap", unit: "" },
  worstStopDistanceM: { label: "worst predicted stopping distance", unit: "m" },
  timeBelowEpsilonS: { label: "time inside ε", unit: "s" },
} as const;
export type SweepObjective = keyof typeof SWEEP_OBJECTIVES;
export const sweepObjectiveSchema = z.enum(Object.keys(SWEEP_OBJECTIVES) as [SweepObjective, ...SweepObjective[]]);

/** At most this many points (product of the axes' steps) and runs (points × trials) in one sweep. */
export const SWEEP_MAX_POINTS = 400;
export const SWEEP_MAX_RUNS = 2400;

export const sweepAxisSchema = z
  .object({
    parameter: sweepParameterSchema,
    from: finite,
    to: finite,
    steps: z.number().int().min(2, "at least 2 steps").max(100, "at most 100 steps"),
  })
  .refine((a) => a.from !== a.to, { message: "from and to must differ", path: ["to"] });
export type SweepAxis = z.infer<typeof sweepAxisSchema>;

export const sweepRequestSchema = z
  .object({
    versionId: z.number().int().positive(),
    axes: z.array(sweepAxisSchema).min(1, "sweep one or two parameters").max(2, "sweep one or two parameters"),
    /** Trials: built-in kinds of the version's arm and saved custom trial ids. */
    builtins: z.array(builtinTrialKindSchema).default([]),
    trialIds: z.array(z.number().int().positive()).default([]),
    x: sweepObjectiveSchema.default("peakWristAccelRadPerS2"),
    y: sweepObjectiveSchema.default("maxDeviationM"),
  })
  .superRefine((r, ctx) => {
    if (r.builtins.length + r.trialIds.length === 0) ctx.addIssue({ code: "custom", path: ["builtins"], message: "choose at least one trial" });
    if (r.axes.length === 2 && r.axes[0]!.parameter === r.axes[1]!.parameter) ctx.addIssue({ code: "custom", path: ["axes", 1, "parameter"], message: "sweep two different parameters" });
    const points = r.axes.reduce((p, a) => p * a.steps, 1);
    if (points > SWEEP_MAX_POINTS) ctx.addIssue({ code: "custom", path: ["axes"], message: `${points} points; at most ${SWEEP_MAX_POINTS}` });
    const runs = points * (r.builtins.length + r.trialIds.length);
    if (runs > SWEEP_MAX_RUNS) ctx.addIssue({ code: "custom", path: ["axes"], message: `${runs} runs; at most ${SWEEP_MAX_RUNS}` });
  });
export type SweepRequest = z.infer<typeof sweepRequestSchema>;

/**
 * A copy of `params` with one sweep parameter set (a path into ProfileParams). Throws when the profile has
 * no such field (e.g. ε under the manipulability damping scheme).
 */
export function withSweepParameter<P extends object>(params: P, parameter: SweepParameter, value: number): P {
  const copy = JSON.parse(JSON.stringify(params)) as Record<string, unknown>; // params are plain JSON
  const path = parameter.split(".");
  let node = copy;
  for (const key of path.slice(0, -1)) {
    const next = node[key];
    if (typeof next !== "object" || next === null) throw new Error(`the profile has no ${parameter}`);
    node = next as Record<string, unknown>;
  }
  const last = path[path.length - 1]!;
  if (!(last in node)) throw new Error(`the profile has no ${parameter} (its damping scheme has another form)`);
  node[last] = value;
  return copy as unknown as P;
}

/** The value of one sweep parameter in `params`, or null when the profile has no such field. */
export function sweepParameterOf(params: object, parameter: SweepParameter): number | null {
  let node: unknown = params;
  for (const key of parameter.split(".")) node = typeof node === "object" && node !== null ? (node as Record<string, unknown>)[key] : undefined;
  return typeof node === "number" ? node : null;
}

export const sweepPointSchema = z.object({
  /** The parameter values, one per axis. */
  values: z.array(z.number()),
  /** The schema's sentence when this combination is not a valid profile; then nothing ran. */
  invalid: z.string().nullable(),
  objectives: z.record(sweepObjectiveSchema, z.number()).nullable(),
  finishedTrials: z.number().int(),
  trials: z.number().int(),
});
export type SweepPoint = z.infer<typeof sweepPointSchema>;

export const sweepResultSchema = z.object({
  versionId: z.number().int(),
  axes: z.array(sweepAxisSchema),
  x: sweepObjectiveSchema,
  y: sweepObjectiveSchema,
  points: z.array(sweepPointSchema),
  /** Indices into points of the Pareto front (x and y both minimised), by x. */
  front: z.array(z.number().int()),
  trialNames: z.array(z.string()),
  elapsedMs: z.number(),
});
export type SweepResult = z.infer<typeof sweepResultSchema>;

/** One server-sent event of POST /api/bench/sweeps: progress, then the result (or an error). */
export const sweepProgressSchema = z.object({ done: z.number().int(), total: z.number().int() });
