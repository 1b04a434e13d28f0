import { z } from "zod";
import { armRefShape, driverRefShape, profileRefShape, versionRefShape } from "./named-refs.ts";
import { versionArmRefShape } from "./profile-api.ts";

/**
 * The live-jogging WebSocket protocol (path /ws/jog). JSON text frames, one message each, every one
 * validated on arrival with these schemas. SI units (m, rad, s) unless a name says otherwise; times the
 * client sends are its own clock in ms (performance.now()), echoed back for latency measurement.
 */
const finite = z.number().refine(Number.isFinite, "must be a finite number");
/** A normalised command axis: −1 … +1 of the profile's cap (after the client's own stick mapping). */
const axis = finite.refine((v) => v >= -1 && v <= 1, "an axis value must lie in −1 … 1");

// ----------------------------------------------------------------------------------------------------
// Client → server
// ----------------------------------------------------------------------------------------------------

/** Start driving (or switch to) a profile version. Drafts only for engineers; operators only their approved version. */
export const jogStartSchema = z.object({ type: z.literal("start"), versionId: z.number().int().positive() });

/**
 * Watch another live session (engineers and safety officers). Read-only, except that a watcher who holds
 * the safety officer role may send `estop`: it latches the driver's station (audited).
 */
export const jogWatchSchema = z.object({ type: z.literal("watch"), sessionId: z.string().min(1).max(64) });

/**
 * The whole input state, sent at up to 120 Hz while anything is held and at least every 50 ms while the
 * enabling control is held (so the watchdog sees a live stream). Raw stick values: the server applies
 * the profile's deadband, expo and slew limits.
 */
export const jogInputSchema = z.object({
  type: z.literal("input"),
  seq: z.number().int().nonnegative(),
  /** Client clock (ms) when sampled. */
  clientTimeMs: finite,
  /** The hold-to-run enabling control: released → controlled stop. */
  enabling: z.boolean(),
  mode: z.enum(["cartesian", "joint"]),
  /** Cartesian: the frame of the twist. */
  frame: z.enum(["world", "tool"]),
  /** Cartesian: [vx, vy, vz, wx, wy, wz] as fractions of the TCP caps; joint: one per joint as fractions of the joint caps. */
  axes: z.array(axis).min(1).max(12),
  /** Speed override, % of the caps (bounded by the profile's maximum). */
  overridePercent: z.number().min(0).max(100),
});

export const jogCommandSchema = z.object({
  type: z.enum(["estop", "reset-estop", "acknowledge", "ready-pose", "stop", "device-changed"]),
});

export const jogPingSchema = z.object({ type: z.literal("ping"), id: z.number().int().nonnegative(), clientTimeMs: finite });

export const jogClientMessageSchema = z.discriminatedUnion("type", [
  jogStartSchema,
  jogWatchSchema,
  jogInputSchema,
  jogPingSchema,
  z.object({ type: z.literal("estop") }),
  z.object({ type: z.literal("reset-estop") }),
  z.object({ type: z.literal("acknowledge") }),
  z.object({ type: z.literal("ready-pose") }),
  z.object({ type: z.literal("stop") }),
  /**
   * The driver's input device appeared, reappeared or was swapped (or the window regained focus): the
   * enabling control counts again only after it has been seen released (PRODUCT.md step 2).
   */
  z.object({ type: z.literal("device-changed") }),
]);
export type JogClientMessage = z.infer<typeof jogClientMessageSchema>;
export type JogInput = z.infer<typeof jogInputSchema>;

// ----------------------------------------------------------------------------------------------------
// Server → client
// ----------------------------------------------------------------------------------------------------

export const STOP_REASONS = [
  "none",
  "enabling-released",
  "watchdog",
  "emergency-stop",
  "singularity-guard",
  "session-ended",
  "profile-not-driveable",
] as const;
export type StopReason = (typeof STOP_REASONS)[number];

export const BINDING_LIMITS = ["none", "joint-rate", "tcp-linear", "tcp-angular", "joint-limit", "singularity-guard"] as const;

/**
 * How the arm stops (the motion gate, packages/kinematics motion-gate.ts): a controlled stop when the
 * enabling control is released, one after the watchdog time without input (its time and distance include
 * the wait), the singularity guard's stop, and "instant-halt" — the emergency stop in the simulation, joint
 * rates zero at once. An on-screen or gamepad STOP is not an emergency-stop device in the sense of
 * ISO 13850, and the simulated halt is not a stop category of IEC 60204-1.
 */
export const STOP_KINDS = ["enabling-released", "watchdog", "singularity-guard", "instant-halt"] as const;
export type StopKind = (typeof STOP_KINDS)[number];

/** Stopping time [s] and TCP path [m] of one kind of stop. */
export const stopEstimateSchema = z.object({ timeS: finite, distanceM: finite });
export type StopEstimateFields = z.infer<typeof stopEstimateSchema>;

const noStop = () => ({ timeS: 0, distanceM: 0 });

/** One estimate per stop kind (frames recorded before these fields existed read as zeros). */
export const stopPredictionsSchema = z.object({
  "enabling-released": stopEstimateSchema,
  watchdog: stopEstimateSchema,
  "singularity-guard": stopEstimateSchema,
  "instant-halt": stopEstimateSchema,
});
export type StopPredictions = z.infer<typeof stopPredictionsSchema>;

/** The active stop (isActive: what remains of it), or while moving the prediction for releasing now. */
export const stoppingSchema = z.object({
  kind: z.enum(STOP_KINDS),
  isActive: z.boolean(),
  timeS: finite,
  distanceM: finite,
});
export type Stopping = z.infer<typeof stoppingSchema>;
export const GUARD_STATES = ["off", "clear", "stopped", "backing-out", "acknowledged"] as const;

export const jogSessionInfoSchema = z.object({
  sessionId: z.string(),
  ...versionRefShape,
  versionState: z.string(),
  /** True when an engineer drives a version that is not approved: the page marks it plainly. */
  isUnapproved: z.boolean(),
  ...profileRefShape,
  ...armRefShape,
  /** The arm revision and tool the version was saved on (issue 12); null where the server does not know them. */
  ...versionArmRefShape,
  ...driverRefShape,
  tickRateHz: z.number(),
  frameRateHz: z.number(),
  watchdogMs: z.number(),
  /** Read-only watcher of somebody else's session. */
  isWatching: z.boolean(),
});
export type JogSessionInfo = z.infer<typeof jogSessionInfoSchema>;

/** One state frame, sent at the frame rate (default 60 Hz). */
export const jogStateSchema = z.object({
  type: z.literal("state"),
  sessionId: z.string(),
  /** Simulation time since the session started [s]. */
  t: finite,
  q: z.array(finite),
  qdot: z.array(finite),
  /** TCP pose, 4x4 row-major. */
  pose: z.array(finite).length(16),
  twistCommanded: z.array(finite).length(6),
  twistAchieved: z.array(finite).length(6),
  sigmaMin: finite,
  manipulability: finite,
  lambda: finite,
  scales: z.object({ jointRate: finite, tcpLinear: finite, tcpAngular: finite, jointLimit: finite }),
  binding: z.enum(BINDING_LIMITS),
  /** 0-based joint index for joint-rate / joint-limit bindings, else −1. */
  bindingJoint: z.number().int(),
  guardState: z.enum(GUARD_STATES),
  enabled: z.boolean(),
  estopLatched: z.boolean(),
  stopReason: z.enum(STOP_REASONS),
  overridePercent: finite,
  warnings: z.array(z.string()),
  // The three below came after the first recordings; their defaults let those frames still replay.
  /** The active stop, or the prediction for releasing the enabling control now (from the latest step). */
  stopping: stoppingSchema.default(() => ({ kind: "enabling-released" as const, isActive: false, ...noStop() })),
  /** Stopping time and distance for each kind of stop, predicted from the latest step's motion. */
  stopPredictions: stopPredictionsSchema.default(() => ({
    "enabling-released": noStop(), watchdog: noStop(), "singularity-guard": noStop(), "instant-halt": noStop(),
  })),
  /**
   * Peak |q̈_i| per joint over the ticks since the previous frame [rad/s² or m/s² for a prismatic joint],
   * from successive joint rates; the instant halt (a step by definition) is left out.
   */
  jointAccelPeak: z.array(finite).default(() => []),
  /**
   * What acted on the simulation since the previous frame, in order, for the recording's replay (issue 10):
   * each event is [tick, kind, …values] (INPUT_EVENT), `tick` the ticks simulated before it took effect.
   */
  inputEvents: z.array(z.array(finite)).optional(),
  /** The last input seq applied, and its client time, for the client's input-to-state latency. */
  lastInputSeq: z.number().int(),
  lastInputClientTimeMs: finite,
});
export type JogState = z.infer<typeof jogStateSchema>;

/**
 * Kinds of the recorded input events (JogState.inputEvents), with their values after [tick, kind]:
 * - start: estopLatched (0/1), then the joint positions the session started at;
 * - input: seq, enabling (0/1), mode (0 Cartesian, 1 joint), frame (0 world, 1 tool), override %, axes…;
 * - estop, resetEstop, acknowledge, readyPose: nothing; requireRelease: nothing (the reason is not replayed);
 * - stall: the scheduler's stall total [ms] from this tick on (it excuses input silence, see simulation.ts);
 * - end: nothing (the session ended).
 */
export const INPUT_EVENT = { start: 0, input: 1, estop: 2, resetEstop: 3, requireRelease: 4, acknowledge: 5, readyPose: 6, stall: 7, end: 8 } as const;

/**
 * Why a session ended: the `ended` frame's `reason` and the recording's `end_reason` (the server's
 * sentence for the person comes with it; the console's words for each are JOG_END_REASON_LABELS).
 */
export const JOG_END_REASONS = [
  "stopped",
  "disconnected",
  "switched",
  "profile-not-driveable",
  "server-shutdown",
  "signed-out",
  "session-expired",
  "account-deactivated",
  "roles-changed",
  "simulation-failed",
] as const;
export type JogEndReason = (typeof JOG_END_REASONS)[number];

/**
 * The codes of the socket's own `error` frames (it also sends the API's ERROR_CODES: forbidden, not_found,
 * validation_failed, rate_limited, internal, database_unavailable), and the console's own three for what
 * it finds itself (a frame it cannot read, a close that means signed out or deactivated).
 */
export const JOG_ERROR_CODES = [
  "no_session",
  "read_only",
  "busy",
  "bad_message",
  "bad_json",
  "too_large",
  "too_many_bad_messages",
  "account_changed",
  "bad_axes",
  "estop_latched",
  "not_stopped",
  "start_rate_limited",
  "account_session_limit",
  "server_session_limit",
  "bad_frame",
  "signed_out",
  "account_deactivated",
] as const;
export type JogErrorCode = (typeof JOG_ERROR_CODES)[number];

export const jogServerMessageSchema = z.discriminatedUnion("type", [
  z.object({ type: z.literal("welcome"), userId: z.string(), roles: z.array(z.string()) }),
  z.object({ type: z.literal("session"), session: jogSessionInfoSchema }),
  jogStateSchema,
  z.object({ type: z.literal("pong"), id: z.number().int(), clientTimeMs: finite, serverTimeMs: finite }),
  /**
   * A session ended (for a watcher: it ended, or this person may no longer watch it). `reason` is a code
   * (also the recording's end reason, e.g. "stopped", "account-deactivated"); `message` says it in a
   * sentence for the person (absent from servers before it was added).
   */
  z.object({
    type: z.literal("ended"),
    sessionId: z.string(),
    reason: z.string(),
    message: z.string().optional(),
    recordingId: z.number().int().nullable(),
  }),
  z.object({ type: z.literal("error"), code: z.string(), message: z.string() }),
]);
export type JogServerMessage = z.infer<typeof jogServerMessageSchema>;

/**
 * WebSocket close codes of /ws/jog beyond the standard ones (1001 server shutting down, 1008 too many bad
 * messages, 1009 too large). Application codes (4000–4999, RFC 6455 §7.4.2), 4000 + the HTTP status they
 * mirror; the `ended` frame of a driven or watched session is always sent before the close. A client does
 * not reconnect after either (they "will not come back": the cookie session or the account is gone), and
 * reconnects with backoff after any other close.
 */
export const JOG_CLOSE_CODES = {
  /**
   * The cookie session ended: signed out (here or in another tab), expired, or the password was changed;
   * also an upgrade without a valid session (completed and closed at once, so a browser, which never sees
   * a refused upgrade's HTTP status, can tell it from a network failure and send the person to sign in).
   */
  signedOut: 4401,
  /** An admin deactivated the account. */
  accountDeactivated: 4403,
  /**
   * The upgrade could not check the sign-in because the database is unavailable (issue 11, item 5): RFC
   * 6455's registered 1013 "Try Again Later". Not final: the console reconnects with backoff.
   */
  databaseUnavailable: 1013,
} as const;

// ----------------------------------------------------------------------------------------------------
// REST around live jogging: live sessions, recordings, gamepad mappings
// ----------------------------------------------------------------------------------------------------

export const liveSessionSchema = z.object({
  sessionId: z.string(),
  ...driverRefShape,
  profileName: z.string(),
  ...versionRefShape,
  armName: z.string(),
  startedAt: z.string(),
  isUnapproved: z.boolean(),
});
export type LiveSession = z.infer<typeof liveSessionSchema>;

export const recordingSummarySchema = z.object({
  durationS: finite,
  frames: z.number().int(),
  maxTcpSpeedMPerS: finite,
  minSigma: finite,
  maxJointRateFraction: finite,
  /** How often each stop reason occurred. */
  stops: z.record(z.string(), z.number().int()),
  // The two below came after the first recordings; their defaults let those summaries still parse.
  /** Peak |q̈_i| per joint over the session [rad/s² or m/s²], from successive joint rates; instant halts left out. */
  peakJointAccel: z.array(finite).default(() => []),
  /**
   * Completed stops by kind (STOP_KINDS), measured from the trigger to rest (the watchdog's from the last
   * input): how many, the longest time and TCP path, and the most any one ran beyond its prediction.
   */
  stopsMeasured: z
    .record(
      z.string(),
      z.object({ count: z.number().int(), maxTimeS: finite, maxDistanceM: finite, maxExcessDistanceM: finite }),
    )
    .default(() => ({})),
  /** Frames the server could not record because the database fell behind (recordings/writer.ts); 0 normally. */
  droppedFrames: z.number().int().nonnegative().default(0),
});
export type RecordingSummary = z.infer<typeof recordingSummarySchema>;

export const recordingSchema = z.object({
  id: z.number().int(),
  sessionId: z.string(),
  // Who drove what: the driver, the arm, the profile and its version.
  ...driverRefShape, ...armRefShape, ...profileRefShape, ...versionRefShape,
  startedAt: z.string(),
  endedAt: z.string().nullable(),
  endReason: z.string().nullable(),
  summary: recordingSummarySchema.nullable(),
  /** The arm revision and tool its version drove (GET /api/recordings/:id fills them; the replay draws that revision). */
  ...versionArmRefShape,
});
export type Recording = z.infer<typeof recordingSchema>;

/** One recorded frame (frame rate): the state frame without the session id and latency fields. */
export const recordedFrameSchema = jogStateSchema.omit({ type: true, sessionId: true, lastInputSeq: true, lastInputClientTimeMs: true });
export type RecordedFrame = z.infer<typeof recordedFrameSchema>;

export const TWIST_TARGETS = ["vx", "vy", "vz", "wx", "wy", "wz"] as const;

/**
 * A user's gamepad set-up (browser Gamepad API, standard mapping). Stick deadband and expo here
 * calibrate the device; the profile's own shaping is applied on the server on top.
 */
export const gamepadMappingSchema = z.object({
  axes: z
    .array(
      z.object({
        target: z.enum(TWIST_TARGETS),
        /** Gamepad axis index (standard mapping: 0/1 left stick x/y, 2/3 right stick x/y), or a button pair. */
        source: z.discriminatedUnion("kind", [
          z.object({ kind: z.literal("axis"), index: z.number().int().min(0).max(15) }),
          z.object({ kind: z.literal("buttons"), positive: z.number().int().min(0).max(31), negative: z.number().int().min(0).max(31) }),
        ]),
        invert: z.boolean(),
      }),
    )
    .max(6)
    .refine((a) => new Set(a.map((x) => x.target)).size === a.length, "each twist component once"),
  deadband: finite.refine((v) => v >= 0 && v <= 0.5, "the deadband must be 0–50 %"),
  expo: finite.refine((v) => v >= 0 && v <= 1, "the expo must be 0–1"),
  /** Button held as the enabling control (hold-to-run). */
  enablingButton: z.number().int().min(0).max(31),
  /** Button that triggers the emergency stop, or null. */
  estopButton: z.number().int().min(0).max(31).nullable(),
});
export type GamepadMapping = z.infer<typeof gamepadMappingSchema>;

/** Standard mapping defaults: left stick x/y → vx/vy, triggers-as-buttons → vz, right stick → wx/wy, bumpers → wz; LB… */
export const DEFAULT_GAMEPAD_MAPPING: GamepadMapping = {
  axes: [
    { target: "vx", source: { kind: "axis", index: 1 }, invert: true },
    { target: "vy", source: { kind: "axis", index: 0 }, invert: true },
    { target: "vz", source: { kind: "buttons", positive: 12, negative: 13 }, invert: false },
    { target: "wx", source: { kind: "axis", index: 3 }, invert: true },
    { target: "wy", source: { kind: "axis", index: 2 }, invert: false },
    { target: "wz", source: { kind: "buttons", positive: 4, negative: 5 }, invert: false },
  ],
  deadband: 0.1,
  expo: 0.3,
  enablingButton: 7,
  estopButton: 1,
};
