import type { ArmModel } from "@jogwright/shared";
import { formatFixed } from "../../../lib/format.ts";
import { poseUiOf, poseUiOfTransform, type PoseUi } from "../forms/pose-units.ts";

/** A base or tool as position (mm) plus roll-pitch-yaw (deg; R = Rz(yaw)·Ry(pitch)·Rx(roll)). */
export function PoseText({ pose }: { pose: PoseUi }) {
  return (
    <span className="num">
      ({formatFixed(pose.xMm, 1)}, {formatFixed(pose.yMm, 1)}, {formatFixed(pose.zMm, 1)}) <span className="text-xs text-ink-400">mm</span> · RPY (
      {formatFixed(pose.rollDeg, 1)}, {formatFixed(pose.pitchDeg, 1)}, {formatFixed(pose.yawDeg, 1)}) <span className="text-xs text-ink-400">deg</span>
    </span>
  );
}

export const toolPoseText = (positionM: readonly number[], rpyRad: readonly number[]) => <PoseText pose={poseUiOf(positionM, rpyRad)} />;

/** The model's base (world → joint 1's frame) and tool (flange → TCP), as position + RPY. */
export function BaseAndTool({ model }: { model: ArmModel }) {
  return (
    <dl className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-[auto_1fr]" data-testid="base-and-tool">
      <dt className="text-ink-300">Base (world → first joint)</dt>
      <dd>{model.base ? <PoseText pose={poseUiOfTransform(model.base)} /> : <span className="text-ink-400">at the world origin</span>}</dd>
      <dt className="text-ink-300">Tool in the model (flange → TCP)</dt>
      <dd>{model.tool ? <PoseText pose={poseUiOfTransform(model.tool)} /> : <span className="text-ink-400">at the flange</span>}</dd>
    </dl>
  );
}
