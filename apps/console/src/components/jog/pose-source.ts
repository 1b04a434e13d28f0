import { FrameSignal } from "../../lib/frame-signal.ts";
import type { ArmPoseSource } from "./arm-view.tsx";

const STILL = [0, 0, 0, 0, 0, 0];

/**
 * A still pose for the 3D view (the arm pages' preview): `setPose` moves the arm, with no twist arrows.
 * Each call bumps the serial, so the on-demand canvas draws once per change and not otherwise.
 */
export class StillPoseSource implements ArmPoseSource {
  private frame: { q: number[]; twistCommanded: number[]; twistAchieved: number[] };
  private serial = 0;
  private readonly frameSignal = new FrameSignal();
  readonly onFrame = this.frameSignal.onFrame;

  constructor(q: readonly number[]) {
    this.frame = { q: [...q], twistCommanded: STILL, twistAchieved: STILL };
  }

  setPose(q: readonly number[]): void {
    this.frame = { ...this.frame, q: [...q] };
    this.serial++;
    this.frameSignal.notify();
  }

  latestFrame() {
    return this.frame;
  }

  frameSerial(): number {
    return this.serial;
  }
}
