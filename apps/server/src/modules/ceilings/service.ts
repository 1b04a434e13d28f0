import type { Sequelize, Transaction } from "sequelize";
import { checkCeilings, DEFAULT_CEILINGS, type Arm, type Ceilings, type CeilingsRecord, type CeilingViolation, type ProfileParams, type ProfileVersion, type User } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { modelsOf } from "../../db/models.ts";
import { findArm } from "../arms/service.ts";
import { recordAudit } from "../audit/service.ts";
import { profileCreatorIds, versionLabel } from "../profiles/service.ts";
import { findActivePeople } from "../users/service.ts";
import { flagAboveCeilings, listApprovedVersions, versionAuthorIds, type WorkflowContext } from "../versions/service.ts";

/**
 * Site ceilings no version may exceed. Revision 1 (migration 0005) sets the TCP linear ceiling to
 * 250 mm/s, the manual reduced-speed figure of ISO 10218-1:2011 (clause number from memory; that edition
 * was replaced in February 2025 by ISO 10218-1:2025, which keeps a reduced-speed mode;
 * ISO_10218_REDUCED_SPEED_M_PER_S in shared). Revision 1 predates the stopping-distance and deceleration
 * ceilings: it parses with their defaults (ceilingsSchema), and migration 0013 re-checked the approved
 * versions against them once. Each change writes a new revision and re-checks every approved version
 * against it (re-flagging, below).
 */

/**
 * The ceilings in force. `lock: "update"` holds the latest row until the transaction ends, so two safety
 * officers cannot both write the next revision; `lock: "share"` lets a submit or approval read the
 * ceilings while a change to them waits (and the other way round).
 */
export async function findCeilingsInForce(db: Sequelize, transaction?: Transaction, lock?: "share" | "update"): Promise<CeilingsRecord> {
  const row = await modelsOf(db)
    .SiteCeilings.scope("withName")
    .findOne({
      order: [["revision", "DESC"]],
      transaction,
      ...(lock && transaction ? { lock: lock === "update" ? transaction.LOCK.UPDATE : transaction.LOCK.SHARE } : {}),
    });
  // The migration writes revision 1; an empty table only happens if someone emptied it by hand.
  return row?.toApi() ?? { revision: 0, ceilings: DEFAULT_CEILINGS, updatedById: null, updatedByName: null, updatedAt: new Date(0).toISOString() };
}

export const getCeilings = (db: Sequelize) => findCeilingsInForce(db);

/** The arm's rated joint speeds (rad/s), which the joint-speed ceiling is a fraction of. */
export const ratedJointSpeeds = (arm: Arm) => arm.model.joints.map((j) => j.maxSpeed);

/**
 * How `params` on `arm` exceed the ceilings in force, read under a shared lock in `t`: a ceiling change
 * waits for the step that asked (a submit or an approval), and vice versa.
 */
/** The params' violations of the ceilings in force; in a transaction, read under a shared lock (a ceiling change waits). */
export async function violationsNow(db: Sequelize, t: Transaction | undefined, params: ProfileParams, arm: Arm): Promise<CeilingViolation[]> {
  const ceilings = t ? await findCeilingsInForce(db, t, "share") : await findCeilingsInForce(db);
  return checkCeilings(params, ceilings.ceilings, ratedJointSpeeds(arm));
}

export async function updateCeilings(
  ctx: WorkflowContext,
  actor: User,
  input: { revision: number; ceilings: Ceilings; note: string },
): Promise<{ record: CeilingsRecord; flaggedVersionIds: number[] }> {
  const { db } = ctx;
  const flaggedVersionIds = await db.transaction(async (t) => {
    const current = await findCeilingsInForce(db, t, "update");
    if (current.revision !== input.revision) {
      throw new AppError(
        409,
        "stale_parent",
        `The ceilings were changed to revision ${current.revision} by ${current.updatedByName ?? "the system"} at ${current.updatedAt.slice(0, 16).replace("T", " ")} UTC since you opened revision ${input.revision}; nothing was saved. Reload and edit again.`,
        [{ path: "revision", message: `the latest revision is ${current.revision}` }],
      );
    }
    const revision = current.revision + 1;
    await modelsOf(db).SiteCeilings.create({ revision, ceilings: input.ceilings, note: input.note, updatedBy: actor.id }, { transaction: t });
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "ceilings",
      entityId: revision,
      action: "update",
      summary: `set site ceilings revision ${revision}${input.note ? `: ${input.note}` : ""}`,
      before: current.ceilings,
      after: input.ceilings,
    });
    const { newlyFlagged, flaggedIds } = await reflagApprovedVersions(db, t, actor, input.ceilings, revision);
    if (newlyFlagged.length) {
      const profileIds = [...new Set(newlyFlagged.map((v) => v.profileId))];
      const candidates = [...(await profileCreatorIds(db, profileIds, t)), ...(await versionAuthorIds(db, profileIds, t))];
      const engineers = await findActivePeople(db, candidates, { role: "engineer", transaction: t });
      await ctx.mailer.enqueue(t, {
        kind: "ceilings-lowered",
        to: engineers.map((e) => e.email),
        subject: `[Jogwright] Site ceilings lowered: ${newlyFlagged.length} approved version(s) can no longer be driven`,
        text: [
          `${actor.displayName} set site ceilings revision ${revision}${input.note ? ` (${input.note})` : ""}.`,
          "These approved versions now exceed them and cannot be driven until a compliant version is approved:",
          ...newlyFlagged.map((v) => `  - profile ${v.profileId}, version ${v.number} (id ${v.id})`),
        ].join("\n"),
      });
    }
    return flaggedIds;
  });
  return { record: await findCeilingsInForce(db), flaggedVersionIds };
}

/**
 * Re-flagging after a ceiling change: re-check every approved version against `ceilings` and flag those
 * now above them. A flag is sticky: the version stays not driveable until a compliant version of the
 * profile is approved (PRODUCT brief, issue 5), even if the ceilings are later raised again — a safety
 * officer re-approves deliberately rather than a ceiling edit silently re-enabling an old version.
 * Audited per version (by the versions module); returns the versions flagged by this call and every
 * flagged approved version now.
 */
async function reflagApprovedVersions(
  db: Sequelize,
  t: Transaction,
  actor: User,
  ceilings: Ceilings,
  revision: number,
): Promise<{ newlyFlagged: ProfileVersion[]; flaggedIds: number[] }> {
  const arms = new Map<number, Arm>();
  const newlyFlagged: ProfileVersion[] = [];
  const flaggedIds: number[] = [];
  for (const { version, profile } of await listApprovedVersions(db, t)) {
    if (!arms.has(profile.armId)) arms.set(profile.armId, (await findArm(db, profile.armId))!);
    const violations = checkCeilings(version.params, ceilings, ratedJointSpeeds(arms.get(profile.armId)!));
    const exceeds = violations.length > 0;
    if (exceeds || version.exceedsCeilings) flaggedIds.push(version.id);
    if (!exceeds || version.exceedsCeilings) continue;
    const summary = `${versionLabel(profile, version)} exceeds ceilings revision ${revision} (${violations.map((v) => v.field).join(", ")}); not driveable until a compliant version is approved`;
    newlyFlagged.push(await flagAboveCeilings(db, t, actor, version, summary));
  }
  return { newlyFlagged, flaggedIds };
}
