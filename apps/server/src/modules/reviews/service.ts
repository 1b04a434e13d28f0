import type { Sequelize, Transaction } from "sequelize";
import { checkCeilings, type CeilingEvent, type CeilingViolation, type ProfileSummary, type ProfileVersion, type SubmitVersionInput, type TrialRun, type User } from "@jogwright/shared";
import type { z } from "zod";
import type { approveVersionSchema, MailKind, rejectVersionSchema } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { listVersionArmRefs } from "../arms/service.ts";
import { modelsOf } from "../../db/models.ts";
import { recordAudit } from "../audit/service.ts";
import { findCeilingsInForce, ratedJointSpeeds } from "../ceilings/service.ts";
import { findProfile, versionLabel, visibleProfile } from "../profiles/service.ts";
import { attachEvidence, evidenceOf, prepareEvidence } from "../trials/service.ts";
import { findActivePeople, listActiveWithRole } from "../users/service.ts";
import {
  armForVersion,
  findApprovedVersion,
  findVersion,
  listCeilingEvents,
  listVersionsInState,
  setStatus,
  supersede,
  transition,
  withdrawOlderSubmissions,
  type WorkflowContext,
} from "../versions/service.ts";
import { checkApprovalRule, checkWithinCeilings, refuseOwnDecision } from "./approval-rule.ts";

/**
 * Reviews: submitting a version for review, the safety officers' queue, the review screen's read of a
 * version, and the decisions — approving (the approval rule: approval-rule.ts) and rejecting — with the
 * mails they send. Owns the approvals rows.
 */

type ApproveInput = z.infer<typeof approveVersionSchema>;
type RejectInput = z.infer<typeof rejectVersionSchema>;

export interface ApprovalRecord {
  id: number;
  versionId: number;
  approverId: string;
  approverName: string;
  approvedAt: string;
  comment: string;
  paramsSha256: string;
}

export async function findApproval(db: Sequelize, versionId: number, transaction?: Transaction): Promise<ApprovalRecord | null> {
  const a = await modelsOf(db).Approval.scope("withName").findOne({ where: { versionId }, transaction });
  return a
    ? {
        id: a.id,
        versionId: a.versionId,
        approverId: a.approverId,
        approverName: a.approver!.displayName,
        approvedAt: a.approvedAt.toISOString(),
        comment: a.comment,
        paramsSha256: a.paramsSha256,
      }
    : null;
}

/**
 * Insert the approvals row — the approval itself: its triggers (migration 0014) check it, lock the
 * version row and set its status to approved with this approver, time and comment, in this one
 * statement. Returns the row's id.
 */
export async function insertApproval(
  db: Sequelize,
  transaction: Transaction,
  a: { versionId: number; approverId: string; comment: string; paramsSha256: string },
): Promise<number> {
  const approval = await modelsOf(db).Approval.create(a, { transaction });
  return approval.id;
}

// ---------------------------------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------------------------------

/** GET /api/versions/:id — a version for the review screen: its ceiling check, the approved version to diff against, its approval. */
export async function getVersionDetail(
  db: Sequelize,
  user: User,
  id: number,
): Promise<{
  version: ProfileVersion; profile: ProfileSummary; violations: CeilingViolation[]; approvedVersion: ProfileVersion | null;
  approval: Omit<ApprovalRecord, "id" | "versionId" | "approverId"> | null; evidence: TrialRun[]; ceilingEvents: CeilingEvent[];
}> {
  const version = await findVersion(db, id);
  if (!version) throw new AppError(404, "not_found", "No such version.");
  const profile = await visibleProfile(db, user, version.profileId);
  const [arm, ceilings, approvedVersion, approval, evidence, ceilingEvents] = await Promise.all([
    armForVersion(db, version, profile.armId),
    findCeilingsInForce(db),
    findApprovedVersion(db, profile.id),
    findApproval(db, id),
    evidenceOf(db, id),
    listCeilingEvents(db, [id]),
  ]);
  // The arm revision and tool each drives: a reviewer sees when a version moves the profile to another.
  const armRefs = await listVersionArmRefs(db, approvedVersion ? [id, approvedVersion.id] : [id]);
  return {
    version: { ...version, ...armRefs.get(id) },
    profile,
    violations: checkCeilings(version.params, ceilings.ceilings, ratedJointSpeeds(arm)),
    approvedVersion: approvedVersion ? { ...approvedVersion, ...armRefs.get(approvedVersion.id) } : null,
    approval: approval ? { approverName: approval.approverName, approvedAt: approval.approvedAt, comment: approval.comment, paramsSha256: approval.paramsSha256 } : null,
    evidence,
    ceilingEvents,
  };
}

/** GET /api/reviews — the safety officers' queue: submitted versions, oldest submission first. */
export async function listReviewQueue(db: Sequelize) {
  const versions = await listVersionsInState(db, "submitted");
  const profiles = new Map<number, ProfileSummary>();
  for (const v of versions) {
    if (!profiles.has(v.profileId)) profiles.set(v.profileId, (await findProfile(db, v.profileId))!);
  }
  return versions.map((v) => {
    const p = profiles.get(v.profileId)!;
    return { ...v, profileName: p.name, operatorName: p.operatorName, armName: p.armName };
  });
}

// ---------------------------------------------------------------------------------------------------
// Submitting and deciding
// ---------------------------------------------------------------------------------------------------

/**
 * A draft goes to review if it is within the ceilings in force, with its evidence (the runs the engineer
 * attached, and the built-in trials the site's rule asks for: trials/service.ts prepareEvidence); every
 * active safety officer is mailed.
 */
export async function submitVersion(ctx: WorkflowContext, actor: User, versionId: number, input: SubmitVersionInput = { evidenceRunIds: [] }): Promise<ProfileVersion> {
  // The evidence runs first, outside the transaction (offline runs take a moment); only for a draft, so a
  // version in another state gets the transition's own refusal without running anything.
  // The ceilings first (cheap, and the refusal that matters most); the transaction checks them again.
  const draft = await findVersion(ctx.db, versionId);
  let runIds: number[] = [];
  if (draft?.state === "draft") {
    const profile = await visibleProfile(ctx.db, actor, draft.profileId);
    await checkWithinCeilings(ctx.db, undefined, draft, profile, "submitted");
    runIds = await prepareEvidence(ctx.db, actor, draft, input.evidenceRunIds, (await findCeilingsInForce(ctx.db)).ceilings);
  }
  return transition(ctx, actor, versionId, ["draft"], "submitted", async ({ t, version, profile }) => {
    const label = versionLabel(profile, version);
    await checkWithinCeilings(ctx.db, t, version, profile, "submitted");
    await attachEvidence(ctx.db, t, version.id, runIds, actor.id);
    await setStatus(ctx.db, t, version.id, { state: "submitted", submittedAt: new Date() });
    // One submission of a profile waits in the queue: the newer one replaces older ones (issue 13, item 4).
    const withdrawn = await withdrawOlderSubmissions(ctx.db, t, actor, profile, version);
    const officers = await listActiveWithRole(ctx.db, "safety_officer", t);
    await ctx.mailer.enqueue(t, {
      kind: "version-submitted",
      to: officers.map((o) => o.email),
      subject: `[Jogwright] Review requested: ${profile.name} v${version.number}`,
      text: [
        `${actor.displayName} submitted ${label} for review.`,
        `Operator: ${profile.operatorName}. Arm: ${profile.armName}.`,
        `Parameters SHA-256: ${version.paramsSha256}`,
        runIds.length ? `Evidence: ${runIds.length} trial runs attached.` : "",
        version.note ? `Note: ${version.note}` : "",
        withdrawn.length ? `It replaces ${withdrawn.map((w) => `v${w.number}`).join(", ")} in the queue (withdrawn).` : "",
        `Open the review queue in Jogwright to approve or reject it (version id ${version.id}).`,
      ]
        .filter(Boolean)
        .join("\n"),
    });
    return `submitted ${label} for review${withdrawn.length ? ` (withdrawing ${withdrawn.map((w) => `v${w.number}`).join(", ")})` : ""}`;
  });
}

/**
 * Approve by the approval rule (approval-rule.ts); the previous approved version is superseded. Approving
 * a version older than the profile's approved one rolls its operator back: refused (409
 * rollback_unconfirmed) unless the request says `rollback: true`, and then audited as a rollback.
 */
export async function approveVersion(ctx: WorkflowContext, actor: User, versionId: number, input: ApproveInput): Promise<ProfileVersion> {
  const { db } = ctx;
  return transition(ctx, actor, versionId, ["submitted"], "approved", async ({ t, version, profile }) => {
    const label = versionLabel(profile, version);
    await checkApprovalRule(db, t, actor, version, profile, input.paramsSha256);
    const previous = await findApprovedVersion(db, profile.id, t);
    const isRollback = previous !== null && previous.number > version.number;
    if (isRollback && input.rollback !== true) {
      throw new AppError(
        409,
        "rollback_unconfirmed",
        `${label} is older than the approved v${previous.number}: approving it rolls ${profile.operatorName} back to v${version.number}. Confirm the roll back to v${version.number} to approve it.`,
        [{ path: "rollback", message: `confirm the roll back from v${previous.number} to v${version.number}` }],
      );
    }
    if (previous) await supersede(db, t, actor, previous, profile, version);
    const approvalId = await insertApproval(db, t, { versionId: version.id, approverId: actor.id, comment: input.comment, paramsSha256: version.paramsSha256 });
    const approval = (await findApproval(db, version.id, t))!;
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
        isRollback
          ? `${actor.displayName} rolled "${profile.name}" back to v${version.number}: ${label} is approved and locked and replaces the newer v${previous.number}.`
          : `${actor.displayName} approved ${label}; it is now locked${previous ? ` and supersedes v${previous.number}` : ""}.`,
        `${profile.operatorName} can drive it on ${profile.armName}.`,
        `Comment: ${input.comment}`,
        `Parameters SHA-256: ${version.paramsSha256}`,
      ],
    });
    if (isRollback) return { action: "rollback", summary: `rolled ${label} back from v${previous.number} (approved ${label}): ${input.comment}` };
    return `approved ${label}: ${input.comment}`;
  });
}

export async function rejectVersion(ctx: WorkflowContext, actor: User, versionId: number, input: RejectInput): Promise<ProfileVersion> {
  return transition(ctx, actor, versionId, ["submitted"], "rejected", async ({ t, version, profile }) => {
    const label = versionLabel(profile, version);
    refuseOwnDecision(actor, version, label, "reject");
    await setStatus(ctx.db, t, version.id, { state: "rejected", decidedBy: actor.id, decidedAt: new Date(), decisionComment: input.reason });
    await mailDecision(ctx, t, version, profile, {
      kind: "version-rejected",
      subject: `[Jogwright] Rejected: ${profile.name} v${version.number}`,
      lines: [`${actor.displayName} rejected ${label}.`, `Reason: ${input.reason}`],
    });
    return `rejected ${label}: ${input.reason}`;
  });
}

/** Approved or rejected: the version's author and the profile's operator hear of it. */
async function mailDecision(
  ctx: WorkflowContext,
  t: Transaction,
  version: ProfileVersion,
  profile: ProfileSummary,
  mail: { kind: MailKind; subject: string; lines: string[] },
): Promise<void> {
  const people = await findActivePeople(ctx.db, [version.authorId, profile.operatorId], { transaction: t });
  await ctx.mailer.enqueue(t, { kind: mail.kind, to: people.map((p) => p.email), subject: mail.subject, text: mail.lines.join("\n") });
}
