import type { ArmModel } from "@jogwright/kinematics";
import { INPUT_EVENT, type ProfileParams, type RecordedFrame } from "@jogwright/shared";
import { JogSimulation } from "../jog/simulation.ts";
import { SeriesRecorder, type TrialSeries } from "./runner.ts";

/**
 * Replay of a live session's recorded input (issue 10): the events the operator's station sent, tick by
 * tick (JogState.inputEvents, INPUT_EVENT), applied to a fresh JogSimulation — the live jog path — with any
 * version's parameters. With the version the session was driven with, the replay reproduces the recorded
 * joint positions (replay.test.ts: within 1e-9 rad; in fact bit for bit, the simulation being
 * deterministic). With another version it answers "what would this session have looked like with v3".
 * A version with another tick rate gets each event at the same time (its tick rounded).
 */

export class ReplayFormatError extends Error {}

export interface ReplayInput {
  /** The events in order, each [tick, kind, …values]. */
  events: number[][];
  /** The tick rate the session was recorded at [Hz]. */
  recordedTickRateHz: number;
  /** Ticks the recorded session ran (its last frame's time × its tick rate). */
  recordedTicks: number;
}

/** The events of a recording's frames, in order, and how long it ran. Throws ReplayFormatError without them. */
export function replayInputOf(frames: readonly RecordedFrame[], recordedTickRateHz: number): ReplayInput {
  const events: number[][] = [];
  for (const f of frames) if (f.inputEvents) events.push(...f.inputEvents);
  if (events[0]?.[1] !== INPUT_EVENT.start) {
    throw new ReplayFormatError("this recording has no operator input to replay (it was made before inputs were recorded)");
  }
  const last = frames[frames.length - 1];
  return { events, recordedTickRateHz, recordedTicks: Math.round((last?.t ?? 0) * recordedTickRateHz) };
}

const MODES = ["cartesian", "joint"] as const;
const FRAMES = ["world", "tool"] as const;

/** Runs the recorded input on `arm` with `params`; the series covers the recorded session's duration. */
export function replayInputs(arm: ArmModel, readyPose: readonly number[], params: ProfileParams, input: ReplayInput): TrialSeries {
  return recordReplay(arm, readyPose, params, input).series();
}

/** replayInputs, handing back the recorder (runner.ts, recordTrial: `series()` or `use(fn)`). */
export function recordReplay(arm: ArmModel, readyPose: readonly number[], params: ProfileParams, input: ReplayInput): SeriesRecorder {
  const start = input.events[0]!;
  const n = arm.joints.length;
  if (start.length !== 3 + n) throw new ReplayFormatError(`the recording's start has ${start.length - 3} joint positions; the arm has ${n}`);
  const sim = new JogSimulation({ arm, readyPose, params, q0: start.slice(3), estopLatched: start[2] === 1 });
  const scale = params.tickRateHz / input.recordedTickRateHz;
  const at = (tick: number) => (scale === 1 ? tick : Math.round(tick * scale));
  const totalTicks = at(input.recordedTicks);
  const rec = new SeriesRecorder(sim, arm, totalTicks + 1);
  rec.record();
  let stalledMs = 0;
  let e = 1;
  for (let tick = 0; tick < totalTicks; tick++) {
    // Every event that took effect before this tick, in the order it came.
    for (; e < input.events.length && at(input.events[e]![0]!) <= tick; e++) {
      const ev = input.events[e]!;
      switch (ev[1]) {
        case INPUT_EVENT.input: {
          const mode = MODES[ev[4]!] ?? "cartesian";
          sim.applyInputValues(ev[2]!, 0, ev[3] === 1, mode, FRAMES[ev[5]!] ?? "world", ev[6]!, ev, 7);
          break;
        }
        case INPUT_EVENT.estop:
          sim.emergencyStop();
          break;
        case INPUT_EVENT.resetEstop:
          sim.resetEstop();
          break;
        case INPUT_EVENT.requireRelease:
          sim.requireRelease("replayed");
          break;
        case INPUT_EVENT.acknowledge:
          sim.acknowledge();
          break;
        case INPUT_EVENT.readyPose:
          if (sim.isStopped && !sim.isEstopLatched) {
            sim.moveToReadyPose();
            rec.resetReference();
          }
          break;
        case INPUT_EVENT.stall:
          // The live scheduler's stall total, scaled to this run's ticks (it excuses input silence).
          stalledMs = ev[2]!;
          break;
        case INPUT_EVENT.end:
          sim.end();
          break;
        default:
          throw new ReplayFormatError(`unknown input event kind ${ev[1]}`);
      }
    }
    sim.tick(stalledMs);
    rec.advanceReference();
    rec.record();
  }
  rec.markRelease();
  return rec;
}
