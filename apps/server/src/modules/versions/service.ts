import { col, fn, Op, UniqueConstraintError, type Sequelize, type Transaction } from "sequelize";
import type { Arm, AuditAction, CeilingEvent, CreateProfileInput, ProfileParams, ProfileSummary, ProfileVersion, SaveVersionInput, User, VersionState } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { sha256OfCanonical } from "../../hashing.ts";
import type { Mailer } from "../../mail/mailer.ts";
import { modelsOf } from "../../db/models.ts";
import { bindVersionToArm, defaultArmChoice, findArm, findArmAtRevision, findArmForVersion, findVersionArmChoice, listVersionArmRefs, resolveArmChoice, type ArmOfVersion, type VersionArmChoice } from "../arms/service.ts";
import { recordAudit } from "../audit/service.ts";
import { findProfile, insertProfile, lockProfile, versionLabel, visibleProfile } from "../profiles/service.ts";
import { isActiveOperator } from "../users/service.ts";
import type { VersionStatusModel } from "./model.ts";

/**
 * Saving versions: every save is a new immutable version on top of the profile's latest (optimistic
 * concurrency on the parent); a new profile is saved with its version 1. Also the lifecycle steps every
 * workflow shares — `transition` (lock, check the state, change, audit, one transaction) and retiring —
 * and the reads of versions. Submitting, approving and rejecting are the reviews module's; re-flagging
 * after a ceiling change is the ceilings module's (through `listApprovedVersions` and `flagAboveCeilings`).
 */
export interface WorkflowContext {
  db: Sequelize;
  mailer: Mailer;
}

export const paramsSha256 = (params: ProfileParams) => sha256OfCanonical(params);

/** The arm of a profile, or 400 on the field that named it. */
export async function armFor(db: Sequelize, armId: number): Promise<Arm> {
  const arm = await findArm(db, armId);
  if (!arm) throw new AppError(400, "validation_failed", "No such arm.", [{ path: "armId", message: "pick an existing arm" }]);
  return arm;
}

/** The arm a version was saved on (its arm revision and tool, issue 12): what it drives, runs and is checked on. */
export async function armForVersion(db: Sequelize, version: { id: number }, armId: number, transaction?: Transaction): Promise<ArmOfVersion> {
  const arm = await findArmForVersion(db, version.id, armId, transaction);
  if (!arm) throw new AppError(404, "not_found", "No such arm.");
  return arm;
}

/**
 * The parameters must fit the arm: one joint-rate cap per joint. `at` is where the request carries them
 * ("params" in a save, "source.params" in the bench's unsaved edits), for the path.
 */
export function checkParamsFitArm(params: ProfileParams, arm: Arm, at = "params"): void {
  const joints = arm.model.joints.length;
  if (params.jointRateCapsRadPerS.length !== joints) {
    throw new AppError(
      400,
      "validation_failed",
      `The arm "${arm.name}" has ${joints} joints, so the profile needs ${joints} joint rate caps (got ${params.jointRateCapsRadPerS.length}).`,
      [{ path: `${at}.jointRateCapsRadPerS`, message: `one cap per joint: ${joints} values` }],
    );
  }
}

// ---------------------------------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------------------------------

export async function findVersion(db: Sequelize, id: number, transaction?: Transaction): Promise<ProfileVersion | null> {
  const version = await modelsOf(db).Version.scope("withStatus").findByPk(id, { transaction });
  return version?.toApi() ?? null;
}

/** The profile's approved version (at most one: a newer approval supersedes the older). */
export async function findApprovedVersion(db: Sequelize, profileId: number, transaction?: Transaction): Promise<ProfileVersion | null> {
  const version = await modelsOf(db)
    .Version.scope("withStatus")
    .findOne({ where: { profileId, "$status.state$": "approved" }, order: [["number", "DESC"]], transaction });
  return version?.toApi() ?? null;
}

/** Versions in `state`, oldest submission (else creation) first. */
export async function listVersionsInState(db: Sequelize, state: VersionState, transaction?: Transaction): Promise<ProfileVersion[]> {
  const versions = await modelsOf(db)
    .Version.scope("withStatus")
    .findAll({
      where: { "$status.state$": state },
      order: [[fn("COALESCE", col("status.submitted_at"), col("ProfileVersion.created_at")), "ASC"], ["id", "ASC"]],
      transaction,
    });
  return versions.map((v) => v.toApi());
}

/** The authors of every version of these profiles (the ceilings module mails them). */
export async function versionAuthorIds(db: Sequelize, profileIds: readonly number[], transaction?: Transaction): Promise<string[]> {
  if (profileIds.length === 0) return [];
  const rows = await modelsOf(db).Version.findAll({ where: { profileId: { [Op.in]: [...profileIds] } }, attributes: ["authorId"], transaction });
  return [...new Set(rows.map((r) => r.authorId))];
}

// ---------------------------------------------------------------------------------------------------
// Writing rows (in the caller's transaction)
// ---------------------------------------------------------------------------------------------------

/** A new immutable version and its lifecycle row (a draft). Returns its id. */
export async function insertVersion(
  db: Sequelize,
  transaction: Transaction,
  v: { profileId: number; number: number; parentVersionId: number | null; params: ProfileParams; note: string; authorId: string },
  /** The arm revision and tool it is saved on; absent: the parent's, or for a first version the arm's latest. */
  armChoice?: VersionArmChoice,
): Promise<number> {
  const { Version, VersionStatus } = modelsOf(db);
  const version = await Version.create({ ...v, paramsSha256: paramsSha256(v.params) }, { transaction });
  await VersionStatus.create({ versionId: version.id }, { transaction });
  const choice =
    armChoice ??
    (v.parentVersionId === null ? null : await findVersionArmChoice(db, v.parentVersionId, transaction)) ??
    (await defaultArmChoice(db, (await findProfile(db, v.profileId, transaction))!.armId, transaction));
  if (choice) await bindVersionToArm(db, transaction, version.id, choice);
  return version.id;
}

/**
 * Change a version's lifecycle row. The triggers (migrations 0008, 0014) refuse what the lifecycle does
 * not allow, e.g. setting 'approved' here: a version is approved only by inserting its approvals row.
 */
export async function setStatus(
  db: Sequelize,
  transaction: Transaction,
  versionId: number,
  fields: Partial<Pick<VersionStatusModel, "state" | "submittedAt" | "decidedBy" | "decidedAt" | "decisionComment" | "exceedsCeilings">>,
): Promise<void> {
  await modelsOf(db).VersionStatus.update(fields, { where: { versionId }, transaction });
}

// ---------------------------------------------------------------------------------------------------
// Saving
// ---------------------------------------------------------------------------------------------------

/** POST /api/profiles: a profile and its version 1 (a draft), audited, in one transaction. */
export async function createProfile(ctx: WorkflowContext, actor: User, input: CreateProfileInput): Promise<ProfileSummary> {
  const { db } = ctx;
  const latest = await armFor(db, input.armId);
  // The revision and tool asked for (checked against the arm; a tool alone is on the latest revision), else
  // the arm's latest revision with its first tool in service.
  const revisionId = input.armRevisionId ?? (input.toolId !== undefined ? (await defaultArmChoice(db, latest.id))?.armRevisionId : undefined);
  const armChoice = revisionId !== undefined ? await resolveArmChoice(db, latest.id, { armRevisionId: revisionId, toolId: input.toolId }) : undefined;
  const arm = armChoice ? ((await findArmAtRevision(db, armChoice)) ?? latest) : latest;
  checkParamsFitArm(input.params, arm);
  if (!(await isActiveOperator(db, input.operatorId))) {
    throw new AppError(400, "validation_failed", "Pick an active operator for the profile.", [{ path: "operatorId", message: "not an active operator" }]);
  }
  const profileId = await db.transaction(async (t) => {
    const id = await insertProfile(db, t, { name: input.name, operatorId: input.operatorId, armId: arm.id, createdBy: actor.id });
    const versionId = await insertVersion(db, t, { profileId: id, number: 1, parentVersionId: null, params: input.params, note: input.note, authorId: actor.id }, armChoice);
    const profile = (await findProfile(db, id, t))!;
    const version = (await findVersion(db, versionId, t))!;
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "profile",
      entityId: id,
      action: "create",
      summary: `created profile "${profile.name}" for ${profile.operatorName} on ${profile.armName}`,
      after: { id, name: profile.name, operatorId: profile.operatorId, armId: profile.armId, createdBy: actor.id },
    });
    await auditVersion(db, t, actor, "save", `saved ${versionLabel(profile, version)} as a draft (params ${version.paramsSha256.slice(0, 12)}…)`, undefined, version);
    return id;
  });
  return (await findProfile(db, profileId))!;
}

/**
 * Save a new version on top of `parentVersionId`, which must still be the profile's latest version: the
 * profile row is locked for the check and the insert, so of two saves from the same parent exactly one
 * wins and the other gets 409 stale_parent (nothing is overwritten; versions are never edited).
 */
export async function saveVersion(ctx: WorkflowContext, actor: User, profileId: number, input: SaveVersionInput): Promise<ProfileVersion> {
  const { db } = ctx;
  const profile = await visibleProfile(db, actor, profileId);
  // The revision and tool: asked for (moving to another revision happens only here, by a new version), or the parent's.
  const parentChoice = await findVersionArmChoice(db, input.parentVersionId);
  let armChoice: VersionArmChoice | undefined;
  if (input.armRevisionId !== undefined) {
    armChoice = await resolveArmChoice(db, profile.armId, { armRevisionId: input.armRevisionId, toolId: input.toolId });
  } else if (input.toolId !== undefined && parentChoice) {
    armChoice = await resolveArmChoice(db, profile.armId, { armRevisionId: parentChoice.armRevisionId, toolId: input.toolId });
  }
  const choice = armChoice ?? parentChoice;
  const arm = choice ? ((await findArmAtRevision(db, choice)) ?? (await armFor(db, profile.armId))) : await armFor(db, profile.armId);
  checkParamsFitArm(input.params, arm);
  try {
    return await db.transaction(async (t) => {
      await lockProfile(db, profileId, t);
      const latestRow = await modelsOf(db)
        .Version.scope("withStatus")
        .findOne({ where: { profileId }, order: [["number", "DESC"]], lock: t.LOCK.SHARE, transaction: t });
      const latest = latestRow!.toApi();
      // The editor saw `latestVersionId` as the latest (or, without it, started from the latest itself).
      if (latest.id !== (input.latestVersionId ?? input.parentVersionId)) {
        const when = latest.createdAt.slice(0, 16).replace("T", " ");
        throw new AppError(
          409,
          "stale_parent",
          `Version ${latest.number} of "${profile.name}" was saved by ${latest.authorName} at ${when} UTC since you opened the version you edited; nothing was saved. Reload, compare with version ${latest.number} and save again.`,
          [{ path: "parentVersionId", message: `the latest version is now ${latest.number} (id ${latest.id}) by ${latest.authorName}` }],
        );
      }
      // The base the engineer chose to start from: any version of this profile (issue 13, item 5).
      const parent = latest.id === input.parentVersionId ? latest : await findVersion(db, input.parentVersionId, t);
      if (!parent || parent.profileId !== profileId) {
        throw new AppError(400, "validation_failed", `Start a new version of "${profile.name}" from one of its own versions.`, [
          { path: "parentVersionId", message: "not a version of this profile" },
        ]);
      }
      const versionId = await insertVersion(db, t, {
        profileId,
        number: latest.number + 1,
        parentVersionId: parent.id,
        params: input.params,
        note: input.note,
        authorId: actor.id,
      }, armChoice);
      const version = (await findVersion(db, versionId, t))!;
      await auditVersion(db, t, actor, "save", `saved ${versionLabel(profile, version)} from v${parent.number} as a draft`, parent, version);
      // The answer names what it drives, as GET /api/profiles/:id does (the audit row keeps the version alone).
      return { ...version, ...(await listVersionArmRefs(db, [versionId], t)).get(versionId) };
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

const ACTIONS: Record<string, AuditAction> = { submitted: "submit", approved: "approve", rejected: "reject", retired: "retire", withdrawn: "withdraw" };

/**
 * Run one transition of one version: lock its profile, load it, check the state, apply `change`, audit
 * the version before/after, all in one transaction; mails enqueued by `change` go out after commit.
 * `verb` is the past participle ("submitted"); the audit action is its verb ("submit").
 */
export async function transition(
  ctx: WorkflowContext,
  actor: User,
  versionId: number,
  allowedFrom: readonly VersionState[],
  verb: string,
  change: (args: { t: Transaction; version: ProfileVersion; profile: ProfileSummary }) => Promise<string | { summary: string; action: AuditAction }>,
): Promise<ProfileVersion> {
  const { db } = ctx;
  const existing = await findVersion(db, versionId);
  if (!existing) throw new AppError(404, "not_found", "No such version.");
  await visibleProfile(db, actor, existing.profileId);
  return db.transaction(async (t) => {
    await lockProfile(db, existing.profileId, t);
    const version = (await findVersion(db, versionId, t))!;
    const profile = (await findProfile(db, version.profileId, t))!;
    if (!allowedFrom.includes(version.state)) {
      throw new AppError(
        409,
        "invalid_transition",
        `${versionLabel(profile, version)} is ${version.state}; only a version that is ${allowedFrom.join(" or ")} can be ${verb}.`,
      );
    }
    const result = await change({ t, version, profile });
    const { summary, action } = typeof result === "string" ? { summary: result, action: ACTIONS[verb] ?? (verb as AuditAction) } : result;
    const after = (await findVersion(db, versionId, t))!;
    await auditVersion(db, t, actor, action, summary, version, after);
    return after;
  });
}

/**
 * The audit row of a change to a version, in the change's transaction: the version as it was (`before`;
 * none for a new one) and as it is now (`after`, whose id the row names).
 */
async function auditVersion(
  db: Sequelize, t: Transaction, actor: User, action: AuditAction, summary: string, before: ProfileVersion | undefined, after: ProfileVersion,
): Promise<void> {
  await recordAudit(db, t, { actorId: actor.id, entity: "version", entityId: after.id, action, summary, before, after });
}

export async function retireVersion(ctx: WorkflowContext, actor: User, versionId: number, input: { reason: string }): Promise<ProfileVersion> {
  return transition(ctx, actor, versionId, ["draft", "submitted", "approved", "rejected", "superseded"], "retired", async ({ t, version, profile }) => {
    // A decision is immutable once made (migration 0014): retiring an approved, rejected or superseded
    // version keeps who decided it and why; the retirement and its reason are in the audit log.
    const decision = version.decidedAt === null ? { decidedBy: actor.id, decidedAt: new Date(), decisionComment: input.reason } : {};
    await setStatus(ctx.db, t, version.id, { state: "retired", ...decision });
    return `retired ${versionLabel(profile, version)} (was ${version.state}): ${input.reason}`;
  });
}

/**
 * The author takes a submission back (issue 13, item 4): submitted → withdrawn, out of the queue. The
 * withdrawal is the status row's decision (who, when, the note), so the history shows it. Nobody else may.
 */
export async function withdrawVersion(ctx: WorkflowContext, actor: User, versionId: number, input: { note: string }): Promise<ProfileVersion> {
  return transition(ctx, actor, versionId, ["submitted"], "withdrawn", async ({ t, version, profile }) => {
    const label = versionLabel(profile, version);
    if (version.authorId !== actor.id) {
      throw new AppError(403, "forbidden", `Only ${version.authorName}, who wrote ${label}, can withdraw it from review.`);
    }
    const note = input.note || "withdrawn by its author";
    await setStatus(ctx.db, t, version.id, { state: "withdrawn", decidedBy: actor.id, decidedAt: new Date(), decisionComment: note });
    return `withdrew ${label} from review: ${note}`;
  });
}

/**
 * Submitting a newer version of a profile withdraws its older submissions (in the submission's
 * transaction, profile locked): one version of a profile waits in the queue, the newest. Each withdrawal
 * is audited and carries a note naming the newer version. Returns the versions withdrawn.
 */
export async function withdrawOlderSubmissions(db: Sequelize, t: Transaction, actor: User, profile: ProfileSummary, newer: ProfileVersion): Promise<ProfileVersion[]> {
  const older = (await listVersionsInState(db, "submitted", t)).filter((v) => v.profileId === profile.id && v.number < newer.number);
  const withdrawn: ProfileVersion[] = [];
  for (const version of older) {
    const note = `withdrawn: v${newer.number} was submitted in its place by ${actor.displayName}`;
    await setStatus(db, t, version.id, { state: "withdrawn", decidedBy: actor.id, decidedAt: new Date(), decisionComment: note });
    const after = (await findVersion(db, version.id, t))!;
    await auditVersion(db, t, actor, "withdraw", `${versionLabel(profile, version)} ${note}`, version, after);
    withdrawn.push(after);
  }
  return withdrawn;
}

/** The previous approved version of a profile becomes superseded (the reviews module, approving a newer one). */
export async function supersede(db: Sequelize, t: Transaction, actor: User, previous: ProfileVersion, profile: ProfileSummary, by: ProfileVersion): Promise<void> {
  await setStatus(db, t, previous.id, { state: "superseded" });
  const after = (await findVersion(db, previous.id, t))!;
  await auditVersion(db, t, actor, "supersede", `${versionLabel(profile, previous)} superseded by v${by.number}`, previous, after);
}

// ---------------------------------------------------------------------------------------------------
// For the ceilings module's re-flagging
// ---------------------------------------------------------------------------------------------------

export type ApprovedVersionWithProfile = { version: ProfileVersion; profile: Pick<ProfileSummary, "id" | "name" | "armId" | "operatorId" | "operatorName"> };

/** Every approved version with its profile's name, arm and operator. */
export async function listApprovedVersions(db: Sequelize, transaction?: Transaction): Promise<ApprovedVersionWithProfile[]> {
  const versions = await listVersionsInState(db, "approved", transaction);
  const out: ApprovedVersionWithProfile[] = [];
  const profiles = new Map<number, ProfileSummary>();
  for (const version of versions) {
    if (!profiles.has(version.profileId)) profiles.set(version.profileId, (await findProfile(db, version.profileId, transaction))!);
    const p = profiles.get(version.profileId)!;
    out.push({ version, profile: { id: p.id, name: p.name, armId: p.armId, operatorId: p.operatorId, operatorName: p.operatorName } });
  }
  return out;
}

/**
 * Flag a version as above the site ceilings (sticky: the lifecycle trigger refuses clearing it by an
 * UPDATE; only a re-confirmation clears it), with a row in its flag history and an audit entry, both
 * saying `summary`. Returns the version after the change.
 */
export async function flagAboveCeilings(
  db: Sequelize,
  t: Transaction,
  actor: User,
  version: ProfileVersion,
  ceilingsRevision: number,
  summary: string,
): Promise<ProfileVersion> {
  await setStatus(db, t, version.id, { exceedsCeilings: true });
  await modelsOf(db).CeilingEvent.create({ versionId: version.id, kind: "flag", ceilingsRevision, actorId: actor.id, comment: summary }, { transaction: t });
  const after = (await findVersion(db, version.id, t))!;
  await auditVersion(db, t, actor, "flag", summary, version, after);
  return after;
}

/**
 * Re-confirm a flagged approved version under the ceilings in force (the ceilings module checks that it
 * complies, in the `transition`'s transaction, first): inserting the `reconfirm` row clears the flag in
 * the same statement (its trigger, migration 0016), so the flag history keeps both events.
 */
export async function insertReconfirmation(db: Sequelize, t: Transaction, actor: User, version: ProfileVersion, ceilingsRevision: number, comment: string): Promise<void> {
  await modelsOf(db).CeilingEvent.create({ versionId: version.id, kind: "reconfirm", ceilingsRevision, actorId: actor.id, comment }, { transaction: t });
}

/** The flag history of these versions, oldest first. */
export async function listCeilingEvents(db: Sequelize, versionIds: readonly number[], transaction?: Transaction): Promise<CeilingEvent[]> {
  if (versionIds.length === 0) return [];
  const rows = await modelsOf(db)
    .CeilingEvent.scope("withActorName")
    .findAll({ where: { versionId: { [Op.in]: [...versionIds] } }, order: [["id", "ASC"]], transaction });
  return rows.map((r) => r.toApi());
}
