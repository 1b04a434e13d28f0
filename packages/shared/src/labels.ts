import { ERROR_CODES, type ErrorCode } from "./errors.ts";
import { AUDIT_ENTITIES, CEILING_EVENT_KINDS, mailMessageSchema, type AuditEntityKind } from "./profile-api.ts";
import { ceilingsSchema, EVIDENCE_RULES, GUARD_POLICIES, GUARD_POLICY_LABELS, VERSION_STATES, type Ceilings, type VersionState } from "./profile.ts";
import { DAMPING_KIND_LABELS } from "./profile-fields.ts";
import { ROLE_LABELS, ROLES } from "./roles.ts";
import { GUARD_STATES, JOG_END_REASONS, JOG_ERROR_CODES, jogInputSchema, STOP_KINDS, STOP_REASONS, type JogInput } from "./jog-protocol.ts";
import { BUILTIN_TRIAL_KINDS, type BuiltinTrialKind } from "./trials.ts";

/**
 * The one map of human labels for every closed set of values that reaches a screen (issue 13, item 9).
 * Each map is a `Record` over the set's type, so TypeScript demands a label for every member; the
 * registry `LABELLED_SETS` pairs each map with the set's runtime values (a zod enum's `.options` or its
 * `as const` list), and `labels.test.ts` fails when any value has no label. A contributor who adds a
 * value to an enum shown to people adds its label here; a new enum gets a map and a registry entry.
 * Labels are sentence case ("Safety officer", "Above the ceilings"), never the code itself.
 */
export type LabelMap<T extends string> = Readonly<Record<T, string>>;

// Roles: ROLE_LABELS (roles.ts). Damping schemes and guard policies: DAMPING_KIND_LABELS and
// GUARD_POLICY_LABELS (profile-fields.ts, profile.ts). They stay beside their sets and join the registry below.

// ---------------------------------------------------------------------------------------------------
// Versions, reviews, ceilings
// ---------------------------------------------------------------------------------------------------

export const VERSION_STATE_LABELS: LabelMap<VersionState> = {
  draft: "Draft",
  submitted: "Submitted",
  approved: "Approved",
  rejected: "Rejected",
  superseded: "Superseded",
  retired: "Retired",
  withdrawn: "Withdrawn",
};

export const EVIDENCE_RULE_LABELS: LabelMap<(typeof EVIDENCE_RULES)[number]> = {
  "builtin-trials": "Built-in trials",
  none: "None",
};

/** Each site ceiling as the ceilings page names it (issues and audit summaries cite a ceiling by this). */
export const CEILING_LABELS: LabelMap<keyof Ceilings> = {
  tcpLinearMaxMPerS: "TCP linear speed, at most",
  tcpAngularMaxRadPerS: "TCP angular speed, at most",
  jointSpeedFractionMax: "Joint rate cap, at most",
  watchdogMaxMs: "Input watchdog, at most",
  allowedGuardPolicies: "Allowed guard policies",
  lambdaMaxMinM: "Damping at the singularity, at least",
  stoppingDistanceMaxM: "Controlled stop, at most",
  decelerationMinMPerS2: "Linear deceleration, at least",
  evidenceRequired: "Evidence before submission",
};

// ---------------------------------------------------------------------------------------------------
// Audit trail
// ---------------------------------------------------------------------------------------------------

/** What an audit entry is about, as the audit page names it (an entity id follows: "Version v6"). */
export const AUDIT_ENTITY_LABELS: LabelMap<AuditEntityKind> = {
  user: "Account",
  arm: "Arm",
  profile: "Profile",
  version: "Version",
  ceilings: "Site ceilings",
  approval: "Approval",
  session: "Jog session",
  trial: "Trial",
  recording: "Recording",
};

/** Every action the server writes to the audit log (`recordAudit`'s `action`). */
export const AUDIT_ACTIONS = [
  "create",
  "edit",
  "update",
  "save",
  "submit",
  "approve",
  "reject",
  "retire",
  "supersede",
  "flag",
  "withdraw",
  "rollback",
  "reconfirm",
  "deactivate",
  "reactivate",
  "roles",
  "password",
  "estop-latch",
  "estop-reset",
  "prune",
] as const;
export type AuditAction = (typeof AUDIT_ACTIONS)[number];

export const AUDIT_ACTION_LABELS: LabelMap<AuditAction> = {
  create: "Created",
  edit: "Edited",
  update: "Changed",
  save: "Saved",
  submit: "Submitted for review",
  approve: "Approved",
  reject: "Rejected",
  retire: "Retired",
  supersede: "Superseded",
  flag: "Flagged above the ceilings",
  withdraw: "Withdrawn from review",
  rollback: "Rolled back to an older version",
  reconfirm: "Re-confirmed under current ceilings",
  deactivate: "Deactivated",
  reactivate: "Reactivated",
  roles: "Roles changed",
  password: "Password changed",
  "estop-latch": "Station stop latched",
  "estop-reset": "Station stop reset",
  prune: "Pruned by retention",
};

// ---------------------------------------------------------------------------------------------------
// Outgoing mail
// ---------------------------------------------------------------------------------------------------

/** Every kind of mail the server sends (`enqueueMail`'s `kind`). */
export const MAIL_KINDS = ["version-submitted", "version-approved", "version-rejected", "ceilings-lowered", "version-reconfirmed"] as const;
export type MailKind = (typeof MAIL_KINDS)[number];

export const MAIL_KIND_LABELS: LabelMap<MailKind> = {
  "version-submitted": "Version submitted for review",
  "version-approved": "Version approved",
  "version-rejected": "Version rejected",
  "ceilings-lowered": "Site ceilings lowered",
  "version-reconfirmed": "Version re-confirmed under current ceilings",
};

export type MailStatus = (typeof mailMessageSchema.shape.status.options)[number];
export const MAIL_STATUS_LABELS: LabelMap<MailStatus> = {
  pending: "Waiting to send",
  sent: "Sent",
  failed: "Failed",
};

// ---------------------------------------------------------------------------------------------------
// Errors shown to people
// ---------------------------------------------------------------------------------------------------

export const ERROR_CODE_LABELS: LabelMap<ErrorCode> = {
  bad_request: "Request not understood",
  validation_failed: "Some values need fixing",
  unauthenticated: "Signed out",
  forbidden: "Not allowed",
  not_found: "Not found",
  conflict: "Changed meanwhile",
  rate_limited: "Too many attempts",
  bad_origin: "Request from another site refused",
  invalid_credentials: "Wrong user name or password",
  account_inactive: "Account deactivated",
  stale_parent: "A newer version exists",
  ceiling_exceeded: "Above the site ceilings",
  locked: "Locked",
  invalid_transition: "Not possible in this state",
  evidence_insufficient: "Trial evidence missing",
  rollback_unconfirmed: "Roll back not confirmed",
  internal: "Something went wrong on the server",
  unavailable: "Service unavailable",
  database_unavailable: "Database unavailable",
};

// ---------------------------------------------------------------------------------------------------
// Drive (helper "drv": session end reasons, stop kinds, jog error codes) — add maps below this line
// ---------------------------------------------------------------------------------------------------

// drive section (helper drv): what the drive, live and recordings pages name.

/** Why a live session ended (the `ended` frame's reason, the recording's end reason). */
export const JOG_END_REASON_LABELS: LabelMap<(typeof JOG_END_REASONS)[number]> = {
  stopped: "Ended by the driver",
  disconnected: "Connection lost",
  switched: "Switched to another version",
  "profile-not-driveable": "Version no longer driveable",
  "server-shutdown": "Server shut down",
  "signed-out": "Signed out",
  "session-expired": "Sign-in expired",
  "account-deactivated": "Account deactivated",
  "roles-changed": "Roles changed",
  "simulation-failed": "Simulation failed",
};

/** Why the arm stopped (a state frame's stopReason; the recording summary counts each). */
export const STOP_REASON_LABELS: LabelMap<(typeof STOP_REASONS)[number]> = {
  none: "Not stopped",
  "enabling-released": "Enabling control released",
  watchdog: "Input stream lost (watchdog)",
  "emergency-stop": "Emergency stop",
  "singularity-guard": "Stopped before a singularity",
  "session-ended": "Session ended",
  "profile-not-driveable": "Version no longer driveable",
};

/** How the arm stops (the stopping panel; the simulated halt named for what it is). */
export const STOP_KIND_LABELS: LabelMap<(typeof STOP_KINDS)[number]> = {
  "enabling-released": "Enabling released",
  watchdog: "Watchdog (input lost)",
  "singularity-guard": "Singularity guard",
  "instant-halt": "Instant halt (simulation)",
};

/** The stop-before guard's state; "stopped" stays until acknowledged or the arm has backed out. */
export const GUARD_STATE_LABELS: LabelMap<(typeof GUARD_STATES)[number]> = {
  off: "Guard off — damping through",
  clear: "Clear",
  stopped: "Held before the singular region — acknowledgement needed",
  "backing-out": "Backing out of the singular region",
  acknowledged: "Acknowledged — passing through, damped",
};

/** The jog socket's own error codes (the API's are ERROR_CODE_LABELS), as the title above its sentence. */
export const JOG_ERROR_LABELS: LabelMap<(typeof JOG_ERROR_CODES)[number]> = {
  no_session: "No session is running",
  read_only: "Watching only",
  busy: "A session is already starting",
  bad_message: "Message not understood",
  bad_json: "Message not understood",
  too_large: "Message too large",
  too_many_bad_messages: "Too many bad messages",
  account_changed: "Your account just changed",
  bad_axes: "Wrong number of axes",
  estop_latched: "Emergency stop latched",
  not_stopped: "The arm is not at rest",
  start_rate_limited: "Too many starts in a short time",
  account_session_limit: "You drive too many sessions",
  server_session_limit: "The server is at its session limit",
  bad_frame: "Unreadable message from the server",
  signed_out: "Signed out",
  account_deactivated: "Account deactivated",
};

/** What the jog axes command (the drive page's mode switch). */
export const JOG_MODE_LABELS: LabelMap<JogInput["mode"]> = {
  cartesian: "Cartesian",
  joint: "Joint",
};

/** The frame a Cartesian jog's twist is in (the drive page's frame switch). */
export const JOG_FRAME_LABELS: LabelMap<JogInput["frame"]> = {
  world: "World frame",
  tool: "Tool frame",
};

// ---------------------------------------------------------------------------------------------------
// Workflow (helper "flow") — add maps below this line
// ---------------------------------------------------------------------------------------------------

/** A version's flag history (`version_ceiling_events.kind`). */
export const CEILING_EVENT_KIND_LABELS: LabelMap<(typeof CEILING_EVENT_KINDS)[number]> = {
  flag: "Flagged above the ceilings",
  reconfirm: "Re-confirmed under current ceilings",
};

// ---------------------------------------------------------------------------------------------------
// The registry: every labelled set with its runtime values (labels.test.ts checks each value has a label)
// ---------------------------------------------------------------------------------------------------

/** The bench's built-in trials (trials.ts), as the bench lists them when one does not apply to an arm. */
export const BUILTIN_TRIAL_LABELS: LabelMap<BuiltinTrialKind> = {
  "wrist-line": "Straight line through wrist alignment",
  "wrist-near-miss-3mm": "Near miss of wrist alignment, 3 mm",
  "wrist-near-miss-10mm": "Near miss of wrist alignment, 10 mm",
  "wrist-lost-rotation": "Rotation about the direction lost at the wrist",
  "elbow-reach": "Reach toward the workspace boundary (elbow)",
  "shoulder-pass": "Pass near the shoulder singularity",
  "guard-ramp": "Ramp into the stop-before guard",
};

export const LABELLED_SETS = {
  role: { values: ROLES, labels: ROLE_LABELS },
  versionState: { values: VERSION_STATES, labels: VERSION_STATE_LABELS },
  evidenceRule: { values: EVIDENCE_RULES, labels: EVIDENCE_RULE_LABELS },
  ceiling: { values: ceilingsSchema.keyof().options, labels: CEILING_LABELS },
  dampingKind: { values: ["fixed", "singular-value", "manipulability"] as const, labels: DAMPING_KIND_LABELS },
  guardPolicy: { values: GUARD_POLICIES, labels: GUARD_POLICY_LABELS },
  auditEntity: { values: AUDIT_ENTITIES, labels: AUDIT_ENTITY_LABELS },
  auditAction: { values: AUDIT_ACTIONS, labels: AUDIT_ACTION_LABELS },
  mailKind: { values: MAIL_KINDS, labels: MAIL_KIND_LABELS },
  mailStatus: { values: mailMessageSchema.shape.status.options, labels: MAIL_STATUS_LABELS },
  errorCode: { values: ERROR_CODES, labels: ERROR_CODE_LABELS },
  // drv: drive sets here
  jogEndReason: { values: JOG_END_REASONS, labels: JOG_END_REASON_LABELS },
  stopReason: { values: STOP_REASONS, labels: STOP_REASON_LABELS },
  stopKind: { values: STOP_KINDS, labels: STOP_KIND_LABELS },
  guardState: { values: GUARD_STATES, labels: GUARD_STATE_LABELS },
  jogError: { values: JOG_ERROR_CODES, labels: JOG_ERROR_LABELS },
  jogMode: { values: jogInputSchema.shape.mode.options, labels: JOG_MODE_LABELS },
  jogFrame: { values: jogInputSchema.shape.frame.options, labels: JOG_FRAME_LABELS },
  builtinTrial: { values: BUILTIN_TRIAL_KINDS, labels: BUILTIN_TRIAL_LABELS },
  // flow: workflow sets here
  ceilingEventKind: { values: CEILING_EVENT_KINDS, labels: CEILING_EVENT_KIND_LABELS },
} as const satisfies Record<string, { values: readonly string[]; labels: Readonly<Record<string, string>> }>;

export type LabelledSet = keyof typeof LABELLED_SETS;
export type LabelledValue<K extends LabelledSet> = (typeof LABELLED_SETS)[K]["values"][number];

/**
 * The label of `value` in the set `kind`. A value from an older record that the set no longer holds (an
 * audit row written before a rename) reads as words, never as the code: "estop-latch" → "Estop latch".
 */
export function label<K extends LabelledSet>(kind: K, value: LabelledValue<K> | (string & {})): string {
  const labels = LABELLED_SETS[kind].labels as Readonly<Record<string, string>>;
  return Object.hasOwn(labels, value) ? labels[value]! : humanizeCode(value);
}

/** "version-rejected" / "no_session" → "Version rejected" / "No session": the fallback, never the primary path. */
export function humanizeCode(code: string): string {
  const words = code.replace(/[-_]+/g, " ").replace(/([a-z])([A-Z])/g, "$1 $2").trim().toLowerCase();
  return words.charAt(0).toUpperCase() + words.slice(1);
}
