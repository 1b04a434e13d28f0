import { compileArm, forwardPoseInto, unshapeAxis, type ArmModel } from "@jogwright/kinematics";
import type { ProfileParams } from "@jogwright/shared";
import { JogSimulation } from "../jog/simulation.ts";

/**
 * The tuning bench's offline run: a scripted trial driven through exactly the live jog path — the same
 * JogSimulation (motion gate, then the kinematics engine's control step) a live operator drives over the
 * WebSocket — tick by tick, as fast as the CPU allows. A trial speaks in SI twists; the runner turns each
 * wanted twist into the stick deflection that the gate's shaping maps onto it (unshapeAxis), at the
 * profile's largest speed override, and sends it as an input every tick with the enabling control held. So
 * the gate's slew (acceleration) limits, caps, guard and controlled stops act on a trial exactly as on an
 * operator. After the last segment the enabling control is released and the run continues until the arm
 * rests (the controlled stop is part of the evidence).
 *
 * Everything is deterministic: no clock, no randomness; the same arm, version and trial give the same series
 * bit for bit (trials.test.ts hashes them).
 */

/** One piece of a compiled trial, in ticks. */
export type CompiledSegment =
  | { kind: "twist"; frame: "world" | "tool"; twist: Float64Array; ticks: number }
  /** A twist sampled before the run (an expression of time): 6 numbers a tick. */
  | { kind: "samples"; frame: "world" | "tool"; samples: Float64Array; ticks: number }
  /** The reference straight to a TCP position at a speed (orientation held); ends when it arrives or after maxTicks. */
  | { kind: "waypoint"; position: Float64Array; speed: number; maxTicks: number };

export interface CompiledTrial {
  /** Joint positions at the start [rad or m]. */
  startPose: Float64Array;
  segments: CompiledSegment[];
}

export interface TrialSeries {
  tickRateHz: number;
  /** Joints. */
  n: number;
  /** Samples (ticks recorded, the start included as sample 0). */
  count: number;
  /** Index of the first sample after the enabling control was released (the final stop). */
  releaseIndex: number;
  t: Float64Array;
  /** count·n joint positions and rates. */
  q: Float64Array;
  qdot: Float64Array;
  /** count·3 TCP position after the tick [m], and the commanded (reference) position [m]. */
  tcp: Float64Array;
  reference: Float64Array;
  /** Angle between the TCP's rotation and the reference rotation [rad], per sample. */
  orientationError: Float64Array;
  /**
   * count·6, world frame: the twist the trial asked for; the twist the gate handed to the control step after
   * shaping and slew (the commanded path is its integral); the twist the arm achieved (J·q̇).
   */
  wanted: Float64Array;
  commanded: Float64Array;
  achieved: Float64Array;
  sigmaMin: Float64Array;
  lambda: Float64Array;
  /** Predicted distance of a controlled stop (enabling released) from this tick's motion [m]. */
  stopDistance: Float64Array;
  /** 1 where the step was held back by a joint-rate cap. */
  capBound: Uint8Array;
  /** 1 where the stop-before guard held or braked the arm. */
  guardHeld: Uint8Array;
  /** 1 where the control step reported a numerical fault. */
  fault: Uint8Array;
}

export interface TrialRunOptions {
  /** Cap on simulated time [s] (a waypoint that is never reached, a stop that never ends). */
  maxDurationS?: number;
}

const MAX_STOP_S = 5;
/** The reference has reached a waypoint within this [m]; the arm's lag behind it is a metric. */
const ARRIVED_M = 1e-9;

/** Runs a compiled trial on the arm with a profile version's parameters: its series, in arrays of its own. */
export function runTrial(arm: ArmModel, params: ProfileParams, trial: CompiledTrial, options: TrialRunOptions = {}): TrialSeries {
  return recordTrial(arm, params, trial, options).series();
}

/**
 * Runs a compiled trial and hands back its recorder, the run ended: `series()` copies the series out,
 * `use(fn)` lends it to `fn` without a copy (the pool's thread computes the metrics and encodes the series
 * for storage from the scratch itself).
 */
export function recordTrial(arm: ArmModel, params: ProfileParams, trial: CompiledTrial, options: TrialRunOptions = {}): SeriesRecorder {
  const sim = new JogSimulation({ arm, readyPose: Array.from(trial.startPose), params });
  const dt = sim.dt;
  const maxDuration = options.maxDurationS ?? 600;
  let plannedTicks = 0;
  for (const s of trial.segments) plannedTicks += s.kind === "waypoint" ? s.maxTicks : s.ticks;
  const capacity = Math.min(plannedTicks + Math.ceil(MAX_STOP_S / dt) + 2, Math.ceil(maxDuration / dt) + 2);

  const rec = new SeriesRecorder(sim, arm, capacity, { predictionsFromNextTick: true });
  const { reference, wanted } = rec;
  const override = params.speedOverride.maxPercent;
  const scale = override / 100;
  const linCap = params.tcpLinearCapMPerS * scale;
  const angCap = params.tcpAngularCapRadPerS * scale;
  const { deadband, expo } = params.shaping;
  const axes = new Float64Array(6);
  let seq = 0;

  /**
   * One tick: wanted (in its frame) → the stick deflections a live operator would need → the same input
   * path as live jogging; then the commanded path advances by what the gate handed to the control step.
   * The recorder rotates a tool-frame `wanted` into the world frame with the TCP pose before the tick.
   */
  const lastWanted = new Float64Array(6).fill(Number.NaN);
  const tickWith = (frame: "world" | "tool"): void => {
    for (let i = 0; i < 6; i++) {
      const v = wanted[i]!;
      if (v === lastWanted[i]) continue; // a constant twist: the deflection is the same as last tick
      lastWanted[i] = v;
      const cap = i < 3 ? linCap : angCap;
      axes[i] = cap > 0 ? unshapeAxis(v / cap, deadband, expo) : 0;
    }
    rec.isWantedInTool = frame === "tool";
    sim.applyInputValues(seq++, 0, true, "cartesian", frame, override, axes, 0);
    sim.tick();
    rec.advanceReference();
    rec.record();
  };

  wanted.fill(0);
  rec.record(); // sample 0: the start
  // The gate arms on a released enabling control first (PRODUCT.md step 2), as a console does on connect.
  axes.fill(0);
  sim.applyInputValues(seq++, 0, false, "cartesian", "world", override, axes, 0);

  let ticksLeft = Math.ceil(maxDuration / dt);
  for (const seg of trial.segments) {
    if (seg.kind === "twist") {
      const tw = seg.twist;
      for (let j = 0; j < seg.ticks && ticksLeft > 0; j++, ticksLeft--) {
        for (let i = 0; i < 6; i++) wanted[i] = tw[i]!;
        tickWith(seg.frame);
      }
    } else if (seg.kind === "samples") {
      const samples = seg.samples;
      for (let j = 0; j < seg.ticks && ticksLeft > 0; j++, ticksLeft--) {
        for (let i = 0; i < 6; i++) wanted[i] = samples[j * 6 + i]!;
        tickWith(seg.frame);
      }
    } else {
      for (let j = 0; j < seg.maxTicks && ticksLeft > 0; j++, ticksLeft--) {
        // Toward the waypoint at the segment's speed, slowing within the last v²/(2a) (the gate's slew rate).
        const dx = seg.position[0]! - reference[3]!, dy = seg.position[1]! - reference[7]!, dz = seg.position[2]! - reference[11]!;
        const dist = Math.sqrt(dx * dx + dy * dy + dz * dz);
        if (dist < ARRIVED_M) break;
        const brake = Math.sqrt(2 * params.shaping.linearAccelMPerS2 * dist);
        const v = Math.min(seg.speed, brake, dist / dt);
        wanted.fill(0);
        wanted[0] = (dx / dist) * v;
        wanted[1] = (dy / dist) * v;
        wanted[2] = (dz / dist) * v;
        tickWith("world");
      }
    }
  }

  // Release: the controlled stop, until the arm rests.
  rec.markRelease();
  wanted.fill(0);
  rec.isWantedInTool = false;
  axes.fill(0);
  sim.applyInputValues(seq++, 0, false, "cartesian", "world", override, axes, 0);
  const stopTicks = Math.ceil(MAX_STOP_S / dt);
  for (let j = 0; j < stopTicks && !rec.isFull; j++) {
    sim.tick();
    rec.record();
    if (sim.isAtRest) break;
  }
  return rec;
}

/**
 * Records a JogSimulation tick by tick into a TrialSeries (the trial runner's and the replay's): joint
 * state, TCP and commanded (reference) position, twists, σ_min, λ, the predicted stop, cap and guard
 * flags. The reference starts at the TCP and advances by what the gate handed to the control step
 * (Cartesian commands; a joint jog leaves it where it is). Nothing is allocated per tick.
 *
 * What the next tick computes anyway is taken from it, one sample late, rather than computed twice:
 * - the TCP pose after a tick is where the next tick's control step evaluates J (its report's pose): a
 *   sample's TCP position and orientation error come from that pose when the step started at exactly the
 *   sample's joint positions (report.poseJoints), else — the last sample, a tick that did not step — from
 *   the forward kinematics (the step's pose is forwardPoseInto's arithmetic: the same numbers either way);
 * - with `predictionsFromNextTick` (the trial runner, which does nothing between a sample and the next
 *   tick but send an input), the predicted stop: the gate predicts it at the start of every tick from the
 *   previous step's motion (MotionGate.updatePredictions), which is the sample's motion. (The gate's
 *   snapshot of the watchdog prediction at each input is then a tick older; it only measures a watchdog
 *   stop, which an input every tick never trips.) A replay applies e-stops and ready-pose moves between
 *   ticks, so it asks the gate after each tick.
 *
 * The channels are recorded into a scratch series kept for the next run of the thread (up to
 * SCRATCH_SAMPLES samples: a sweep runs many trials in a row), copied out at their length by series() or lent
 * as views by use().
 */
export class SeriesRecorder {
  /** The commanded pose, integrated from the gate's commanded twist. */
  readonly reference = new Float64Array(16);
  /** The twist asked for this tick, in its frame (the trial's; zero for a replay). */
  readonly wanted = new Float64Array(6);
  /** `wanted` is in the tool frame: recorded rotated into the world frame by the TCP rotation before the tick. */
  isWantedInTool = false;
  private readonly kernel: ReturnType<typeof compileArm>;
  private readonly out: TrialSeries;
  private k = 0;
  private isDone = false;
  private readonly isPredictingNext: boolean;
  /** The sample whose TCP pose (and predicted stop) is still owed (−1: none). */
  private pending = -1;
  /** The latest settled sample's TCP pose (the report's, or poseScratch), null before the first. */
  private lastPose: Float64Array | null = null;
  /** The forward kinematics of the pending sample when the next step did not start there, and its joints. */
  private readonly poseScratch = new Float64Array(16);
  private readonly pendingQ: Float64Array;
  private readonly rotation = new Float64Array(10);
  private readonly lastAngular = new Float64Array(3);

  constructor(
    private readonly sim: JogSimulation, arm: ArmModel, private readonly capacity: number,
    options: { predictionsFromNextTick?: boolean } = {},
  ) {
    this.kernel = compileArm(arm);
    this.out = takeScratch(sim.tickRateHz, sim.n, capacity);
    this.isPredictingNext = options.predictionsFromNextTick === true;
    this.pendingQ = new Float64Array(sim.n);
    forwardPoseInto(this.kernel, sim.state.q, this.reference);
    this.lastAngular.fill(Number.NaN);
  }

  get isFull(): boolean {
    return this.k >= this.capacity;
  }

  /**
   * After a tick: the reference follows the commanded twist of a Cartesian command (the previous sample,
   * whose reference it still is, is settled first).
   */
  advanceReference(): void {
    if (this.pending >= 0) this.settlePending(true);
    if (this.sim.gate.command.action === "cartesian") advance(this.reference, this.sim.report.commandedTwist, this.sim.dt, this.rotation, this.lastAngular);
  }

  /**
   * The commanded path starts again at the TCP (a replay's ready-pose move, a joint jog's end); the previous
   * sample is settled first, against the reference it had. Not with predictionsFromNextTick: the sample's
   * motion is gone by now.
   */
  resetReference(): void {
    if (this.pending >= 0) {
      if (this.isPredictingNext) throw new Error("resetReference is for a recorder that predicts after each tick (a replay)");
      this.settlePending(false);
    }
    forwardPoseInto(this.kernel, this.sim.state.q, this.reference);
  }

  /** The next samples belong to the final stop. */
  markRelease(): void {
    this.out.releaseIndex = this.k;
  }

  /** After a tick (or at the start): one sample. */
  record(): void {
    if (this.isDone) throw new Error("the series was taken already (its scratch went back to the thread)");
    const { sim, out, reference } = this;
    const r = sim.report;
    // The previous sample's TCP pose (and predicted stop) from this tick, unless advanceReference did it.
    if (this.pending >= 0) this.settlePending(true);
    if (this.k >= this.capacity) return;
    const k = this.k;
    const n = sim.n;
    const q = sim.state.q, qdot = sim.state.qdot;
    out.t[k] = sim.time;
    const oq = out.q, oqd = out.qdot;
    for (let i = 0; i < n; i++) {
      oq[k * n + i] = q[i]!;
      oqd[k * n + i] = qdot[i]!;
    }
    const ref = out.reference;
    ref[k * 3] = reference[3]!;
    ref[k * 3 + 1] = reference[7]!;
    ref[k * 3 + 2] = reference[11]!;
    // The wanted twist in the world frame: a tool-frame one rotated by the TCP rotation before the tick.
    const w = this.wanted, ow = out.wanted, o6 = k * 6;
    const P = this.lastPose;
    if (this.isWantedInTool && P !== null) {
      for (let h = 0; h < 2; h++) {
        const o = h * 3;
        for (let row = 0; row < 3; row++) ow[o6 + o + row] = P[row * 4]! * w[o]! + P[row * 4 + 1]! * w[o + 1]! + P[row * 4 + 2]! * w[o + 2]!;
      }
    } else {
      for (let i = 0; i < 6; i++) ow[o6 + i] = w[i]!;
    }
    const ct = r.commandedTwist, at = r.achievedTwist, oc = out.commanded, oa = out.achieved;
    for (let i = 0; i < 6; i++) {
      oc[o6 + i] = ct[i]!;
      oa[o6 + i] = at[i]!;
    }
    out.sigmaMin[k] = r.sigmaMin;
    out.lambda[k] = r.lambda;
    if (!this.isPredictingNext) {
      sim.gate.updatePredictions(r, qdot);
      out.stopDistance[k] = sim.gate.predictions["enabling-released"].distance;
    }
    out.capBound[k] = r.binding === "joint-rate" ? 1 : 0;
    out.guardHeld[k] = r.guardState === "stopped" ? 1 : 0;
    out.fault[k] = r.fault !== "none" ? 1 : 0;
    this.pending = k;
    this.k++;
  }

  /** The series so far, at its length, in arrays of its own (the last sample settled from the current state). */
  series(): TrialSeries {
    return this.use(copySeries);
  }

  /**
   * The series so far, at its length, lent to `fn` as views of the thread's scratch (no copy), which goes
   * back to the thread when `fn` returns: `fn` must not keep the series or any of its arrays. Once only.
   */
  use<T>(fn: (series: TrialSeries) => T): T {
    if (this.isDone) throw new Error("the series was taken already (its scratch went back to the thread)");
    if (this.pending >= 0) this.settlePending(false);
    this.isDone = true;
    try {
      return fn(viewAt(this.out, this.k));
    } finally {
      giveScratch(this.out);
    }
  }

  /**
   * Writes the pending sample's TCP position and orientation error (and, predicting from the next tick,
   * its predicted stop), before the reference moves on; keeps the TCP pose used in lastPose. The pose is the
   * report's when evaluated at exactly the sample's joint positions, else the forward kinematics.
   * `isAfterTick`: a tick has run since the sample, so the gate's predictions are the sample's; otherwise
   * (the last sample) they are made here from the current state.
   */
  private settlePending(isAfterTick: boolean): void {
    const k = this.pending;
    this.pending = -1;
    const sim = this.sim, out = this.out;
    const n = sim.n, oq = out.q, o = k * n;
    const poseJoints = sim.report.poseJoints;
    // The report's pose is always the forward kinematics of its poseJoints: usable when those are exactly
    // the sample's joint positions (±0 told apart: the kinematics may differ in the sign of a zero).
    let isSame = true;
    for (let i = 0; i < n && isSame; i++) isSame = isSameNumber(poseJoints[i]!, oq[o + i]!);
    let P = sim.report.pose;
    if (!isSame) {
      const q = this.pendingQ;
      for (let i = 0; i < n; i++) q[i] = oq[o + i]!;
      P = forwardPoseInto(this.kernel, q, this.poseScratch);
    }
    out.tcp[k * 3] = P[3]!;
    out.tcp[k * 3 + 1] = P[7]!;
    out.tcp[k * 3 + 2] = P[11]!;
    // The reference has not moved since the sample (settled before advanceReference moves it).
    out.orientationError[k] = rotationAngleBetween(P, this.reference);
    if (this.isPredictingNext) {
      if (!isAfterTick) sim.gate.updatePredictions(sim.report, sim.state.qdot);
      out.stopDistance[k] = sim.gate.predictions["enabling-released"].distance;
    }
    this.lastPose = P;
  }
}

/** Samples up to which a thread keeps its scratch series for the next run (~5.4 MB for six joints). */
const SCRATCH_SAMPLES = 16384;
let scratch: TrialSeries | null = null;
let scratchCapacity = 0;

/** A series of at least `capacity` samples: the thread's scratch when it fits, else a new one. */
function takeScratch(tickRateHz: number, n: number, capacity: number): TrialSeries {
  const s = scratch;
  if (s !== null && s.n === n && scratchCapacity >= capacity) {
    scratch = null;
    s.tickRateHz = tickRateHz;
    s.count = scratchCapacity;
    s.releaseIndex = capacity;
    return s;
  }
  return allocate(tickRateHz, n, capacity);
}

/** Keeps a series' arrays for the next run of this thread (the larger one, up to SCRATCH_SAMPLES). */
function giveScratch(s: TrialSeries): void {
  const capacity = s.t.length;
  if (capacity > SCRATCH_SAMPLES || (scratch !== null && scratchCapacity >= capacity)) return;
  scratch = s;
  scratchCapacity = capacity;
}

function allocate(tickRateHz: number, n: number, count: number): TrialSeries {
  return {
    tickRateHz, n, count, releaseIndex: count,
    t: new Float64Array(count),
    q: new Float64Array(count * n),
    qdot: new Float64Array(count * n),
    tcp: new Float64Array(count * 3),
    reference: new Float64Array(count * 3),
    orientationError: new Float64Array(count),
    wanted: new Float64Array(count * 6),
    commanded: new Float64Array(count * 6),
    achieved: new Float64Array(count * 6),
    sigmaMin: new Float64Array(count),
    lambda: new Float64Array(count),
    stopDistance: new Float64Array(count),
    capBound: new Uint8Array(count),
    guardHeld: new Uint8Array(count),
    fault: new Uint8Array(count),
  };
}

/** The first `count` samples of a series, as views of its arrays. */
function viewAt(s: TrialSeries, count: number): TrialSeries {
  const n = s.n;
  return {
    ...s, count,
    t: s.t.subarray(0, count),
    q: s.q.subarray(0, count * n),
    qdot: s.qdot.subarray(0, count * n),
    tcp: s.tcp.subarray(0, count * 3),
    reference: s.reference.subarray(0, count * 3),
    orientationError: s.orientationError.subarray(0, count),
    wanted: s.wanted.subarray(0, count * 6),
    commanded: s.commanded.subarray(0, count * 6),
    achieved: s.achieved.subarray(0, count * 6),
    sigmaMin: s.sigmaMin.subarray(0, count),
    lambda: s.lambda.subarray(0, count),
    stopDistance: s.stopDistance.subarray(0, count),
    capBound: s.capBound.subarray(0, count),
    guardHeld: s.guardHeld.subarray(0, count),
    fault: s.fault.subarray(0, count),
  };
}

/**
 * A series in arrays of its own (copies of the views: the scratch goes back to the thread). Each array owns
 * its buffer, which the trial pool's thread transfers to the caller instead of copying (run-worker.mjs).
 */
export function copySeries(s: TrialSeries): TrialSeries {
  return {
    ...s,
    t: s.t.slice(),
    q: s.q.slice(),
    qdot: s.qdot.slice(),
    tcp: s.tcp.slice(),
    reference: s.reference.slice(),
    orientationError: s.orientationError.slice(),
    wanted: s.wanted.slice(),
    commanded: s.commanded.slice(),
    achieved: s.achieved.slice(),
    sigmaMin: s.sigmaMin.slice(),
    lambda: s.lambda.slice(),
    stopDistance: s.stopDistance.slice(),
    capBound: s.capBound.slice(),
    guardHeld: s.guardHeld.slice(),
    fault: s.fault.slice(),
  };
}

/**
 * The reference pose advanced by a world twist over dt: position += v·dt; rotation R ← Rot(ω·dt)·R with
 * Rodrigues' formula (derived; the same first-order hold the control step's drift reference uses). Rot(ω·dt)
 * is kept in R[0 … 8] (R[9] = 1: there is a rotation) for the angular part in `last` and reused while it
 * stays the same (a constant twist).
 */
function advance(T: Float64Array, twist: Float64Array, dt: number, R: Float64Array, last: Float64Array): void {
  T[3]! += twist[0]! * dt;
  T[7]! += twist[1]! * dt;
  T[11]! += twist[2]! * dt;
  const w3 = twist[3]!, w4 = twist[4]!, w5 = twist[5]!;
  if (!isSameNumber(w3, last[0]!) || !isSameNumber(w4, last[1]!) || !isSameNumber(w5, last[2]!)) {
    last[0] = w3;
    last[1] = w4;
    last[2] = w5;
    const wx = w3 * dt, wy = w4 * dt, wz = w5 * dt;
    const th = Math.sqrt(wx * wx + wy * wy + wz * wz);
    R[9] = th === 0 ? 0 : 1;
    if (th !== 0) {
      const kx = wx / th, ky = wy / th, kz = wz / th;
      const c = Math.cos(th), s = Math.sin(th), v = 1 - c;
      R[0] = c + kx * kx * v; R[1] = kx * ky * v - kz * s; R[2] = kx * kz * v + ky * s;
      R[3] = ky * kx * v + kz * s; R[4] = c + ky * ky * v; R[5] = ky * kz * v - kx * s;
      R[6] = kz * kx * v - ky * s; R[7] = kz * ky * v + kx * s; R[8] = c + kz * kz * v;
    }
  }
  if (R[9] === 0) return;
  for (let col = 0; col < 3; col++) {
    const a = T[col]!, b = T[4 + col]!, d = T[8 + col]!;
    T[col] = R[0]! * a + R[1]! * b + R[2]! * d;
    T[4 + col] = R[3]! * a + R[4]! * b + R[5]! * d;
    T[8 + col] = R[6]! * a + R[7]! * b + R[8]! * d;
  }
}

/** The very same number: equal, and a zero of the same sign (NaN is never the same). */
function isSameNumber(a: number, b: number): boolean {
  return a === b && (a !== 0 || 1 / a === 1 / b);
}

/** The angle of R_aᵀ·R_b [rad] from its trace (derived), for two row-major 4×4 poses. */
function rotationAngleBetween(A: Float64Array, B: Float64Array): number {
  let trace = 0;
  for (let i = 0; i < 3; i++) for (let r = 0; r < 3; r++) trace += A[r * 4 + i]! * B[r * 4 + i]!;
  const c = Math.max(-1, Math.min(1, (trace - 1) / 2));
  return Math.acos(c);
}

