import { randomUUID } from "node:crypto";
import { RateLimiterRes, type RateLimiterAbstract } from "rate-limiter-flexible";
import { hasAnyRole, type Arm, type DrivingKind, type JogEndReason, type JogInput, type JogSessionInfo, type LiveSession, type ProfileSummary, type ProfileVersion, type User } from "@jogwright/shared";
import type { JogLimits } from "../../config.ts";
import type { AppContext } from "../../context.ts";
import { insertRecording, registerRecordingWriter } from "../recordings/service.ts";
import { RecordingRetentionJob } from "../recordings/retention.ts";
import { RecordingWriter } from "../recordings/writer.ts";
import { AutogroupPriority } from "./autogroup.ts";
import type { FrameText, FromWorker, SessionCommand, SimThreadStats } from "./sim-messages.ts";
import { SimulationThread } from "./sim-thread.ts";
import { checkInputAxes, type InputResult, type SimulationSummary } from "./simulation.ts";
import { sqlStationLatchStore, StationLatches, type Station } from "./station-latches.ts";
import { LiveDirectory, type ControlMessage } from "../../scale/live-directory.ts";
import { rateLimiter } from "../../scale/redis.ts";
import { findUserById } from "../users/service.ts";
import { versionLabel } from "../profiles/service.ts";

/**
 * The live jog sessions of one server, on the main thread: per session a driver connection, any read-only
 * watchers and the recording. The simulations themselves run on the simulation thread (sim-thread.ts,
 * sim-worker.ts): validated inputs and commands go there in order, ready-to-send state frames come back and
 * are sent as they are (and their recorded body, a slice of the same text, is queued for the recording).
 * Sockets (socket.ts) and the REST route /api/jog/live (routes.ts) reach it through jogHubFor(ctx).
 *
 * The hub also owns the emergency-stop latch of each operator station (user and arm, station-latches.ts):
 * an e-stop latches the station and halts every live session at it; a session started at a latched station
 * starts latched; only a deliberate reset clears it.
 *
 * Scaled out (REDIS_URL, docs/scaling.md), the hub lists its sessions in the shared live directory
 * (scale/live-directory.ts), publishes the frames of a session watched from another instance, and takes a
 * safety officer's STOP from another instance as from a watcher of its own.
 */

/** What a session sends to: the driver or a watcher connection. */
export interface FrameSink {
  readonly user: User;
  /** Sends a prepared JSON text; false when the client is too far behind and the frame was skipped. */
  sendText(text: string): boolean;
  onSessionEnded(session: LiveJogSession, reason: string): void;
}

/** Why a session ended: the shared list (JOG_END_REASONS), which the console labels. */
export type EndReason = JogEndReason;

/**
 * The `ended` frame's sentences for each reason, to the driver and to the people watching (the reason
 * itself is a code, also stored as the recording's end reason).
 */
export const END_MESSAGES: Record<EndReason, { driver: string; watcher: string }> = {
  stopped: { driver: "You ended the session.", watcher: "The driver ended the session." },
  disconnected: {
    driver: "The connection was lost, so the session ended.",
    watcher: "The driver's connection was lost, so the session ended.",
  },
  switched: { driver: "You switched versions: a new session started.", watcher: "The driver switched to another version, which started a new session." },
  "profile-not-driveable": {
    driver: "This version may no longer be driven (its state or the site ceilings changed), so the session ended.",
    watcher: "The version may no longer be driven (its state or the site ceilings changed), so the session ended.",
  },
  "server-shutdown": {
    driver: "The server is shutting down: the session ended and its recording was saved.",
    watcher: "The server is shutting down: the session ended and its recording was saved.",
  },
  "signed-out": {
    driver: "You were signed out, so the arm made a controlled stop and the session ended. Sign in again to drive.",
    watcher: "The driver was signed out, so the arm made a controlled stop and the session ended.",
  },
  "session-expired": {
    driver: "Your sign-in expired, so the session ended. Sign in again to drive.",
    watcher: "The driver's sign-in expired, so the session ended.",
  },
  "account-deactivated": {
    driver: "An administrator deactivated your account: the arm made a controlled stop and the session ended.",
    watcher: "An administrator deactivated the driver's account: the arm made a controlled stop and the session ended.",
  },
  "roles-changed": {
    driver: "Your roles were changed and no longer allow you to drive this version: the arm made a controlled stop and the session ended.",
    watcher: "The driver's roles were changed and no longer allow driving this version: the arm made a controlled stop and the session ended.",
  },
  "simulation-failed": {
    driver: "The simulation failed: the session ended and the failure was logged.",
    watcher: "The simulation failed: the session ended and the failure was logged.",
  },
};

export interface EndOptions {
  /**
   * A moving arm first makes a controlled stop (the ramp of a released enabling control), and the session
   * ends when it is at rest; inputs are no longer applied from the call on, frames still go out. For ends
   * the driver did not ask for (account deactivated, roles changed, signed out elsewhere).
   */
  afterControlledStop?: boolean;
  /** The driver's `ended` sentence, when it says more than END_MESSAGES (e.g. "your password was changed"). */
  driverMessage?: string;
}

export interface DrivenVersion {
  version: ProfileVersion;
  profile: ProfileSummary;
  /** The arm at the version's revision with its tool (arms service's ArmOfVersion; the references optional for callers without them). */
  arm: Arm & { armRevisionId?: number; revision?: number; tool?: { id: number; name: string } | null };
  /** How the driver may drive it, by the shared driving rule (isDriveable, via loadVersionForDriving). */
  kind: DrivingKind;
}

export class LiveJogSession {
  readonly id = randomUUID();
  readonly startedAt = new Date();
  readonly watchers = new Set<FrameSink>();
  readonly framePeriodMs: number;
  /** Joint count of the driven arm (a joint-mode input needs this many axes). */
  readonly jointCount: number;
  recordingId: number | null = null;
  isEnded = false;
  framesSkipped = 0;
  framesRecorded = 0;
  droppedInputs = 0;
  /** cmdSeq of the latest e-stop sent: frames built before the worker applied it are never shown. */
  private estopCmdSeq = 0;
  private lastDropWarnAtMs = -Infinity;
  private ending: Promise<number[] | null> | null = null;
  private finishEnding: ((q: number[] | null) => void) | null = null;
  private endReason: EndReason = "stopped";
  private endDriverMessage = END_MESSAGES.stopped.driver;
  private endWatchers: FrameSink[] = [];
  /** Ended with a controlled stop still to run: its frames are sent until the simulation has ended it. */
  private isWindingDown = false;

  constructor(
    private readonly hub: JogHub,
    readonly key: number,
    readonly driver: FrameSink,
    readonly driven: DrivenVersion,
    frameRateHz: number,
  ) {
    this.framePeriodMs = 1000 / frameRateHz;
    this.jointCount = driven.arm.model.joints.length;
  }

  get tickRateHz(): number {
    return this.driven.version.params.tickRateHz;
  }

  /** The operator station this session drives at: its driver at its arm. */
  get station(): Station {
    return { userId: this.driver.user.id, armId: this.driven.arm.id };
  }

  /**
   * Unapproved unless the driving rule says "approved" (the approved version, not flagged above the
   * ceilings); the state alone would call a flagged approved version approved.
   */
  get isUnapproved(): boolean {
    return this.driven.kind !== "approved";
  }

  get watchdogMs(): number {
    return this.driven.version.params.watchdogMs;
  }

  info(isWatching: boolean): JogSessionInfo {
    const { version, profile, arm } = this.driven;
    return {
      sessionId: this.id,
      versionId: version.id,
      versionNumber: version.number,
      versionState: version.state,
      isUnapproved: this.isUnapproved,
      profileId: profile.id,
      profileName: profile.name,
      armId: arm.id,
      armName: arm.name,
      armRevisionId: arm.armRevisionId ?? null,
      armRevision: arm.revision ?? null,
      toolId: arm.tool?.id ?? null,
      toolName: arm.tool?.name ?? null,
      driverId: this.driver.user.id,
      driverName: this.driver.user.displayName,
      tickRateHz: this.tickRateHz,
      frameRateHz: 1000 / this.framePeriodMs,
      watchdogMs: this.watchdogMs,
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
      isUnapproved: this.isUnapproved,
    };
  }

  /** A schema-valid input: checks the axis count, then hands it to the simulation thread (in order). */
  applyInput(input: JogInput): InputResult {
    const checked = checkInputAxes(input, this.jointCount);
    if (!checked.ok || this.isEnded) return checked;
    this.hub.thread.postInput(this.key, input);
    return checked;
  }

  /** An input over the rate limit was dropped; true when the client should be told (at most once a second). */
  noteDroppedInput(nowMs: number): boolean {
    this.droppedInputs++;
    if (nowMs - this.lastDropWarnAtMs < 1000) return false;
    this.lastDropWarnAtMs = nowMs;
    this.command("dropped"); // the frames show the warning for a second
    return true;
  }

  /**
   * A command for the simulation, applied by the simulation thread on receipt (it is woken for it), after
   * every input and command sent before. An e-stop zeroes the joint rates there at once, and no frame built
   * before it was applied is sent from here on.
   */
  command(command: SessionCommand): void {
    // While a controlled stop before the end runs, an e-stop still reaches it (nothing else does).
    if (this.isEnded && !(command === "estop" && this.isWindingDown)) return;
    const cmdSeq = this.hub.nextCmdSeq();
    if (command === "estop") this.estopCmdSeq = cmdSeq;
    this.hub.thread.post({ t: "command", key: this.key, command, cmdSeq });
  }

  /** A state frame from the simulation thread: recorded, and sent to the driver and watchers. */
  deliverFrame(text: string, bodyStart: number, bodyEnd: number, appliedCmdSeq: number): void {
    this.record(text, bodyStart, bodyEnd);
    // After end() only the last frame is sent (as before the simulation thread), except the frames of a
    // controlled stop before the end; every frame is recorded.
    if ((this.isEnded && !this.isWindingDown) || appliedCmdSeq < this.estopCmdSeq) return;
    if (!this.driver.sendText(text)) this.framesSkipped++;
    for (const w of this.isEnded ? this.endWatchers : this.watchers) w.sendText(text);
    if (this.hub.directory?.isWatchedElsewhere(this.id)) this.hub.directory.publish(this.id, text);
  }

  private record(text: string, bodyStart: number, bodyEnd: number): void {
    this.framesRecorded++;
    // The body inside the sent text: nothing is serialised twice; the writer copies it out as bytes.
    if (this.recordingId !== null) this.hub.writer.push(this.recordingId, text, bodyStart, bodyEnd);
  }

  refuse(code: string, message: string): void {
    if (!this.isEnded) this.driver.sendText(JSON.stringify({ type: "error", code, message }));
  }

  /**
   * Ends the session: the connections let go of it at once (commands after this get no_session); the
   * simulation thread stops ticking it and builds its last frame ("session-ended"), which is sent with
   * `ended`, and the recording's end is queued. Resolves with the arm's final joint positions (null when the
   * simulation thread failed). Idempotent (the first call's reason and options hold). With
   * afterControlledStop the simulation first brings a moving arm to rest (EndOptions).
   */
  end(reason: EndReason, options: EndOptions = {}): Promise<number[] | null> {
    if (this.ending) return this.ending;
    this.isEnded = true;
    this.endReason = reason;
    this.endDriverMessage = options.driverMessage ?? END_MESSAGES[reason].driver;
    this.isWindingDown = options.afterControlledStop === true && this.hub.thread.isRunning;
    this.hub.sessions.delete(this.id);
    this.endWatchers = [...this.watchers];
    this.watchers.clear();
    this.ending = new Promise((resolve) => {
      this.finishEnding = resolve;
    });
    this.driver.onSessionEnded(this, reason);
    for (const w of this.endWatchers) w.onSessionEnded(this, reason);
    if (this.hub.thread.isRunning) {
      this.hub.thread.post({ t: "end", key: this.key, cmdSeq: this.hub.nextCmdSeq(), afterControlledStop: this.isWindingDown });
    } else this.finishEnd(null, null, null);
    return this.ending;
  }

  /** The simulation thread's answer to end (or its failure: no last frame, no summary). */
  finishEnd(frame: FrameText | null, summary: SimulationSummary | null, q: number[] | null): void {
    if (!this.finishEnding) return;
    const resolve = this.finishEnding;
    this.finishEnding = null;
    this.isWindingDown = false;
    this.hub.forget(this);
    const sinks = [this.driver, ...this.endWatchers];
    this.endWatchers = [];
    if (frame) {
      this.record(frame.text, frame.bodyStart, frame.bodyEnd);
      for (const s of sinks) s.sendText(frame.text);
    }
    if (this.recordingId !== null) {
      // Without the simulation's summary (its thread failed) the recording says so instead of inventing one.
      const lost = { durationS: (Date.now() - this.startedAt.getTime()) / 1000, frames: this.framesRecorded, lost: "the simulation thread failed" };
      this.hub.writer.end(this.recordingId, new Date(), this.endReason, summary ?? lost);
    }
    const ended = (message: string) =>
      JSON.stringify({ type: "ended", sessionId: this.id, reason: this.endReason, message, recordingId: this.recordingId });
    this.driver.sendText(ended(this.endDriverMessage));
    const toWatchers = ended(END_MESSAGES[this.endReason].watcher);
    for (const s of sinks) if (s !== this.driver) s.sendText(toWatchers);
    const directory = this.hub.directory;
    if (directory) {
      if (directory.isWatchedElsewhere(this.id)) {
        if (frame) directory.publish(this.id, frame.text);
        directory.publish(this.id, toWatchers);
      }
      directory.withdraw(this.id);
    }
    resolve(q);
  }
}

/** A `start` the hub refused before anything was created: an error frame's code and its sentence. */
export interface StartRefusal {
  code: "start_rate_limited" | "account_session_limit" | "server_session_limit";
  message: string;
}

/** A place among the live sessions, held from admission until the session is live (or the start failed). */
export interface StartAdmission {
  release(): void;
}

export class JogHub {
  readonly writer: RecordingWriter;
  /** Recording retention, at start and periodically; a live session's recording is never pruned. */
  readonly retention: RecordingRetentionJob;
  readonly thread: SimulationThread;
  /** The emergency-stop latch of every operator station (authoritative here; stored and audited after). */
  readonly stations: StationLatches;
  /** The server's autogroup priority, favoured while the simulation thread runs any session (autogroup.ts). */
  readonly autogroup: AutogroupPriority;
  /** Live sessions by id (ended ones leave at once). */
  readonly sessions = new Map<string, LiveJogSession>();
  /** Sessions the simulation thread knows, by key, until their end is finished. */
  private readonly byKey = new Map<number, LiveJogSession>();
  private readonly creating = new Map<number, { resolve: () => void; reject: (e: Error) => void }>();
  private nextKey = 1;
  private cmdSeq = 0;
  /** `start` messages per account within the window (issue 11, item 8: 200 starts in 1 s made 145 recordings). */
  private readonly startLimiter: RateLimiterAbstract;
  /** The live sessions of every instance, when scaled out (REDIS_URL); null for a single instance. */
  readonly directory: LiveDirectory | null;
  /** Admitted starts not yet live, per account and in all: they count against the caps like live sessions. */
  private readonly admittedBy = new Map<string, number>();
  private admittedTotal = 0;

  constructor(readonly ctx: AppContext, readonly frameRateHz: number, readonly limits: JogLimits = ctx.config.jogLimits) {
    this.startLimiter = rateLimiter(ctx.scale, { keyPrefix: "jog-start", points: limits.startsPerWindow, duration: limits.startWindowS });
    this.directory = ctx.scale ? new LiveDirectory(ctx.scale) : null;
    this.directory?.handleControl((msg) => void this.onControl(msg));
    // Chunks are encoded off the main thread, whose turns carry the live inputs and frames.
    this.writer = new RecordingWriter(ctx.db, undefined, undefined, { encodeOffThread: true });
    registerRecordingWriter(ctx.db, this.writer);
    this.retention = new RecordingRetentionJob(ctx.db, ctx.config.recordingRetention, (id) => this.isRecordingLive(id));
    this.retention.start();
    this.thread = new SimulationThread((msg) => this.onWorkerMessage(msg), (error) => this.onWorkerFailure(error), {
      realtimePriority: ctx.config.jogSimRealtimePriority,
      nice: ctx.config.jogSimNice,
    });
    this.autogroup = AutogroupPriority.open(ctx.config.serverAutogroupNice);
    this.stations = new StationLatches(sqlStationLatchStore(ctx.db));
    void this.stations.ready();
  }

  /** A recording this server still writes: its session runs or ends, or its frames wait for the writer. */
  isRecordingLive(recordingId: number): boolean {
    if (this.writer.isPending(recordingId)) return true;
    for (const s of this.byKey.values()) if (s.recordingId === recordingId) return true;
    for (const s of this.sessions.values()) if (s.recordingId === recordingId) return true;
    return false;
  }

  nextCmdSeq(): number {
    return ++this.cmdSeq;
  }

  /** This instance's live sessions, and when scaled out every other instance's (the live directory). */
  async listLive(): Promise<LiveSession[]> {
    const mine = [...this.sessions.values()].map((s) => s.live());
    if (!this.directory) return mine;
    const others = await this.directory.others();
    return [...mine, ...others.map((e) => e.live)].sort((a, b) => a.startedAt.localeCompare(b.startedAt));
  }

  /**
   * Another instance asks something of a session this one drives: a safety officer's STOP from there is
   * checked against the officer's account as it is now, then latches the station as a watcher's STOP here.
   */
  private async onControl(msg: ControlMessage): Promise<void> {
    if (msg.t !== "estop") return;
    const session = this.sessions.get(msg.sessionId);
    if (!session) return;
    const by = await findUserById(this.ctx.db, msg.byUserId).catch(() => null);
    if (!by || !by.isActive || !hasAnyRole(by.roles, ["safety_officer"])) return;
    this.emergencyStop(session, by);
  }

  /**
   * Admits a `start` of `user` before anything is read or created: takes one point of the account's start
   * rate (consume counts and compares in one step, so a flood cannot slip past), then checks the caps on
   * live sessions per account and per server, counting the starts admitted and not yet live. `replacing`
   * is the session this start switches away from (it ends first, so it frees its own place). A refusal by
   * a cap gives the rate point back: the person reads the cap's sentence, not the rate's, when trying again.
   * The caller releases the admission once the session is live or the start failed.
   */
  async admitStart(user: User, replacing: LiveJogSession | null): Promise<StartAdmission | StartRefusal> {
    const key = user.id;
    try {
      await this.startLimiter.consume(key, 1);
    } catch (error) {
      if (!(error instanceof RateLimiterRes)) throw error;
      const waitS = Math.max(1, Math.ceil(error.msBeforeNext / 1000));
      return {
        code: "start_rate_limited",
        message: `You started ${this.limits.startsPerWindow} sessions within ${this.limits.startWindowS} s, the most allowed: wait ${waitS} s, then start again.`,
      };
    }
    // Scaled out, the account's live sessions on the other instances count too (the live directory). Two
    // starts at the same moment on two instances can each miss the other's: the cap may then be passed by
    // one session per instance, once; the shared start-rate limit above bounds how often.
    let elsewhere = 0;
    if (this.directory) {
      try {
        elsewhere = (await this.directory.others()).filter((e) => e.live.driverId === key).length;
      } catch (error) {
        console.error(`[jogwright] the live directory could not be read for the session cap (this instance's sessions counted): ${(error as Error).message}`);
      }
    }
    // Synchronous from here to the reservation: no other start can interleave between check and count.
    const freed = replacing && this.sessions.has(replacing.id) ? 1 : 0;
    let ofAccount = (this.admittedBy.get(key) ?? 0) + elsewhere;
    for (const s of this.sessions.values()) if (s.driver.user.id === key) ofAccount++;
    const refusal: StartRefusal | null =
      ofAccount - freed >= this.limits.maxSessionsPerAccount
        ? {
            code: "account_session_limit",
            message: `You already drive ${this.limits.maxSessionsPerAccount} live sessions, the most one account may: stop one (on this or another tab or device), then start again.`,
          }
        : this.sessions.size + this.admittedTotal - freed >= this.limits.maxSessions
          ? {
              code: "server_session_limit",
              message: `The server is running ${this.limits.maxSessions} live sessions, its limit: try again when one has ended, or ask an administrator to raise JOG_MAX_SESSIONS.`,
            }
          : null;
    if (refusal) {
      await this.startLimiter.reward(key, 1);
      return refusal;
    }
    this.admittedBy.set(key, (this.admittedBy.get(key) ?? 0) + 1);
    this.admittedTotal++;
    let isReleased = false;
    return {
      release: () => {
        if (isReleased) return;
        isReleased = true;
        this.admittedTotal--;
        const n = (this.admittedBy.get(key) ?? 1) - 1;
        if (n > 0) this.admittedBy.set(key, n);
        else this.admittedBy.delete(key);
      },
    };
  }

  /**
   * Starts a session for an already-authorised version: creates its simulation on the simulation thread (at
   * q0 when given, else the arm's ready pose; a bad arm throws here, before anything ticks), the recording
   * row, then schedules it. At a latched station the session starts latched.
   */
  async start(driver: FrameSink, driven: DrivenVersion, q0?: ArrayLike<number>): Promise<LiveJogSession> {
    const key = this.nextKey++;
    const session = new LiveJogSession(this, key, driver, driven, this.frameRateHz);
    await this.stations.ready();
    const estopLatched = this.stations.isLatched(session.station);
    await new Promise<void>((resolve, reject) => {
      this.creating.set(key, { resolve, reject });
      this.thread.post({
        t: "create", key, sessionId: session.id, framePeriodMs: session.framePeriodMs,
        setup: {
          arm: driven.arm.model, readyPose: driven.arm.readyPose, params: driven.version.params, q0: q0 ? Array.from(q0) : undefined,
          estopLatched,
          // The recording keeps what the operator did, tick by tick, so the session can be replayed offline.
          recordInputs: true,
        },
      });
    });
    const generation = this.thread.generation;
    try {
      session.recordingId = await insertRecording(this.ctx.db, {
        sessionId: session.id,
        driverId: driver.user.id,
        armId: driven.arm.id,
        profileId: driven.profile.id,
        versionId: driven.version.id,
        startedAt: session.startedAt,
      });
    } catch (error) {
      this.thread.post({ t: "discard", key });
      throw error;
    }
    this.sessions.set(session.id, session);
    this.byKey.set(key, session);
    this.autogroup.setFavoured(true);
    if (this.thread.generation !== generation || !this.thread.isRunning) {
      // The simulation thread failed while the recording row was written: it never knew this session.
      void session.end("simulation-failed");
      throw new Error("the simulation thread failed while the session was starting");
    }
    // Before its first tick: an e-stop at this station while the session was being created (it was not yet
    // among the live sessions, so emergencyStop could not reach it).
    if (!estopLatched && this.stations.isLatched(session.station)) session.command("estop");
    this.thread.post({ t: "run", key });
    this.directory?.announce(session.live(), session.info(true));
    return session;
  }

  /**
   * The sessions driven at a station (a person may have the drive page open twice), including those still
   * making their controlled stop before an end.
   */
  private sessionsAt(station: Station): LiveJogSession[] {
    return [...this.byKey.values()].filter((s) => s.station.userId === station.userId && s.station.armId === station.armId);
  }

  /**
   * Emergency stop of `session`'s station, pressed by its driver or by a safety officer watching it (`by`,
   * default the driver): latches the station — the driver at that arm — in memory first (stored and
   * audited after, naming who pressed it; a failed write never undoes it) and halts every live session at
   * that station at once. Only the driver's deliberate reset clears it.
   */
  emergencyStop(session: LiveJogSession, by: User = session.driver.user): void {
    const station = session.station;
    this.stations.latch(station, this.stationEvent(session, by));
    for (const s of new Set([session, ...this.sessionsAt(station)])) s.command("estop");
  }

  /**
   * The deliberate reset from `session`'s driver: clears the station's latch and every live session's at
   * it. The simulation never restarts motion on a reset (the enabling control must be released and pressed).
   */
  resetEmergencyStop(session: LiveJogSession): void {
    const station = session.station;
    if (this.stations.isLatched(station)) this.stations.reset(station, this.stationEvent(session));
    for (const s of new Set([session, ...this.sessionsAt(station)])) s.command("reset-estop");
  }

  private stationEvent(session: LiveJogSession, actor: User = session.driver.user) {
    const driver = session.driver.user;
    const { profile, version } = session.driven;
    return { actor, driver, armName: session.driven.arm.name, sessionId: session.id, versionId: version.id, versionName: versionLabel(profile, version) };
  }

  forget(session: LiveJogSession): void {
    this.byKey.delete(session.key);
    this.sessions.delete(session.id);
    this.autogroup.setFavoured(this.byKey.size > 0);
  }

  private onWorkerMessage(msg: FromWorker): void {
    switch (msg.t) {
      case "frames": {
        const f = msg.frames;
        for (let i = 0; i + 4 < f.length; i += 5) {
          this.byKey.get(f[i] as number)?.deliverFrame(f[i + 1] as string, f[i + 2] as number, f[i + 3] as number, f[i + 4] as number);
        }
        return;
      }
      case "ended":
        this.byKey.get(msg.key)?.finishEnd(msg.frame, msg.summary, msg.q);
        return;
      case "refused":
        this.byKey.get(msg.key)?.refuse(msg.code, msg.message);
        return;
      case "created":
        this.creating.get(msg.key)?.resolve();
        this.creating.delete(msg.key);
        return;
      case "create-failed":
        this.creating.get(msg.key)?.reject(new Error(`the simulation could not be created: ${msg.message}`));
        this.creating.delete(msg.key);
        return;
      case "stats":
        return;
    }
  }

  /** The simulation thread failed (logged by SimulationThread): every session it ran ends, with the reason. */
  private onWorkerFailure(_error: Error): void {
    for (const c of this.creating.values()) c.reject(new Error("the simulation thread failed"));
    this.creating.clear();
    for (const s of [...this.byKey.values()]) {
      void s.end("simulation-failed"); // no-op for a session already ending: that one keeps its reason
      s.finishEnd(null, null, null);
    }
  }

  /** The simulation thread's tick lateness histogram and counters (null when it is not running). */
  simulationStats(reset = false): Promise<SimThreadStats | null> {
    return this.thread.stats(reset);
  }

  /**
   * Ends every session (their last frames and recordings' ends), stops the simulation thread, drains the
   * writer and the station latches' writes.
   */
  async close(): Promise<void> {
    // byKey also holds the sessions still ending (end is idempotent: those keep their own reason).
    await Promise.all([...this.byKey.values()].map((s) => s.end("server-shutdown")));
    await this.thread.close();
    await this.retention.stop();
    await this.writer.close();
    // Latches and resets still being stored (and audited) are written before the database goes away.
    await this.stations.settled();
    await this.directory?.close();
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
