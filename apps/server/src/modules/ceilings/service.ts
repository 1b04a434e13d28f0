import type { Sequelize, Transaction } from "sequelize";
import {
  CEILING_LABELS,
  checkCeilings,
  DEFAULT_CEILINGS,
  labelForProfilePath,
  type Arm,
  type Ceilings,
  type CeilingsRecord,
  type CeilingViolation,
  type FlaggedVersion,
  type ProfileParams,
  type ProfileVersion,
  type User,
} from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { modelsOf } from "../../db/models.ts";
import { findArmForVersion } from "../arms/service.ts";
import { recordAudit } from "../audit/service.ts";
import { profileCreatorIds, versionLabel } from "../profiles/service.ts";
import { findActivePeople, listActiveWithRole } from "../users/service.ts";
import {
  flagAboveCeilings,
  insertReconfirmation,
  listApprovedVersions,
  listCeilingEvents,
  transition,
  versionAuthorIds,
  type ApprovedVersionWithProfile,
  type WorkflowContext,
} from "../versions/service.ts";

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
): Promise<{ record: CeilingsRecord; flaggedVersionIds: number[]; flaggedVersions: FlaggedVersion[] }> {
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
      // Who hears of it (issue 13, item 8): the engineers of the profiles (creator and version authors), the
      // operators who can no longer drive them, and every active safety officer (who may re-confirm).
      const profileIds = [...new Set(newlyFlagged.map((f) => f.profile.id))];
      const candidates = [...(await profileCreatorIds(db, profileIds, t)), ...(await versionAuthorIds(db, profileIds, t))];
      const engineers = await findActivePeople(db, candidates, { role: "engineer", transaction: t });
      const operators = await findActivePeople(db, [...new Set(newlyFlagged.map((f) => f.profile.operatorId))], { role: "operator", transaction: t });
      const officers = await listActiveWithRole(db, "safety_officer", t);
      await ctx.mailer.enqueue(t, {
        kind: "ceilings-lowered",
        to: [...new Set([...engineers, ...operators, ...officers].map((p) => p.email))],
        subject: `[Jogwright] Site ceilings lowered: ${newlyFlagged.length} approved version(s) can no longer be driven`,
        text: [
          `${actor.displayName} set site ceilings revision ${revision}${input.note ? ` (${input.note})` : ""}.`,
          "These approved versions now exceed them and cannot be driven until a compliant version is approved or a safety officer re-confirms them under the ceilings then in force:",
          ...newlyFlagged.map((f) => `  - ${humanVersionName(f)}, operator ${f.profile.operatorName} (id ${f.version.id})`),
        ].join("\n"),
      });
    }
    return flaggedIds;
  });
  const flagged = new Set(flaggedVersionIds);
  const flaggedVersions = (await listFlaggedVersions(db)).filter((f) => flagged.has(f.versionId));
  return { record: await findCeilingsInForce(db), flaggedVersionIds, flaggedVersions };
}

/** A version as people know it: "Olena — pack opening v5". */
const humanVersionName = ({ version, profile }: { version: Pick<ProfileVersion, "number">; profile: { name: string } }) => `${profile.name} v${version.number}`;

/**
 * GET /api/ceilings/flagged — the approved versions flagged above the ceilings now, named as people know
 * them, each with whether it complies with the ceilings in force (then a safety officer may re-confirm
 * it) and its flag history.
 */
export async function listFlaggedVersions(db: Sequelize): Promise<FlaggedVersion[]> {
  const flagged = (await listApprovedVersions(db)).filter((a) => a.version.exceedsCeilings);
  if (flagged.length === 0) return [];
  const ceilings = (await findCeilingsInForce(db)).ceilings;
  const events = await listCeilingEvents(db, flagged.map((f) => f.version.id));
  const out: FlaggedVersion[] = [];
  for (const f of flagged) {
    // The arm revision the version was saved on (issue 12): rated speeds may differ between revisions.
    const arm = (await findArmForVersion(db, f.version.id, f.profile.armId))!;
    const violations = checkCeilings(f.version.params, ceilings, ratedJointSpeeds(arm));
    out.push({
      versionId: f.version.id,
      number: f.version.number,
      profileId: f.profile.id,
      profileName: f.profile.name,
      operatorName: f.profile.operatorName,
      label: humanVersionName(f),
      exceedsCeilings: f.version.exceedsCeilings,
      compliesNow: violations.length === 0,
      violations,
      events: events.filter((e) => e.versionId === f.version.id),
    });
  }
  return out;
}

/**
 * POST /api/versions/:id/reconfirm — a safety officer confirms a flagged approved version that complies
 * with the ceilings in force now, so its operator may drive it again (issue 13, item 3). In one
 * transaction with the profile locked (versions' `transition`): the version must be approved and flagged
 * (409 invalid_transition), not written by the officer (403), and within the ceilings in force, read
 * under a shared lock so a ceiling change waits (409 ceiling_exceeded naming each breach). The flag
 * history keeps the flag and gains the re-confirmation; audited as "reconfirm"; the version's author, the
 * profile's operator and its creator are mailed.
 */
export async function reconfirmVersion(ctx: WorkflowContext, actor: User, versionId: number, input: { comment: string }): Promise<ProfileVersion> {
  const { db } = ctx;
  return transition(ctx, actor, versionId, ["approved"], "re-confirmed", async ({ t, version, profile }) => {
    const name = humanVersionName({ version, profile });
    if (!version.exceedsCeilings) {
      throw new AppError(409, "invalid_transition", `${name} is not flagged above the site ceilings: there is nothing to re-confirm.`);
    }
    if (version.authorId === actor.id) {
      throw new AppError(403, "forbidden", `You wrote ${name}, so you cannot re-confirm it: another safety officer must.`);
    }
    const ceilings = await findCeilingsInForce(db, t, "share");
    const violations = checkCeilings(version.params, ceilings.ceilings, ratedJointSpeeds((await findArmForVersion(db, version.id, profile.armId, t))!));
    if (violations.length) {
      const first = violations[0]!;
      const more = violations.length > 1 ? ` (and ${violations.length - 1} more)` : "";
      throw new AppError(
        409,
        "ceiling_exceeded",
        `${name} cannot be re-confirmed: it is still above site ceilings revision ${ceilings.revision} — ${first.message} (${labelForProfilePath(first.field)}; ceiling: ${CEILING_LABELS[first.ceiling]})${more}. Approve a compliant version instead.`,
        violations.map((v) => ({ path: v.field, message: `${v.message} (ceiling: ${CEILING_LABELS[v.ceiling]})` })),
      );
    }
    await insertReconfirmation(db, t, actor, version, ceilings.revision, input.comment);
    const candidates = [version.authorId, profile.operatorId, ...(await profileCreatorIds(db, [profile.id], t))];
    const people = await findActivePeople(db, [...new Set(candidates)], { transaction: t });
    await ctx.mailer.enqueue(t, {
      kind: "version-reconfirmed",
      to: people.map((p) => p.email),
      subject: `[Jogwright] Re-confirmed: ${name} may be driven again`,
      text: [
        `${actor.displayName} re-confirmed ${name} under site ceilings revision ${ceilings.revision}: it complies with them, so ${profile.operatorName} can drive it again on ${profile.armName}.`,
        `Comment: ${input.comment}`,
        `Parameters SHA-256: ${version.paramsSha256}`,
      ].join("\n"),
    });
    return { action: "reconfirm", summary: `re-confirmed ${versionLabel(profile, version)} under site ceilings revision ${ceilings.revision}: ${input.comment}` };
  });
}

/**
 * Re-flagging after a ceiling change: re-check every approved version against `ceilings` and flag those
 * now above them. A flag is sticky: the version stays not driveable until a compliant version of the
 * profile is approved (PRODUCT brief, issue 5), even if the ceilings are later raised again — a safety
 * officer re-confirms it deliberately (`reconfirmVersion`, issue 13) rather than a ceiling edit silently
 * re-enabling an old version.
 * Audited per version (by the versions module); returns the versions flagged by this call and every
 * flagged approved version now.
 */
async function reflagApprovedVersions(
  db: Sequelize,
  t: Transaction,
  actor: User,
  ceilings: Ceilings,
  revision: number,
): Promise<{ newlyFlagged: ApprovedVersionWithProfile[]; flaggedIds: number[] }> {
  const newlyFlagged: ApprovedVersionWithProfile[] = [];
  const flaggedIds: number[] = [];
  for (const { version, profile } of await listApprovedVersions(db, t)) {
    const arm = (await findArmForVersion(db, version.id, profile.armId, t))!; // its arm revision (issue 12)
    const violations = checkCeilings(version.params, ceilings, ratedJointSpeeds(arm));
    const exceeds = violations.length > 0;
    if (exceeds || version.exceedsCeilings) flaggedIds.push(version.id);
    if (!exceeds || version.exceedsCeilings) continue;
    const summary = `${versionLabel(profile, version)} exceeds ceilings revision ${revision} (${violations.map((v) => labelForProfilePath(v.field)).join(", ")}); not driveable until a compliant version is approved or it is re-confirmed`;
    newlyFlagged.push({ version: await flagAboveCeilings(db, t, actor, version, revision, summary), profile });
  }
  return { newlyFlagged, flaggedIds };
}
