import { UniqueConstraintError, type Sequelize, type Transaction } from "sequelize";
import {
  checkCeilings,
  drivingRefusalMessage,
  hasAnyRole,
  isDriveable,
  type Arm,
  type Ceilings,
  type CeilingViolation,
  type CreateProfileInput,
  type DriveableVersion,
  type DrivingKind,
  type ProfileParams,
  type ProfileSummary,
  type ProfileVersion,
  type SaveVersionInput,
  type User,
  type VersionState,
} from "@jogwright/shared";
import type { z } from "zod";
import type { approveVersionSchema, rejectVersionSchema, retireVersionSchema } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { sha256OfCanonical } from "../../hashing.ts";
import type { Mailer } from "../../mail/mailer.ts";
import { findArm } from "../arms/model.ts";
import { recordAudit } from "../audit/service.ts";
import { findLatestCeilings } from "../ceilings/model.ts";
import * as model from "./model.ts";

/**
 * The rules of rate profiles and their versions: every save is a new immutable version (optimistic
 * concurrency on the parent), a version moves draft → submitted → approved | rejected, a newer approval
 * supersedes the older one, any version can be retired, and only the current approved version that
 * still meets the site ceilings is driveable by its operator.
 */
export interface WorkflowContext {
  db: Sequelize;
  mailer: Mailer;
}

type ApproveInput = z.infer<typeof approveVersionSchema>;
type RejectInput = z.infer<typeof rejectVersionSchema>;
type RetireInput = z.infer<typeof retireVersionSchema>;

export const paramsSha256 = (params: ProfileParams) => sha256OfCanonical(params);

/** The arm's rated joint speeds (rad/s), which the joint-speed ceiling is a fraction of. */
export const ratedJointSpeeds = (arm: Arm) => arm.model.joints.map((j) => j.maxSpeed);

const isStaff = (user: User) => hasAnyRole(user.roles, ["engineer", "safety_officer"]);

/** Engineers and safety officers see every profile; an operator only their own (others are "not found"). */
function canSee(user: User, profile: model.ProfileRecord): boolean {
  return isStaff(user) || (user.roles.includes("operator") && profile.operatorId === user.id);
}

function versionLabel(profile: { name: string }, v: { number: number }): string {
  return `"${profile.name}" v${v.number}`;
}

async function armFor(db: Sequelize, armId: number): Promise<Arm> {
  const arm = await findArm(db, armId);
  if (!arm) throw new AppError(400, "validation_failed", "No such arm.", [{ path: "armId", message: "pick an existing arm" }]);
  return arm;
}

/** The parameters must fit the arm: one joint-rate cap per joint. */
function checkParamsFitArm(params: ProfileParams, arm: Arm): void {
  const joints = arm.model.joints.length;
  if (params.jointRateCapsRadPerS.length !== joints) {
    throw new AppError(
      400,
      "validation_failed",
      `The arm "${arm.name}" has ${joints} joints, so the profile needs ${joints} joint rate caps (got ${params.jointRateCapsRadPerS.length}).`,
      [{ path: "params.jointRateCapsRadPerS", message: `one cap per joint: ${joints} values` }],
    );
  }
}

function ceilingError(label: string, action: "submitted" | "approved", violations: CeilingViolation[]): AppError {
  const first = violations[0]!;
  const more = violations.length > 1 ? ` (and ${violations.length - 1} more)` : "";
  return new AppError(
    422,
    "ceiling_exceeded",
    `${label} cannot be ${action}: ${first.message} — field ${first.field}, ceiling ${first.ceiling}${more}.`,
    violations.map((v) => ({ path: v.field, message: `${v.message} (ceiling ${v.ceiling})` })),
  );
}

async function visibleProfile(db: Sequelize, user: User, id: number): Promise<model.ProfileRecord> {
  const profile = await model.findProfile(db, id);
  if (!profile || !canSee(user, profile)) throw new AppError(404, "not_found", "No such profile.");
  return profile;
}

// ---------------------------------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------------------------------

export async function listOperators(db: Sequelize) {
  const people = await model.listActiveWithRole(db, "operator");
  return people.map((p) => ({ id: p.id, displayName: p.displayName, username: p.username }));
}

export async function listProfilesFor(db: Sequelize, user: User): Promise<ProfileSummary[]> {
  const profiles = isStaff(user) ? await model.listProfiles(db) : await model.listProfiles(db, { operatorId: user.id });
  return profiles.map(model.publicProfile);
}

export async function getProfile(db: Sequelize, user: User, id: number) {
  const profile = await visibleProfile(db, user, id);
  const versions = await model.listVersions(db, id);
  return { profile: model.publicProfile(profile), versions: versions.map(model.publicVersion) };
}

/** A version for the review screen: its ceiling check, the approved version to diff against, its approval. */
export async function getVersionDetail(db: Sequelize, user: User, id: number) {
  const version = await model.findVersion(db, id);
  if (!version) throw new AppError(404, "not_found", "No such version.");
  const profile = await visibleProfile(db, user, version.profileId);
  const [arm, ceilings, approvedVersion, approval] = await Promise.all([
    armFor(db, profile.armId),
    findLatestCeilings(db),
    model.findApprovedVersion(db, profile.id),
    model.findApproval(db, id),
  ]);
  return {
    version: model.publicVersion(version),
    profile: model.publicProfile(profile),
    violations: checkCeilings(version.params, ceilings.ceilings, ratedJointSpeeds(arm)),
    approvedVersion: approvedVersion ? model.publicVersion(approvedVersion) : null,
    approval: approval
      ? { approverName: approval.approverName, approvedAt: approval.approvedAt, comment: approval.comment, paramsSha256: approval.paramsSha256 }
      : null,
  };
}

/** The safety officers' queue: submitted versions, oldest submission first. */
export async function listReviewQueue(db: Sequelize) {
  const versions = await model.listVersionsInState(db, "submitted");
  const profiles = new Map<number, model.ProfileRecord>();
  for (const v of versions) {
    if (!profiles.has(v.profileId)) profiles.set(v.profileId, (await model.findProfile(db, v.profileId))!);
  }
  return versions.map((v) => {
    const p = profiles.get(v.profileId)!;
    return { ...model.publicVersion(v), profileName: p.name, operatorName: p.operatorName, armName: p.armName };
  });
}

// ---------------------------------------------------------------------------------------------------
// Saving
// ---------------------------------------------------------------------------------------------------

export async function createProfile(ctx: WorkflowContext, actor: User, input: CreateProfileInput): Promise<ProfileSummary> {
  const { db } = ctx;
  const arm = await armFor(db, input.armId);
  checkParamsFitArm(input.params, arm);
  const [operator] = await model.findPeople(db, [input.operatorId]);
  const operators = await model.listActiveWithRole(db, "operator");
  if (!operator || !operators.some((o) => o.id === operator.id)) {
    throw new AppError(400, "validation_failed", "Pick an active operator for the profile.", [
      { path: "operatorId", message: "not an active operator" },
    ]);
  }
  const profileId = await db.transaction(async (t) => {
    const id = await model.insertProfile(db, { name: input.name, operatorId: operator.id, armId: arm.id, createdBy: actor.id }, t);
    const versionId = await model.insertVersion(
      db,
      { profileId: id, number: 1, parentVersionId: null, params: input.params, paramsSha256: paramsSha256(input.params), note: input.note, authorId: actor.id },
      t,
    );
    const profile = (await model.findProfile(db, id, t))!;
    const version = (await model.findVersion(db, versionId, t))!;
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "profile",
      entityId: id,
      action: "create",
      summary: `created profile "${profile.name}" for ${profile.operatorName} on ${profile.armName}`,
      after: { id, name: profile.name, operatorId: profile.operatorId, armId: profile.armId, createdBy: actor.id },
    });
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "version",
      entityId: versionId,
      action: "save",
      summary: `saved ${versionLabel(profile, version)} as a draft (params ${version.paramsSha256.slice(0, 12)}…)`,
      after: model.publicVersion(version),
    });
    return id;
  });
  return model.publicProfile((await model.findProfile(db, profileId))!);
}

/**
 * Save a new version on top of `parentVersionId`, which must still be the profile's latest version: the
 * profile row is locked for the check and the insert, so of two saves from the same parent exactly one
 * wins and the other gets 409 stale_parent (nothing is overwritten; versions are never edited).
 */
export async function saveVersion(ctx: WorkflowContext, actor: User, profileId: number, input: SaveVersionInput): Promise<ProfileVersion> {
  const { db } = ctx;
  const profile = await visibleProfile(db, actor, profileId);
  const arm = await armFor(db, profile.armId);
  checkParamsFitArm(input.params, arm);
  try {
    return await db.transaction(async (t) => {
      await model.lockProfile(db, profileId, t);
      const latest = (await model.findLatestVersion(db, profileId, t))!;
      if (latest.id !== input.parentVersionId) {
        const when = latest.createdAt.slice(0, 16).replace("T", " ");
        throw new AppError(
          409,
          "stale_parent",
          `Version ${latest.number} of "${profile.name}" was saved by ${latest.authorName} at ${when} UTC since you opened the version you edited; nothing was saved. Reload, compare with version ${latest.number} and save again.`,
          [{ path: "parentVersionId", message: `the latest version is now ${latest.number} (id ${latest.id}) by ${latest.authorName}` }],
        );
      }
      const versionId = await model.insertVersion(
        db,
        {
          profileId,
          number: latest.number + 1,
          parentVersionId: latest.id,
          params: input.params,
          paramsSha256: paramsSha256(input.params),
          note: input.note,
          authorId: actor.id,
        },
        t,
      );
      const version = (await model.findVersion(db, versionId, t))!;
      await recordAudit(db, t, {
        actorId: actor.id,
        entity: "version",
        entityId: versionId,
        action: "save",
        summary: `saved ${versionLabel(profile, version)} from v${latest.number} as a draft`,
        before: model.publicVersion(latest),
        after: model.publicVersion(version),
      });
      return model.publicVersion(version);
    });
  } catch (error) {
    // Belt and braces: the unique (profile, number) key catches a race the lock did not.
    if (error instanceof UniqueConstraintError) {
      throw new AppError(409, "stale_parent", `Another version of "${profile.name}" was saved at the same moment; nothing was saved. Reload and save again.`);
    }
    throw error;
  }
}

// ---------------------------------------------------------------------------------------------------
// Transitions
// ---------------------------------------------------------------------------------------------------

/**
 * Run one transition of one version: lock its profile, load it, check the state, apply `change`, audit
 * the version before/after, all in one transaction; mails enqueued by `change` go out after commit.
 */
async function transition(
  ctx: WorkflowContext,
  actor: User,
  versionId: number,
  allowedFrom: readonly VersionState[],
  verb: string,
  change: (args: { t: Transaction; version: model.VersionRecord; profile: model.ProfileRecord }) => Promise<string>,
): Promise<ProfileVersion> {
  const { db } = ctx;
  const existing = await model.findVersion(db, versionId);
  if (!existing) throw new AppError(404, "not_found", "No such version.");
  await visibleProfile(db, actor, existing.profileId);
  return db.transaction(async (t) => {
    await model.lockProfile(db, existing.profileId, t);
    const version = (await model.findVersion(db, versionId, t))!;
    const profile = (await model.findProfile(db, version.profileId, t))!;
    if (!allowedFrom.includes(version.state)) {
      throw new AppError(
        409,
        "invalid_transition",
        `${versionLabel(profile, version)} is ${version.state}; only a version that is ${allowedFrom.join(" or ")} can be ${verb}.`,
      );
    }
    const summary = await change({ t, version, profile });
    const after = (await model.findVersion(db, versionId, t))!;
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "version",
      entityId: versionId,
      action: ACTIONS[verb] ?? verb,
      summary,
      before: model.publicVersion(version),
      after: model.publicVersion(after),
    });
    return model.publicVersion(after);
  });
}

const ACTIONS: Record<string, string> = { submitted: "submit", approved: "approve", rejected: "reject", retired: "retire" };

function refuseOwnDecision(actor: User, version: model.VersionRecord, label: string, what: "approve" | "reject"): void {
  if (version.authorId === actor.id) {
    throw new AppError(403, "forbidden", `You wrote ${label}, so you cannot ${what} it: another safety officer must review it.`);
  }
}

async function violationsNow(db: Sequelize, t: Transaction, version: model.VersionRecord, profile: model.ProfileRecord) {
  // A shared lock on the ceilings in force: a ceiling change waits for this step, and vice versa.
  const ceilings = await findLatestCeilings(db, t, "share");
  const arm = await armFor(db, profile.armId);
  return checkCeilings(version.params, ceilings.ceilings, ratedJointSpeeds(arm));
}

export async function submitVersion(ctx: WorkflowContext, actor: User, versionId: number): Promise<ProfileVersion> {
  return transition(ctx, actor, versionId, ["draft"], "submitted", async ({ t, version, profile }) => {
    const label = versionLabel(profile, version);
    const violations = await violationsNow(ctx.db, t, version, profile);
    if (violations.length) throw ceilingError(label, "submitted", violations);
    await model.updateStatus(ctx.db, version.id, { state: "submitted", submittedAt: "now" }, t);
    const officers = await model.listActiveWithRole(ctx.db, "safety_officer", t);
    await ctx.mailer.enqueue(t, {
      kind: "version-submitted",
      to: officers.map((o) => o.email),
      subject: `[Jogwright] Review requested: ${profile.name} v${version.number}`,
      text: [
        `${actor.displayName} submitted ${label} for review.`,
        `Operator: ${profile.operatorName}. Arm: ${profile.armName}.`,
        `Parameters SHA-256: ${version.paramsSha256}`,
        version.note ? `Note: ${version.note}` : "",
        `Open the review queue in Jogwright to approve or reject it (version id ${version.id}).`,
      ]
        .filter(Boolean)
        .join("\n"),
    });
    return `submitted ${label} for review`;
  });
}

export async function approveVersion(ctx: WorkflowContext, actor: User, versionId: number, input: ApproveInput): Promise<ProfileVersion> {
  const { db } = ctx;
  return transition(ctx, actor, versionId, ["submitted"], "approved", async ({ t, version, profile }) => {
    const label = versionLabel(profile, version);
    refuseOwnDecision(actor, version, label, "approve");
    if (input.paramsSha256 !== version.paramsSha256) {
      throw new AppError(
        409,
        "conflict",
        `The parameters of ${label} have SHA-256 ${version.paramsSha256.slice(0, 12)}…, not the ${input.paramsSha256.slice(0, 12)}… you reviewed; reload the review and check again.`,
        [{ path: "paramsSha256", message: "does not match the version's parameters" }],
      );
    }
    const violations = await violationsNow(db, t, version, profile);
    if (violations.length) throw ceilingError(label, "approved", violations);

    const previous = await model.findApprovedVersion(db, profile.id, t);
    if (previous) {
      await model.updateStatus(db, previous.id, { state: "superseded" }, t);
      const after = (await model.findVersion(db, previous.id, t))!;
      await recordAudit(db, t, {
        actorId: actor.id,
        entity: "version",
        entityId: previous.id,
        action: "supersede",
        summary: `${versionLabel(profile, previous)} superseded by v${version.number}`,
        before: model.publicVersion(previous),
        after: model.publicVersion(after),
      });
    }
    // Inserting the approvals row is the approval: its triggers (migration 0014) lock the version row and
    // move the status to approved with this approver, time and comment, in the same statement.
    const approvalId = await model.insertApproval(db, { versionId: version.id, approverId: actor.id, comment: input.comment, paramsSha256: version.paramsSha256 }, t);
    const approval = (await model.findApproval(db, version.id, t))!;
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "approval",
      entityId: approvalId,
      action: "create",
      summary: `approved ${label} (params ${version.paramsSha256.slice(0, 12)}…): ${input.comment}`,
      after: { id: approval.id, versionId: approval.versionId, approverId: approval.approverId, approvedAt: approval.approvedAt, comment: approval.comment, paramsSha256: approval.paramsSha256 },
    });
    await mailDecision(ctx, t, version, profile, {
      kind: "version-approved",
      subject: `[Jogwright] Approved: ${profile.name} v${version.number}`,
      lines: [
        `${actor.displayName} approved ${label}; it is now locked${previous ? ` and supersedes v${previous.number}` : ""}.`,
        `${profile.operatorName} can drive it on ${profile.armName}.`,
        `Comment: ${input.comment}`,
        `Parameters SHA-256: ${version.paramsSha256}`,
      ],
    });
    return `approved ${label}: ${input.comment}`;
  });
}

export async function rejectVersion(ctx: WorkflowContext, actor: User, versionId: number, input: RejectInput): Promise<ProfileVersion> {
  return transition(ctx, actor, versionId, ["submitted"], "rejected", async ({ t, version, profile }) => {
    const label = versionLabel(profile, version);
    refuseOwnDecision(actor, version, label, "reject");
    await model.updateStatus(ctx.db, version.id, { state: "rejected", decidedBy: actor.id, decidedAt: "now", decisionComment: input.reason }, t);
    await mailDecision(ctx, t, version, profile, {
      kind: "version-rejected",
      subject: `[Jogwright] Rejected: ${profile.name} v${version.number}`,
      lines: [`${actor.displayName} rejected ${label}.`, `Reason: ${input.reason}`],
    });
    return `rejected ${label}: ${input.reason}`;
  });
}

export async function retireVersion(ctx: WorkflowContext, actor: User, versionId: number, input: RetireInput): Promise<ProfileVersion> {
  return transition(
    ctx,
    actor,
    versionId,
    ["draft", "submitted", "approved", "rejected", "superseded"],
    "retired",
    async ({ t, version, profile }) => {
      // A decision is immutable once made (migration 0014): retiring an approved, rejected or superseded
      // version keeps who decided it and why; the retirement and its reason are in the audit log.
      const decision = version.decidedAt === null ? { decidedBy: actor.id, decidedAt: "now" as const, decisionComment: input.reason } : {};
      await model.updateStatus(ctx.db, version.id, { state: "retired", ...decision }, t);
      return `retired ${versionLabel(profile, version)} (was ${version.state}): ${input.reason}`;
    },
  );
}

/** Approved or rejected: the version's author and the profile's operator hear of it. */
async function mailDecision(
  ctx: WorkflowContext,
  t: Transaction,
  version: model.VersionRecord,
  profile: model.ProfileRecord,
  mail: { kind: string; subject: string; lines: string[] },
): Promise<void> {
  const people = await model.findPeople(ctx.db, [version.authorId, profile.operatorId], t);
  await ctx.mailer.enqueue(t, { kind: mail.kind, to: people.map((p) => p.email), subject: mail.subject, text: mail.lines.join("\n") });
}

// ---------------------------------------------------------------------------------------------------
// Site ceilings → approved versions
// ---------------------------------------------------------------------------------------------------

/**
 * Re-check every approved version against `ceilings` and flag those now above them. A flag is sticky:
 * the version stays not driveable until a compliant version of the profile is approved (PRODUCT brief,
 * issue 5), even if the ceilings are later raised again — a safety officer re-approves deliberately
 * rather than a ceiling edit silently re-enabling an old version. Audited per version; returns the
 * versions flagged by this call and every flagged approved version now.
 */
export async function reflagApprovedVersions(
  db: Sequelize,
  t: Transaction,
  actor: User,
  ceilings: Ceilings,
  revision: number,
): Promise<{ newlyFlagged: model.VersionRecord[]; flaggedIds: number[] }> {
  const approved = await model.listVersionsInState(db, "approved", t);
  const arms = new Map<number, Arm>();
  const newlyFlagged: model.VersionRecord[] = [];
  const flaggedIds: number[] = [];
  for (const version of approved) {
    const profile = (await model.findProfile(db, version.profileId, t))!;
    if (!arms.has(profile.armId)) arms.set(profile.armId, await armFor(db, profile.armId));
    const violations = checkCeilings(version.params, ceilings, ratedJointSpeeds(arms.get(profile.armId)!));
    const exceeds = violations.length > 0;
    if (exceeds || version.exceedsCeilings) flaggedIds.push(version.id);
    if (!exceeds || version.exceedsCeilings) continue;
    await model.updateStatus(db, version.id, { exceedsCeilings: true }, t);
    const after = (await model.findVersion(db, version.id, t))!;
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "version",
      entityId: version.id,
      action: "flag",
      summary: `${versionLabel(profile, version)} exceeds ceilings revision ${revision} (${violations.map((v) => v.field).join(", ")}); not driveable until a compliant version is approved`,
      before: model.publicVersion(version),
      after: model.publicVersion(after),
    });
    newlyFlagged.push({ ...after, params: version.params });
  }
  return { newlyFlagged, flaggedIds };
}

// ---------------------------------------------------------------------------------------------------
// Driving: every answer here comes from the shared isDriveable (packages/shared/src/driving.ts)
// ---------------------------------------------------------------------------------------------------

/** The facts isDriveable needs, for a version of a profile. */
export const drivingFacts = (version: Pick<ProfileVersion, "state" | "exceedsCeilings">, profile: Pick<ProfileSummary, "operatorId">) => ({
  state: version.state,
  exceedsCeilings: version.exceedsCeilings,
  operatorId: profile.operatorId,
});

/**
 * What `user` may drive (GET /api/drive/versions, the console's picker): the versions the SQL form of the
 * rule selects, each with the kind isDriveable gives it. The two are kept in agreement by a test; a row
 * the function refuses is left out (and logged), never shown as driveable.
 */
export async function driveableVersionsFor(db: Sequelize, user: User): Promise<DriveableVersion[]> {
  const rows = await model.listDriveableVersions(db, user);
  const out: DriveableVersion[] = [];
  for (const row of rows) {
    const decision = isDriveable(drivingFacts(row, row), user);
    if (!decision.isDriveable) {
      console.error(`[jogwright] the driving rule's SQL and isDriveable disagree on version ${row.id} for user ${user.id}`);
      continue;
    }
    const { lockedAt: _lockedAt, ...version } = row;
    out.push({ ...version, kind: decision.kind });
  }
  return out;
}

/**
 * The version, its profile and arm, and how it is driven, if `user` may drive it; otherwise the AppError
 * of the driving rule: 404 for a missing version (and, to an operator, for another operator's version),
 * 403 with the reason otherwise.
 */
export async function loadVersionForDriving(
  db: Sequelize,
  user: User,
  versionId: number,
): Promise<{ version: ProfileVersion; profile: ProfileSummary; arm: Arm; kind: DrivingKind }> {
  const version = await model.findVersion(db, versionId);
  if (!version) throw new AppError(404, "not_found", "No such version.");
  const profile = (await model.findProfile(db, version.profileId))!;
  const decision = isDriveable(drivingFacts(version, profile), user);
  if (!decision.isDriveable) throw new AppError(decision.status, decision.code, drivingRefusalMessage(decision, versionLabel(profile, version)));
  const arm = await armFor(db, profile.armId);
  return { version: model.publicVersion(version), profile: model.publicProfile(profile), arm, kind: decision.kind };
}
