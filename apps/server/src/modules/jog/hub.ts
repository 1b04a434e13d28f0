import { randomUUID } from "node:crypto";
import type { Arm, JogSessionInfo, LiveSession, ProfileSummary, ProfileVersion, User } from "@jogwright/shared";
import type { AppContext } from "../../context.ts";
import { insertRecording } from "../recordings/model.ts";
import { RecordingWriter } from "../recordings/writer.ts";
import { TickScheduler, type ScheduledClient } from "./scheduler.ts";
import { JogSimulation } from "./simulation.ts";

/**
 * The live jog sessions of one server: one simulation per session on the one shared scheduler, a driver
 * connection and any read-only watchers, and the buffered recording writer. Sockets (socket.ts) and the
 * REST route /api/jog/live (routes.ts) reach it through jogHubFor(ctx).
 */

/** What a session sends to: the driver or a watcher connection. */
export interface FrameSink {
  readonly user: User;
  /** Sends a prepared JSON text; false when the client is too far behind and the frame was skipped. */
  sendText(text: string): boolean;
  onSessionEnded(session: LiveJogSession, reason: string): void;
}

export type EndReason = "stopped" | "disconnected" | "switched" | "profile-not-driveable" | "server-shutdown" | "signed-out";

export interface DrivenVersion {
  version: ProfileVersion;
  profile: ProfileSummary;
  arm: Arm;
}

export class LiveJogSession implements ScheduledClient {
  readonly id = randomUUID();
  readonly startedAt = new Date();
  readonly watchers = new Set<FrameSink>();
  readonly tickPeriodMs: number;
  readonly framePeriodMs: number;
  recordingId: number | null = null;
  isEnded = false;
  framesSkipped = 0;

  constructor(
    private readonly hub: JogHub,
    readonly driver: FrameSink,
    readonly driven: DrivenVersion,
    readonly sim: JogSimulation,
    frameRateHz: number,
  ) {
    this.tickPeriodMs = 1000 / sim.tickRateHz;
    this.framePeriodMs = 1000 / frameRateHz;
  }

  info(isWatching: boolean): JogSessionInfo {
    const { version, profile, arm } = this.driven;
    return {
      sessionId: this.id,
      versionId: version.id,
      versionNumber: version.number,
      versionState: version.state,
      isUnapproved: version.state !== "approved",
      profileId: profile.id,
      profileName: profile.name,
      armId: arm.id,
      armName: arm.name,
      driverId: this.driver.user.id,
      driverName: this.driver.user.displayName,
      tickRateHz: this.sim.tickRateHz,
      frameRateHz: 1000 / this.framePeriodMs,
      watchdogMs: this.sim.watchdogMs,
      isWatching,
    };
  }

  live(): LiveSession {
    const { version, profile, arm } = this.driven;
    return {
      sessionId: this.id,
      driverId: this.driver.user.id,
      driverName: this.driver.user.displayName,
      profileName: profile.name,
      versionId: version.id,
      versionNumber: version.number,
      armName: arm.name,
      startedAt: this.startedAt.toISOString(),
      isUnapproved: version.state !== "approved",
    };
  }

  runTick(nowMs: number, stalledMs: number): void {
    this.sim.tick(nowMs, stalledMs);
  }

  noteOverrun(skipped: number): void {
    this.sim.noteOverrun(skipped);
  }

  runFrame(): void {
    const body = this.sim.frameBody();
    const text =
      `{"type":"state","sessionId":"${this.id}",${body},` +
      `"lastInputSeq":${this.sim.lastInputSeq},"lastInputClientTimeMs":${Number.isFinite(this.sim.lastInputClientTimeMs) ? this.sim.lastInputClientTimeMs : 0}}`;
    if (!this.driver.sendText(text)) this.framesSkipped++;
    for (const w of this.watchers) w.sendText(text);
    if (this.recordingId !== null) this.hub.writer.push(this.recordingId, `{${body}}`);
  }

  /** Ends the session: stops ticking, sends a last frame and `ended`, records the end. Idempotent. */
  end(reason: EndReason): void {
    if (this.isEnded) return;
    this.isEnded = true;
    this.hub.scheduler.remove(this);
    this.hub.sessions.delete(this.id);
    this.sim.end();
    this.runFrame();
    if (this.recordingId !== null) {
      this.hub.writer.end(this.recordingId, new Date(), reason, this.sim.summary());
    }
    const ended = JSON.stringify({ type: "ended", sessionId: this.id, reason, recordingId: this.recordingId });
    this.driver.sendText(ended);
    this.driver.onSessionEnded(this, reason);
    for (const w of this.watchers) {
      w.sendText(ended);
      w.onSessionEnded(this, reason);
    }
    this.watchers.clear();
  }
}

export class JogHub {
  readonly scheduler = new TickScheduler();
  readonly writer: RecordingWriter;
  readonly sessions = new Map<string, LiveJogSession>();

  constructor(readonly ctx: AppContext, readonly frameRateHz: number) {
    this.writer = new RecordingWriter(ctx.db);
  }

  listLive(): LiveSession[] {
    return [...this.sessions.values()].map((s) => s.live());
  }

  /**
   * Starts a session for an already-authorised version: creates the simulation (at q0 when given, else the
   * arm's ready pose), the recording row, then schedules it. Throws (before anything ticks) on a bad arm.
   */
  async start(driver: FrameSink, driven: DrivenVersion, q0?: ArrayLike<number>): Promise<LiveJogSession> {
    const sim = new JogSimulation({ arm: driven.arm.model, readyPose: driven.arm.readyPose, params: driven.version.params, q0 });
    const session = new LiveJogSession(this, driver, driven, sim, this.frameRateHz);
    session.recordingId = await insertRecording(this.ctx.db, {
      sessionId: session.id,
      driverId: driver.user.id,
      armId: driven.arm.id,
      profileId: driven.profile.id,
      versionId: driven.version.id,
      startedAt: session.startedAt,
    });
    this.sessions.set(session.id, session);
    this.scheduler.add(session);
    return session;
  }

  async close(): Promise<void> {
    for (const s of [...this.sessions.values()]) s.end("server-shutdown");
    this.scheduler.stop();
    await this.writer.close();
  }
}

const hubs = new WeakMap<AppContext, JogHub>();

/** The one hub of an app context (created on first use). */
export function jogHubFor(ctx: AppContext): JogHub {
  let hub = hubs.get(ctx);
  if (!hub) {
    hub = new JogHub(ctx, ctx.config.jogFrameRateHz);
    hubs.set(ctx, hub);
  }
  return hub;
}

export function forgetJogHub(ctx: AppContext): void {
  hubs.delete(ctx);
}
