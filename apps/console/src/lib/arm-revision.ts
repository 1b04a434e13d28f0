import { toolTransform, type Arm, type ArmDetail } from "@jogwright/shared";

/**
 * The arm as a version drives it (issue 12): the model of the revision it was saved on with its tool's
 * TCP offset as the model's tool, as the server's `findArmAtRevision` builds it. The arms list holds each
 * arm's latest revision only, so a version on an older revision needs its arm's detail. Falls back to
 * `arm` (the latest) while the detail is not loaded or names no such revision.
 */
export function armAtRevision(arm: Arm, detail: ArmDetail | undefined, revisionId: number | null | undefined, toolId: number | null | undefined): Arm {
  const revision = detail?.revisions.find((r) => r.id === revisionId);
  if (!revision) return arm;
  const tool = toolId == null ? null : revision.tools.find((t) => t.id === toolId);
  const model = tool ? { ...revision.model, tool: toolTransform(tool.positionM, tool.rpyRad) } : revision.model;
  return { ...arm, model, readyPose: revision.readyPose };
}
