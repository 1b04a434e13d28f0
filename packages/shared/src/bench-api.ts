import { z } from "zod";
import { profileParamsSchema } from "./profile.ts";
import { BUILTIN_TRIAL_KINDS, builtinTrialKindSchema, trialDefinitionSchema } from "./trials.ts";
import { creatorRefShape } from "./named-refs.ts";

/**
 * The tuning bench's API (issue 10): trials of an arm, offline runs of them with a version's parameters (or
 * unsaved edits), each run's metrics and time series, and singularity maps. SI units throughout; the
 * console converts for display.
 */

const id = z.number().int().positive();
const num = z.number();

// ---------------------------------------------------------------------------------------------------
// Trials
// ---------------------------------------------------------------------------------------------------

/** An engineer's saved trial. */
export const customTrialSchema = z.object({
  id,
  armId: id,
  name: z.string(),
  definition: trialDefinitionSchema,
  ...creatorRefShape,
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type CustomTrial = z.infer<typeof customTrialSchema>;

/** GET /api/bench/arms/:armId/trials: the built-in trials generated from the arm, and the saved ones. */
export const armTrialsSchema = z.object({
  armId: id,
  builtin: z.array(z.object({ kind: builtinTrialKindSchema, definition: trialDefinitionSchema })),
  notApplicable: z.array(z.object({ kind: builtinTrialKindSchema, reason: z.string() })),
  custom: z.array(customTrialSchema),
});
export type ArmTrials = z.infer<typeof armTrialsSchema>;

/** POST /api/bench/trials (and PUT /api/bench/trials/:id without armId). */
export const saveTrialRequestSchema = z.object({ armId: id, definition: trialDefinitionSchema });
export type SaveTrialRequest = z.infer<typeof saveTrialRequestSchema>;

// ---------------------------------------------------------------------------------------------------
// Runs
// ---------------------------------------------------------------------------------------------------

/** What runs: a saved version, or a profile's unsaved edits (nothing is stored as a version). */
export const runSourceSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("version"), versionId: id }),
  z.object({ kind: z.literal("edits"), profileId: id, params: profileParamsSchema }),
]);
export type RunSource = z.infer<typeof runSourceSchema>;

/**
 * Which trial: a built-in kind of the source's arm, a saved custom trial of that arm, or a recorded live
 * session on that arm (its operator's input replayed tick by tick).
 */
export const trialRefSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("builtin"), builtin: builtinTrialKindSchema }),
  z.object({ kind: z.literal("custom"), trialId: id }),
  z.object({ kind: z.literal("replay"), recordingId: id }),
]);
export type TrialRef = z.infer<typeof trialRefSchema>;

/** At most this many trials in one run request (a sweep is the tool for more). */
export const RUN_MAX_TRIALS = 12;

/** POST /api/bench/runs: run each trial once with the source's parameters; the runs are stored. */
export const runRequestSchema = z.object({
  source: runSourceSchema,
  trials: z.array(trialRefSchema).min(1, "choose at least one trial").max(RUN_MAX_TRIALS, `at most ${RUN_MAX_TRIALS} trials at once`),
});
export type RunRequest = z.infer<typeof runRequestSchema>;

export const wristBranchSchema = z.object({ joint: z.number().int(), startRad: num, endRad: num, crossedZero: z.boolean() });

/** A run's metrics (modules/trials/metrics.ts computes them; METHODS.md says how). */
export const trialMetricsSchema = z.object({
  durationS: num,
  finished: z.boolean(),
  stalledReason: z.string().nullable(),
  /** Why it stalled: a numerical fault, the stop-before guard's hold (the profile's own answer), or lag. */
  stallKind: z.enum(["fault", "guard", "lag"]).nullable(),
  path: z.object({
    maxDeviationM: num,
    rmsDeviationM: num,
    lagM: num,
    maxOrientationErrorRad: num,
    maxResidualLinearMPerS: num,
    maxResidualAngularRadPerS: num,
  }),
  joints: z.object({
    peakRateRadPerS: z.array(num),
    /** Peak |q̇ᵢ| / the effective cap of joint i. */
    peakRateFraction: z.array(num),
    peakAccelRadPerS2: z.array(num),
    peakJerkRadPerS3: z.array(num),
    capBoundS: num,
  }),
  singularity: z.object({
    minSigma: num,
    timeBelowEpsilonS: num.nullable(),
    maxLambdaM: num,
    guardStops: z.number().int(),
    guardHeldS: num,
    wristBranch: wristBranchSchema.nullable(),
  }),
  stopping: z.object({
    worstPredictedDistanceM: num,
    worstAtS: num,
    finalStopTimeS: num,
    finalStopDistanceM: num,
  }),
});
export type TrialMetrics = z.infer<typeof trialMetricsSchema>;

export const TRIAL_RUN_KINDS = [...BUILTIN_TRIAL_KINDS, "custom", "replay"] as const;

/** A stored run, without its series. */
export const trialRunSchema = z.object({
  id,
  armId: id,
  profileId: id,
  profileName: z.string(),
  /** null: unsaved edits ran (`params` says what). */
  versionId: id.nullable(),
  versionNumber: z.number().int().nullable(),
  params: profileParamsSchema,
  trialKind: z.enum(TRIAL_RUN_KINDS),
  trialId: id.nullable(),
  recordingId: id.nullable(),
  trialName: z.string(),
  metrics: trialMetricsSchema,
  /** SHA-256 of the stored series: the same version and trial give the same hash. */
  seriesHash: z.string(),
  /** Wall time of the simulation and metrics in the worker [ms]. */
  durationMs: z.number().int(),
  ...creatorRefShape,
  createdAt: z.string(),
});
export type TrialRun = z.infer<typeof trialRunSchema>;

/** A run's series for charts and the 3D replay: every `every`-th tick (the last always), per channel. */
export const displaySeriesSchema = z.object({
  every: z.number().int(),
  n: z.number().int(),
  tickRateHz: num,
  releaseIndex: z.number().int(),
  count: z.number().int(),
  t: z.array(num),
  q: z.array(z.array(num)),
  qdot: z.array(z.array(num)),
  tcp: z.array(z.array(num)),
  reference: z.array(z.array(num)),
  orientationError: z.array(num),
  commanded: z.array(z.array(num)),
  achieved: z.array(z.array(num)),
  sigmaMin: z.array(num),
  lambda: z.array(num),
  stopDistance: z.array(num),
  capBound: z.array(num),
  guardHeld: z.array(num),
});
export type DisplaySeries = z.infer<typeof displaySeriesSchema>;

export const runsResponseSchema = z.object({ runs: z.array(trialRunSchema) });
export const runDetailSchema = z.object({ run: trialRunSchema, series: displaySeriesSchema });
export type RunDetail = z.infer<typeof runDetailSchema>;

// ---------------------------------------------------------------------------------------------------
// Singularity maps
// ---------------------------------------------------------------------------------------------------

export const MAP_MAX_RESOLUTION = 200;

const mapCommon = {
  armId: id,
  measure: z.enum(["sigma-min", "condition"]).default("sigma-min"),
  /** The tool's length along the flange z axis [m], replacing the arm's own tool; null keeps the arm's. */
  toolLengthM: z.number().min(0, "at least 0 m").max(1, "at most 1 m").nullable().default(null),
  /** The pose of the joints not mapped (joints map), or whose TCP is the plane's centre (cartesian) [rad or m]; default: the arm's ready pose. */
  pose: z.array(z.number().refine(Number.isFinite, "must be a finite number")).max(12).nullable().default(null),
  resolution: z.number().int().min(10, "at least 10").max(MAP_MAX_RESOLUTION, `at most ${MAP_MAX_RESOLUTION}`).default(120),
};

export const mapRequestSchema = z.discriminatedUnion("kind", [
  z.object({
    kind: z.literal("joints"),
    ...mapCommon,
    /** 0-based joints on the x and y axes (default: the wrist's q4 and q5 of a six-axis arm). */
    xJoint: z.number().int().min(0).max(11).nullable().default(null),
    yJoint: z.number().int().min(0).max(11).nullable().default(null),
  }),
  z.object({
    kind: z.literal("cartesian"),
    ...mapCommon,
    plane: z.enum(["xy", "xz", "yz"]).default("xz"),
    halfWidthM: z.number().min(0.01, "at least 10 mm").max(2, "at most 2 m").default(0.4),
  }),
]);
export type MapRequest = z.input<typeof mapRequestSchema>;

/** A map: row-major values (rows = ys, columns = xs); null where the point is unreachable. */
export const mapResponseSchema = z.object({
  kind: z.enum(["joints", "cartesian"]),
  measure: z.enum(["sigma-min", "condition"]),
  xLabel: z.string(),
  yLabel: z.string(),
  xs: z.array(num),
  ys: z.array(num),
  values: z.array(num.nullable()),
  toolLengthM: num.nullable(),
  computeMs: num,
});
export type MapResponse = z.infer<typeof mapResponseSchema>;

// ---------------------------------------------------------------------------------------------------
// Evidence
// ---------------------------------------------------------------------------------------------------

/** POST /api/versions/:id/submit: runs of this version to attach (the site's evidence rule may add more). */
export const submitVersionSchema = z.object({ evidenceRunIds: z.array(id).max(50, "at most 50 runs").default([]) });
export type SubmitVersionInput = z.infer<typeof submitVersionSchema>;

// ---------------------------------------------------------------------------------------------------
// The sweep's server-sent events (one format for the server that writes them and every reader)
// ---------------------------------------------------------------------------------------------------

export interface StreamEvent {
  event: string;
  data: unknown;
}

/** One event as text/event-stream carries it: its name, its data as one line of JSON, a blank line. */
export const formatStreamEvent = (event: string, data: unknown): string => `event: ${event}\ndata: ${JSON.stringify(data)}\n\n`;

/** The complete events in `buffer` (each ends in a blank line), and what is left for the next chunk. */
export function takeStreamEvents(buffer: string): { events: StreamEvent[]; rest: string } {
  const events: StreamEvent[] = [];
  let rest = buffer;
  let end: number;
  while ((end = rest.indexOf("\n\n")) >= 0) {
    const block = rest.slice(0, end);
    rest = rest.slice(end + 2);
    const event = /^event: (.*)$/m.exec(block)?.[1] ?? "message";
    events.push({ event, data: JSON.parse(/^data: (.*)$/m.exec(block)?.[1] ?? "null") as unknown });
  }
  return { events, rest };
}
