import { DEG_PER_RAD } from "@jogwright/shared";
import type { RecordedFrame } from "@jogwright/shared";

/**
 * Rolling history of arm frames for the live charts, in typed ring buffers (no allocation per frame).
 * Units are converted here, once, to what the charts show: joint rates in deg/s (mm/s for a sliding
 * joint), σ_min and λ in mm, TCP speeds in mm/s. Time is the simulation time t [s] of each frame.
 *
 * A FrameSource is anything that can feed the 3D view and the charts: the live socket client or a
 * recording being replayed. The 3D view is told of each new frame (`onFrame`) and asks for a render only
 * when the frame moved something; the charts read the trace on their own timer. Nothing here causes a
 * React render.
 */
export interface FrameSource {
  readonly trace: FrameTrace;
  /** The newest frame, or null before the first one. */
  latestFrame(): RecordedFrame | null;
  /** Increases by one for every frame received (or every scrub step in a replay). */
  frameSerial(): number;
  /** Calls `listener` synchronously after every such increase; returns the unsubscribe. */
  onFrame(listener: () => void): () => void;
}


/** Chart data in uPlot's column layout: x first, then one array per series. */
export type ChartColumns = [Float64Array, ...Float64Array[]];

export interface ChartData {
  jointRates: ChartColumns;
  sigma: ChartColumns;
  speed: ChartColumns;
}

export class FrameTrace {
  readonly capacity: number;
  private jointCount = 0;
  private isPrismatic: boolean[] = [];
  private readonly t: Float64Array;
  private rates: Float64Array[] = [];
  private readonly sigmaMm: Float64Array;
  private readonly lambdaMm: Float64Array;
  private readonly speedCommandedMmPerS: Float64Array;
  private readonly speedAchievedMmPerS: Float64Array;
  /** Index of the next write. */
  private head = 0;
  private size = 0;
  /** Increases on every push or clear, so readers can skip unchanged data. */
  serial = 0;

  /** 1200 frames = 20 s at 60 Hz: enough for a 10 s window with room for a faster frame rate. */
  constructor(capacity = 1200) {
    this.capacity = capacity;
    this.t = new Float64Array(capacity);
    this.sigmaMm = new Float64Array(capacity);
    this.lambdaMm = new Float64Array(capacity);
    this.speedCommandedMmPerS = new Float64Array(capacity);
    this.speedAchievedMmPerS = new Float64Array(capacity);
  }

  get length(): number {
    return this.size;
  }

  get joints(): number {
    return this.jointCount;
  }

  /** Empties the trace; `jointTypes` sets how many joint-rate series there are and their units. */
  reset(jointTypes: readonly ("revolute" | "prismatic")[]): void {
    if (jointTypes.length !== this.jointCount) {
      this.rates = jointTypes.map(() => new Float64Array(this.capacity));
    }
    this.jointCount = jointTypes.length;
    this.isPrismatic = jointTypes.map((type) => type === "prismatic");
    this.head = 0;
    this.size = 0;
    this.serial++;
  }

  push(frame: RecordedFrame): void {
    const i = this.head;
    if (this.size > 0 && frame.t < this.t[(i - 1 + this.capacity) % this.capacity]!) {
      // Time went backwards (a new session or a replay jump): start over rather than draw a zigzag.
      this.size = 0;
    }
    this.t[i] = frame.t;
    for (let j = 0; j < this.jointCount; j++) {
      const v = frame.qdot[j] ?? 0;
      this.rates[j]![i] = this.isPrismatic[j] ? v * 1000 : v * DEG_PER_RAD;
    }
    this.sigmaMm[i] = frame.sigmaMin * 1000;
    this.lambdaMm[i] = frame.lambda * 1000;
    const c = frame.twistCommanded;
    const a = frame.twistAchieved;
    this.speedCommandedMmPerS[i] = Math.hypot(c[0]!, c[1]!, c[2]!) * 1000;
    this.speedAchievedMmPerS[i] = Math.hypot(a[0]!, a[1]!, a[2]!) * 1000;
    this.head = (i + 1) % this.capacity;
    if (this.size < this.capacity) this.size++;
    this.serial++;
  }

  /** The frames of the last `windowS` seconds, oldest first, as fresh arrays for uPlot's setData. */
  chartData(windowS: number): ChartData {
    const start = (this.head - this.size + this.capacity) % this.capacity;
    const newest = this.size > 0 ? this.t[(this.head - 1 + this.capacity) % this.capacity]! : 0;
    // Skip frames older than the window.
    let skip = 0;
    while (skip < this.size && this.t[(start + skip) % this.capacity]! < newest - windowS) skip++;
    const count = this.size - skip;
    const from = (start + skip) % this.capacity;
    const take = (src: Float64Array): Float64Array => {
      const out = new Float64Array(count);
      const firstPart = Math.min(count, this.capacity - from);
      out.set(src.subarray(from, from + firstPart), 0);
      if (firstPart < count) out.set(src.subarray(0, count - firstPart), firstPart);
      return out;
    };
    const t = take(this.t);
    return {
      jointRates: [t, ...this.rates.slice(0, this.jointCount).map(take)],
      sigma: [t, take(this.sigmaMm), take(this.lambdaMm)],
      speed: [t, take(this.speedCommandedMmPerS), take(this.speedAchievedMmPerS)],
    };
  }
}
