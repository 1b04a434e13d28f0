import { checkCeilings, defaultProfileParams, type Arm, type ArmDetail, type ArmRevision, type Ceilings, type ProfileParams, type ProfileVersion, type Tool } from "@jogwright/shared";
import { armAtRevision } from "../../../lib/arm-revision.ts";
import { ratedSpeedsOf } from "../../../lib/arm-joints.ts";
import { drivesText, isSameChoice, type ArmChoice } from "../../../lib/version-arm.ts";

/**
 * The arm revision and tool a profile version is saved on (issue 12): what the new-profile and new-version
 * forms pick, what a save sends, and how the pages name them. A profile moves to another revision or tool
 * only by saving a new version, which goes through review again like any other.
 */

/**
 * The tools offered on a revision: those in service, and the base's own tool on its own revision even if
 * retired since (a version keeps a retired tool; a new one may keep it too, by not naming another).
 */
export function pickableTools(revision: ArmRevision | undefined, base: ArmChoice | null): Tool[] {
  if (!revision) return [];
  return revision.tools.filter((t) => !t.retiredAt || (base?.revisionId === revision.id && t.id === base.toolId));
}

/** The tool picked with a revision: the base's on the base's own revision, else the revision's first in service. */
export function defaultToolOn(revision: ArmRevision, base: ArmChoice | null): number | null {
  if (base && base.revisionId === revision.id) return base.toolId;
  return revision.tools.find((t) => !t.retiredAt)?.id ?? null;
}

/**
 * The save's `armRevisionId`/`toolId`: nothing while the choice is the base version's (the server then keeps
 * the parent's revision and tool, a retired tool included), else both.
 */
export function armChoiceFields(base: ArmChoice | null, chosen: ArmChoice | null): { armRevisionId?: number; toolId?: number | null } {
  if (!chosen || isSameChoice(base, chosen)) return {};
  return { armRevisionId: chosen.revisionId, toolId: chosen.toolId };
}

/**
 * The sentence shown when a new version moves to another revision or tool than the version it starts from:
 * `v3 will drive revision 2 with tool "Long gripper" (v1 drives revision 1 with tool "Flange tool"); it goes
 * through review again like any new version.`
 */
export function describeArmMove(
  nextNumber: number,
  base: { number: number; revision: number; toolName: string | null } | null,
  chosen: { revision: number; toolName: string | null },
): string {
  const from = base ? ` (v${base.number} drives ${drivesText(base.revision, base.toolName)})` : "";
  return `v${nextNumber} will drive ${drivesText(chosen.revision, chosen.toolName)}${from}; it goes through review again like any new version.`;
}

/**
 * Parameters fitted to the joints of the arm a version will drive: unchanged when the joint count is the
 * same (the same object), else the caps of the joints both have kept and half the rated speed (the
 * console's default, `defaultProfileParams`) for the joints the revision adds.
 */
export function fitParamsToJoints(params: ProfileParams, arm: Arm): ProfileParams {
  const joints = arm.model.joints;
  if (params.jointRateCapsRadPerS.length === joints.length) return params;
  const defaults = defaultProfileParams(joints.map((j) => j.maxSpeed ?? 1)).jointRateCapsRadPerS;
  return { ...params, jointRateCapsRadPerS: joints.map((_, i) => params.jointRateCapsRadPerS[i] ?? defaults[i]!) };
}

/**
 * Why each draft cannot be submitted (id → sentence), checked as the server checks a submission: against
 * the rated speeds of the arm revision and tool the draft drives, not the arm's latest revision. `detail`
 * undefined (not loaded yet): the arm as listed.
 */
export function draftSubmitBlockers(versions: readonly ProfileVersion[], ceilings: Ceilings, arm: Arm, detail: ArmDetail | undefined): Map<number, string> {
  const out = new Map<number, string>();
  for (const v of versions) {
    if (v.state !== "draft") continue;
    const driven = armAtRevision(arm, detail, v.armRevisionId, v.toolId);
    const violations = checkCeilings(v.params, ceilings, ratedSpeedsOf(driven));
    if (violations.length > 0) out.set(v.id, `Above the site ceilings: ${violations.map((x) => x.message).join("; ")}`);
  }
  return out;
}

