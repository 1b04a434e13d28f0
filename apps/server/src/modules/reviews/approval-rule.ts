import type { Sequelize, Transaction } from "sequelize";
import { CEILING_LABELS, type CeilingViolation, type ProfileSummary, type ProfileVersion, type User } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { violationsNow } from "../ceilings/service.ts";
import { versionLabel } from "../profiles/service.ts";
import { armForVersion } from "../versions/service.ts";

/**
 * THE APPROVAL RULE. A version is approved when, in one transaction with its profile locked:
 * 1. it is submitted (versions' `transition` checks the state: 409 invalid_transition otherwise);
 * 2. the safety officer approving it did not write it (403) — nor may they reject what they wrote;
 * 3. its parameters are the ones the officer reviewed: the SHA-256 they send is the version's (409);
 * 4. it is within the site ceilings in force, read under a shared lock (422 ceiling_exceeded);
 * and then the approvals row is inserted — which *is* the approval (reviews/service.ts).
 * The database holds the same rule without the app (migration 0014: approvals_before_insert refuses a
 * version that is not submitted, an approver who is the author, a hash that is not the version's).
 * Submitting checks rule 4 too (`checkWithinCeilings`).
 */
export async function checkApprovalRule(
  db: Sequelize,
  t: Transaction,
  actor: User,
  version: ProfileVersion,
  profile: ProfileSummary,
  reviewedSha256: string,
): Promise<void> {
  const label = versionLabel(profile, version);
  refuseOwnDecision(actor, version, label, "approve");
  if (reviewedSha256 !== version.paramsSha256) {
    throw new AppError(
      409,
      "conflict",
      `The parameters of ${label} have SHA-256 ${version.paramsSha256.slice(0, 12)}…, not the ${reviewedSha256.slice(0, 12)}… you reviewed; reload the review and check again.`,
      [{ path: "paramsSha256", message: "does not match the version's parameters" }],
    );
  }
  await checkWithinCeilings(db, t, version, profile, "approved");
}

/** Rule 2: nobody decides on a version they wrote. */
export function refuseOwnDecision(actor: User, version: ProfileVersion, label: string, what: "approve" | "reject"): void {
  if (version.authorId === actor.id) {
    throw new AppError(403, "forbidden", `You wrote ${label}, so you cannot ${what} it: another safety officer must review it.`);
  }
}

/** Rule 4: within the ceilings in force (422 ceiling_exceeded naming the field and the ceiling). */
export async function checkWithinCeilings(
  db: Sequelize,
  t: Transaction | undefined,
  version: ProfileVersion,
  profile: ProfileSummary,
  action: "submitted" | "approved",
): Promise<void> {
  const violations = await violationsNow(db, t, version.params, await armForVersion(db, version, profile.armId, t));
  if (violations.length) throw ceilingError(versionLabel(profile, version), action, violations);
}

function ceilingError(label: string, action: "submitted" | "approved", violations: CeilingViolation[]): AppError {
  const first = violations[0]!;
  const more = violations.length > 1 ? ` (and ${violations.length - 1} more)` : "";
  return new AppError(
    422,
    "ceiling_exceeded",
    `${label} cannot be ${action}: ${first.message} — field ${first.field}, ceiling ${first.ceiling}${more}.`,
    violations.map((v) => ({ path: v.field, message: `${v.message} (ceiling: ${CEILING_LABELS[v.ceiling]})` })),
  );
}
