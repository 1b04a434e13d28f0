import type { RecordedFrame } from "@jogwright/shared";
import { FrameSignal } from "../../lib/frame-signal.ts";
import { FrameTrace, type FrameSource } from "../../lib/frame-trace.ts";

/** Seconds of history behind the cursor that the charts show (as live). */
const WINDOW_S = 10;

/**
 * A recording as a FrameSource: the cursor picks the frame the 3D view shows, and the trace holds the
 * frames of the window behind the cursor, so the charts show what they showed live at that moment.
 */
export class ReplaySource implements FrameSource {
  readonly trace = new FrameTrace();
  private readonly frames: readonly RecordedFrame[];
  private cursor = -1;
  private serial = 0;
  private readonly frameSignal = new FrameSignal();
  readonly onFrame = this.frameSignal.onFrame;

  private readonly jointTypes: readonly ("revolute" | "prismatic")[];

  constructor(frames: readonly RecordedFrame[], jointTypes: readonly ("revolute" | "prismatic")[]) {
    this.frames = frames;
    this.jointTypes = jointTypes;
    this.trace.reset(jointTypes);
  }

  get length(): number {
    return this.frames.length;
  }

  get index(): number {
    return this.cursor;
  }

  frameAt(index: number): RecordedFrame | null {
    return this.frames[index] ?? null;
  }

  latestFrame(): RecordedFrame | null {
    return this.frames[this.cursor] ?? null;
  }

  frameSerial(): number {
    return this.serial;
  }

  /** Moves the cursor; one step forward appends to the trace, anything else rebuilds the window. */
  seek(index: number): void {
    const target = Math.max(0, Math.min(this.frames.length - 1, Math.round(index)));
    if (target === this.cursor || this.frames.length === 0) return;
    if (target > this.cursor && target - this.cursor <= 8 && this.cursor >= 0) {
      for (let i = this.cursor + 1; i <= target; i++) this.trace.push(this.frames[i]!);
    } else {
      this.trace.reset(this.jointTypes);
      const tEnd = this.frames[target]!.t;
      let first = target;
      while (first > 0 && this.frames[first - 1]!.t >= tEnd - WINDOW_S) first--;
      for (let i = first; i <= target; i++) this.trace.push(this.frames[i]!);
    }
    this.cursor = target;
    this.serial++;
    this.frameSignal.notify();
  }

  /** The last frame index at or before simulation time t (binary search; frames are in time order). */
  indexAtTime(t: number): number {
    let lo = 0;
    let hi = this.frames.length - 1;
    if (hi < 0) return -1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.frames[mid]!.t <= t) lo = mid;
      else hi = mid - 1;
    }
    return lo;
  }
}
