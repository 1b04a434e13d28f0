import { z } from "zod";
import { trialRunSchema } from "./bench-api.ts";
import { armRefShape, nullablePersonRefShape, operatorRefShape, personRefShape, profileRefShape } from "./named-refs.ts";
import { ceilingsSchema, profileParamsSchema, versionStateSchema } from "./profile.ts";
import { singleLineName } from "./text.ts";

/** Request and response shapes of the profiles, versions, ceilings, approvals, mail and audit API. */

const note = z.string().trim().max(2000, "at most 2000 characters");

/**
 * The version a save makes, as both ways of saving one send it: its parameters, a note, and the arm
 * revision (issue 12) and the tool on that revision it drives. An absent armRevisionId or toolId means the
 * default each request below states; a null toolId means none (the revision's own tool transform).
 */
const savedVersionShape = {
  params: profileParamsSchema,
  note: note.default(""),
  armRevisionId: z.number().int().positive().optional(),
  toolId: z.number().int().positive().nullable().optional(),
};

/** A new profile and its v1; absent armRevisionId: the arm's latest revision; absent toolId: its first tool in service. */
export const createProfileSchema = z.object({
  name: singleLineName({ requiredMessage: "a profile needs a name", max: 120 }),
  operatorId: z.string().min(1, "pick an operator"),
  armId: z.number().int().positive("pick an arm"),
  ...savedVersionShape,
});
export type CreateProfileInput = z.infer<typeof createProfileSchema>;

/**
 * Every save is a new version. parentVersionId is the version the edits started from (any version of the
 * profile); latestVersionId is the profile's latest version as the editor saw it (optimistic concurrency:
 * 409 stale_parent when another version was saved since). Without latestVersionId the parent must be the
 * latest version. An armRevisionId moves the profile to another revision of its arm; absent: the parent
 * version's revision; absent toolId: the parent's tool (or, with a new revision, its first tool).
 */
export const saveVersionSchema = z.object({
  parentVersionId: z.number().int().positive(),
  latestVersionId: z.number().int().positive().optional(),
  ...savedVersionShape,
});
export type SaveVersionInput = z.infer<typeof saveVersionSchema>;

export const approveVersionSchema = z.object({
  comment: z.string().trim().min(3, "an approval needs a comment").max(2000),
  /** The SHA-256 the reviewer saw; approval is refused if the version's hash differs. */
  paramsSha256: z.string().regex(/^[0-9a-f]{64}$/, "a SHA-256 in hex"),
  /** Required (true) to approve a version older than the profile's approved one: a rollback (409 rollback_unconfirmed otherwise). */
  rollback: z.boolean().optional(),
});
/** The author takes a submission back; the note is kept with the version. */
export const withdrawVersionSchema = z.object({ note: z.string().trim().max(2000).default("") });
/** A safety officer confirms a flagged approved version that complies with the ceilings in force. */
export const reconfirmVersionSchema = z.object({ comment: z.string().trim().min(3, "say why it may be driven again").max(2000) });
export const rejectVersionSchema = z.object({ reason: z.string().trim().min(3, "say why it is rejected").max(2000) });
export const retireVersionSchema = z.object({ reason: z.string().trim().min(3, "say why it is retired").max(2000) });

/** What the audit trail records changes of. */
export const AUDIT_ENTITIES = ["user", "arm", "profile", "version", "ceilings", "approval", "session", "trial", "recording"] as const;
export type AuditEntityKind = (typeof AUDIT_ENTITIES)[number];

/**
 * The arm revision and tool a version drives (issue 12), as GET /api/profiles/:id and the save name them
 * (absent where a route does not fill them; null: not known). The same fields name a recording's.
 */
export const versionArmRefShape = {
  armRevisionId: z.number().int().nullable().optional(),
  /** The revision's number (1, 2, …) within its arm. */
  armRevision: z.number().int().nullable().optional(),
  toolId: z.number().int().nullable().optional(),
  toolName: z.string().nullable().optional(),
};

export const profileVersionSchema = z.object({
  id: z.number().int(),
  profileId: z.number().int(),
  number: z.number().int(),
  parentVersionId: z.number().int().nullable(),
  state: versionStateSchema,
  params: profileParamsSchema,
  paramsSha256: z.string(),
  note: z.string(),
  ...personRefShape("author"),
  createdAt: z.string(),
  submittedAt: z.string().nullable(),
  ...nullablePersonRefShape("decidedBy"),
  decidedAt: z.string().nullable(),
  /** The approval comment, the rejection reason or the retirement reason. */
  decisionComment: z.string().nullable(),
  /** Set when site ceilings were lowered below this approved version: it cannot be driven. */
  exceedsCeilings: z.boolean(),
  ...versionArmRefShape,
});
export type ProfileVersion = z.infer<typeof profileVersionSchema>;

export const profileSummarySchema = z.object({
  id: z.number().int(),
  name: z.string(),
  ...operatorRefShape,
  ...armRefShape,
  createdAt: z.string(),
  latestVersion: profileVersionSchema,
  /** The one version its operator may drive, if any (approved, not flagged by lowered ceilings). */
  driveableVersionId: z.number().int().nullable(),
});
export type ProfileSummary = z.infer<typeof profileSummarySchema>;

export const ceilingsRecordSchema = z.object({
  revision: z.number().int(),
  ceilings: ceilingsSchema,
  ...nullablePersonRefShape("updatedBy"),
  updatedAt: z.string(),
});
export type CeilingsRecord = z.infer<typeof ceilingsRecordSchema>;

export const updateCeilingsSchema = z.object({
  /** The revision the safety officer edited; a newer one in the database → 409. */
  revision: z.number().int().min(0),
  ceilings: ceilingsSchema,
  note: note.default(""),
});

export const auditEntrySchema = z.object({
  id: z.number().int(),
  at: z.string(),
  ...nullablePersonRefShape("actor"),
  entity: z.enum(AUDIT_ENTITIES),
  entityId: z.string(),
  /**
   * What the entry is about, as everyone else names it: `"Pack opening" v6` for a version (never its row
   * id), a user name, a profile's or trial's name, "revision 4" (issue 13, item 9). The list route fills it;
   * the CSV export keeps entity and entity_id only.
   */
  entityLabel: z.string(),
  action: z.string(),
  summary: z.string(),
  sha256Before: z.string().nullable(),
  sha256After: z.string().nullable(),
});
export type AuditEntry = z.infer<typeof auditEntrySchema>;

export const auditQuerySchema = z.object({
  entity: auditEntrySchema.shape.entity.optional(),
  actorId: z.string().optional(),
  action: z.string().max(60).optional(),
  from: z.iso.datetime({ offset: true }).optional(),
  to: z.iso.datetime({ offset: true }).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
}).refine((q) => !q.from || !q.to || Date.parse(q.from) <= Date.parse(q.to), {
  message: "the start of the period must not be after its end",
  path: ["to"],
});

export const mailMessageSchema = z.object({
  id: z.number().int(),
  createdAt: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  kind: z.string(),
  status: z.enum(["pending", "sent", "failed"]),
  attempts: z.number().int(),
  lastError: z.string().nullable(),
  sentAt: z.string().nullable(),
});
export type MailMessage = z.infer<typeof mailMessageSchema>;

// Responses of the profiles and versions routes (the console parses every answer with these).

export const operatorOptionSchema = z.object({ id: z.string(), displayName: z.string(), username: z.string() });
export type OperatorOption = z.infer<typeof operatorOptionSchema>;
/** GET /api/operators */
export const operatorListResponseSchema = z.object({ operators: z.array(operatorOptionSchema) });
/** GET /api/profiles */
export const profileListResponseSchema = z.object({ profiles: z.array(profileSummarySchema) });
/** GET /api/profiles/:id: the profile and all its versions, newest first. */
export const profileDetailResponseSchema = z.object({ profile: profileSummarySchema, versions: z.array(profileVersionSchema) });
export type ProfileDetail = z.infer<typeof profileDetailResponseSchema>;
/** POST /api/profiles */
export const profileResponseSchema = z.object({ profile: profileSummarySchema });
/** POST /api/profiles/:id/versions and the version transitions. */
export const versionResponseSchema = z.object({ version: profileVersionSchema });

/** One event of a version's flag history (issue 13, item 3). */
export const CEILING_EVENT_KINDS = ["flag", "reconfirm"] as const;
export const ceilingEventSchema = z.object({
  id: z.number().int(),
  versionId: z.number().int(),
  kind: z.enum(CEILING_EVENT_KINDS),
  ceilingsRevision: z.number().int(),
  ...nullablePersonRefShape("actor"),
  comment: z.string(),
  at: z.string(),
});
export type CeilingEvent = z.infer<typeof ceilingEventSchema>;

export const ceilingViolationSchema = z.object({ field: z.string(), ceiling: z.string(), message: z.string() });
/** GET /api/versions/:id: the version, its profile, its ceiling check, the approved version and its approval. */
export const versionDetailResponseSchema = z.object({
  version: profileVersionSchema,
  profile: profileSummarySchema,
  violations: z.array(ceilingViolationSchema),
  approvedVersion: profileVersionSchema.nullable(),
  approval: z
    .object({ approverName: z.string(), approvedAt: z.string(), comment: z.string(), paramsSha256: z.string() })
    .nullable(),
  /** The runs the version was submitted with (empty for a draft, or where the site requires none). */
  evidence: z.array(trialRunSchema).default(() => []),
  /** Its flag history: flagged above the ceilings, re-confirmed under them (oldest first). */
  ceilingEvents: z.array(ceilingEventSchema).default(() => []),
});
export type VersionDetail = z.infer<typeof versionDetailResponseSchema>;

// The flag history and the flagged versions (issue 13, item 3).


/** An approved version of a profile above the ceilings (or re-confirmed), named as people know it. */
export const flaggedVersionSchema = z.object({
  versionId: z.number().int(),
  number: z.number().int(),
  ...profileRefShape,
  operatorName: z.string(),
  /** "Olena — pack opening v5" */
  label: z.string(),
  /** Still flagged: not driveable by its operator. */
  exceedsCeilings: z.boolean(),
  /** Within the ceilings in force now (a flagged one can be re-confirmed). */
  compliesNow: z.boolean(),
  violations: z.array(ceilingViolationSchema),
  events: z.array(ceilingEventSchema),
});
export type FlaggedVersion = z.infer<typeof flaggedVersionSchema>;
/** GET /api/ceilings/flagged: approved versions flagged now, with their history. */
export const flaggedVersionsResponseSchema = z.object({ versions: z.array(flaggedVersionSchema) });
/** PUT /api/ceilings */
export const updateCeilingsResponseSchema = z.object({
  record: ceilingsRecordSchema,
  flaggedVersionIds: z.array(z.number().int()),
  flaggedVersions: z.array(flaggedVersionSchema),
});
