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

/** Runs a compiled trial on the arm with a profile version's parameters. */
export function runTrial(arm: ArmModel, params: ProfileParams, trial: CompiledTrial, options: TrialRunOptions = {}): TrialSeries {
  const sim = new JogSimulation({ arm, readyPose: Array.from(trial.startPose), params });
  const dt = sim.dt;
  const maxDuration = options.maxDurationS ?? 600;
  let plannedTicks = 0;
  for (const s of trial.segments) plannedTicks += s.kind === "waypoint" ? s.maxTicks : s.ticks;
  const capacity = Math.min(plannedTicks + Math.ceil(MAX_STOP_S / dt) + 2, Math.ceil(maxDuration / dt) + 2);

  const rec = new SeriesRecorder(sim, arm, capacity);
  const { pose, reference, wantedWorld } = rec;
  const override = params.speedOverride.maxPercent;
  const scale = override / 100;
  const linCap = params.tcpLinearCapMPerS * scale;
  const angCap = params.tcpAngularCapRadPerS * scale;
  const { deadband, expo } = params.shaping;
  const axes = new Float64Array(6);
  const wanted = new Float64Array(6);
  let seq = 0;
  const record = () => rec.record();

  /**
   * One tick: wanted (in its frame) → the stick deflections a live operator would need → the same input
   * path as live jogging; then the commanded path advances by what the gate handed to the control step.
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
    toWorld(wanted, frame, pose, wantedWorld);
    sim.applyInputValues(seq++, 0, true, "cartesian", frame, override, axes, 0);
    sim.tick();
    rec.advanceReference();
    record();
  };

  wantedWorld.fill(0);
  record(); // sample 0: the start
  // The gate arms on a released enabling control first (PRODUCT.md step 2), as a console does on connect.
  axes.fill(0);
  sim.applyInputValues(seq++, 0, false, "cartesian", "world", override, axes, 0);

  let ticksLeft = Math.ceil(maxDuration / dt);
  for (const seg of trial.segments) {
    if (seg.kind === "twist" || seg.kind === "samples") {
      for (let j = 0; j < seg.ticks && ticksLeft > 0; j++, ticksLeft--) {
        if (seg.kind === "twist") wanted.set(seg.twist);
        else for (let i = 0; i < 6; i++) wanted[i] = seg.samples[j * 6 + i]!;
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
  wantedWorld.fill(0);
  axes.fill(0);
  sim.applyInputValues(seq++, 0, false, "cartesian", "world", override, axes, 0);
  const stopTicks = Math.ceil(MAX_STOP_S / dt);
  for (let j = 0; j < stopTicks && !rec.isFull; j++) {
    sim.tick();
    record();
    if (sim.isAtRest) break;
  }
  return rec.series();
}

/**
 * Records a JogSimulation tick by tick into a TrialSeries (the trial runner's and the replay's): joint
 * state, TCP and commanded (reference) position, twists, σ_min, λ, the predicted stop, cap and guard
 * flags. The reference starts at the TCP and advances by what the gate handed to the control step
 * (Cartesian commands; a joint jog leaves it where it is). Allocates the series once.
 */
export class SeriesRecorder {
  readonly pose = new Float64Array(16);
  /** The commanded pose, integrated from the gate's commanded twist. */
  readonly reference = new Float64Array(16);
  /** The twist asked for this tick, world frame (the trial's; zero for a replay). */
  readonly wantedWorld = new Float64Array(6);
  private readonly kernel: ReturnType<typeof compileArm>;
  private readonly out: TrialSeries;
  private k = 0;

  constructor(private readonly sim: JogSimulation, arm: ArmModel, private readonly capacity: number) {
    this.kernel = compileArm(arm);
    this.out = allocate(sim.tickRateHz, sim.n, capacity);
    forwardPoseInto(this.kernel, sim.state.q, this.pose);
    this.reference.set(this.pose);
  }

  get isFull(): boolean {
    return this.k >= this.capacity;
  }

  /** After a tick: the reference follows the commanded twist of a Cartesian command. */
  advanceReference(): void {
    if (this.sim.gate.command.action === "cartesian") advance(this.reference, this.sim.report.commandedTwist, this.sim.dt);
  }

  /** The commanded path starts again at the TCP (a replay's ready-pose move, a joint jog's end). */
  resetReference(): void {
    forwardPoseInto(this.kernel, this.sim.state.q, this.reference);
  }

  /** The next samples belong to the final stop. */
  markRelease(): void {
    this.out.releaseIndex = this.k;
  }

  record(): void {
    if (this.k >= this.capacity) return;
    const { sim, out, pose, reference, wantedWorld } = this;
    const k = this.k;
    const n = sim.n;
    forwardPoseInto(this.kernel, sim.state.q, pose);
    const r = sim.report;
    out.t[k] = sim.time;
    for (let i = 0; i < n; i++) {
      out.q[k * n + i] = sim.state.q[i]!;
      out.qdot[k * n + i] = sim.state.qdot[i]!;
    }
    for (let i = 0; i < 3; i++) {
      out.tcp[k * 3 + i] = pose[i * 4 + 3]!;
      out.reference[k * 3 + i] = reference[i * 4 + 3]!;
    }
    out.orientationError[k] = rotationAngleBetween(pose, reference);
    for (let i = 0; i < 6; i++) {
      out.wanted[k * 6 + i] = wantedWorld[i]!;
      out.commanded[k * 6 + i] = r.commandedTwist[i]!;
      out.achieved[k * 6 + i] = r.achievedTwist[i]!;
    }
    out.sigmaMin[k] = r.sigmaMin;
    out.lambda[k] = r.lambda;
    sim.gate.updatePredictions(r, sim.state.qdot);
    out.stopDistance[k] = sim.gate.predictions["enabling-released"].distance;
    out.capBound[k] = r.binding === "joint-rate" ? 1 : 0;
    out.guardHeld[k] = r.guardState === "stopped" ? 1 : 0;
    out.fault[k] = r.fault !== "none" ? 1 : 0;
    this.k++;
  }

  series(): TrialSeries {
    return trim(this.out, this.k);
  }
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

function trim(s: TrialSeries, count: number): TrialSeries {
  const n = s.n;
  return {
    ...s, count,
    t: s.t.slice(0, count),
    q: s.q.slice(0, count * n),
    qdot: s.qdot.slice(0, count * n),
    tcp: s.tcp.slice(0, count * 3),
    reference: s.reference.slice(0, count * 3),
    orientationError: s.orientationError.slice(0, count),
    wanted: s.wanted.slice(0, count * 6),
    commanded: s.commanded.slice(0, count * 6),
    achieved: s.achieved.slice(0, count * 6),
    sigmaMin: s.sigmaMin.slice(0, count),
    lambda: s.lambda.slice(0, count),
    stopDistance: s.stopDistance.slice(0, count),
    capBound: s.capBound.slice(0, count),
    guardHeld: s.guardHeld.slice(0, count),
    fault: s.fault.slice(0, count),
  };
}

/** A tool-frame twist rotated into the world frame by the TCP rotation (row-major 4×4 pose). */
function toWorld(twist: Float64Array, frame: "world" | "tool", pose: Float64Array, out: Float64Array): void {
  if (frame === "world") {
    out.set(twist);
    return;
  }
  for (let h = 0; h < 2; h++) {
    const o = h * 3;
    for (let r = 0; r < 3; r++) out[o + r] = pose[r * 4]! * twist[o]! + pose[r * 4 + 1]! * twist[o + 1]! + pose[r * 4 + 2]! * twist[o + 2]!;
  }
}

const rotationScratch = new Float64Array(9);

/**
 * The reference pose advanced by a world twist over dt: position += v·dt; rotation R ← Rot(ω·dt)·R with
 * Rodrigues' formula (derived; the same first-order hold the control step's drift reference uses).
 */
function advance(T: Float64Array, twist: Float64Array, dt: number): void {
  T[3]! += twist[0]! * dt;
  T[7]! += twist[1]! * dt;
  T[11]! += twist[2]! * dt;
  const wx = twist[3]! * dt, wy = twist[4]! * dt, wz = twist[5]! * dt;
  const th = Math.sqrt(wx * wx + wy * wy + wz * wz);
  if (th === 0) return;
  const kx = wx / th, ky = wy / th, kz = wz / th;
  const c = Math.cos(th), s = Math.sin(th), v = 1 - c;
  const R = rotationScratch;
  R[0] = c + kx * kx * v; R[1] = kx * ky * v - kz * s; R[2] = kx * kz * v + ky * s;
  R[3] = ky * kx * v + kz * s; R[4] = c + ky * ky * v; R[5] = ky * kz * v - kx * s;
  R[6] = kz * kx * v - ky * s; R[7] = kz * ky * v + kx * s; R[8] = c + kz * kz * v;
  for (let col = 0; col < 3; col++) {
    const a = T[col]!, b = T[4 + col]!, d = T[8 + col]!;
    T[col] = R[0]! * a + R[1]! * b + R[2]! * d;
    T[4 + col] = R[3]! * a + R[4]! * b + R[5]! * d;
    T[8 + col] = R[6]! * a + R[7]! * b + R[8]! * d;
  }
}

/** The angle of R_aᵀ·R_b [rad] from its trace (derived), for two row-major 4×4 poses. */
function rotationAngleBetween(A: Float64Array, B: Float64Array): number {
  let trace = 0;
  for (let i = 0; i < 3; i++) for (let r = 0; r < 3; r++) trace += A[r * 4 + i]! * B[r * 4 + i]!;
  const c = Math.max(-1, Math.min(1, (trace - 1) / 2));
  return Math.acos(c);
}

