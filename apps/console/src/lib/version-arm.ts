import type { ProfileVersion } from "@jogwright/shared";

/**
 * The arm revision and tool a profile version drives (issue 12), as the pages name them: the profile's
 * version list and forms (features/profiles) and the review page (features/reviews). A profile moves to
 * another revision or tool only by saving a new version, which goes through review again.
 */
export interface ArmChoice {
  revisionId: number;
  /** null: no tool record (the revision's own tool transform). */
  toolId: number | null;
}

/** What a version drives, as the API names it (`versionArmRefShape`). */
export type VersionArmRef = Pick<ProfileVersion, "armRevisionId" | "armRevision" | "toolId" | "toolName">;

/** The choice a version was saved on, or null where the API did not name it. */
export function armChoiceOf(version: VersionArmRef): ArmChoice | null {
  return version.armRevisionId == null ? null : { revisionId: version.armRevisionId, toolId: version.toolId ?? null };
}

export const isSameChoice = (a: ArmChoice | null, b: ArmChoice | null) => a?.revisionId === b?.revisionId && a?.toolId === b?.toolId;

/** `revision 2 with tool "Long gripper"` (or `with the model's own tool transform` when it names no tool). */
export function drivesText(revision: number, toolName: string | null): string {
  return `revision ${revision} ${toolName === null ? "with the model's own tool transform" : `with tool "${toolName}"`}`;
}

/** A version that drives another revision or tool than its parent: it moved the profile there. */
export function movesArm(version: VersionArmRef, parent: VersionArmRef): boolean {
  const [from, to] = [armChoiceOf(parent), armChoiceOf(version)];
  return from !== null && to !== null && !isSameChoice(from, to);
}

/** How the version list names what a version drives: `Revision 2 · Long gripper`, or null when not known. */
export function versionArmText(version: VersionArmRef): string | null {
  if (version.armRevision == null) return null;
  return `Revision ${version.armRevision} · ${version.toolName ?? "the model's own tool"}`;
}
