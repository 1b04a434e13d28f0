import type { IncomingMessage, Server } from "node:http";
import type { Duplex } from "node:stream";
import { performance } from "node:perf_hooks";
import { WebSocketServer, type RawData, type WebSocket } from "ws";
import {
  hasAnyRole, isDriveable, JOG_CLOSE_CODES, jogClientMessageSchema, type JogClientMessage, type Role, type User,
} from "@jogwright/shared";
import { isAllowedOrigin, readSessionId, resolveAccount } from "../../auth/middleware.ts";
import { checkSessionWithoutExtending } from "../../auth/session-check.ts";
import type { AppContext } from "../../context.ts";
import { isDatabaseUnavailable } from "../../db/connection.ts";
import { AppError } from "../../errors.ts";
import { drivingFacts, loadVersionForDriving } from "../driving/service.ts";
import { accountChangesFor, type AccountChange, type AccountChanges } from "../users/account-changes.ts";
import { findUserById } from "../users/service.ts";
import { RecheckRota } from "./recheck-rota.ts";
import {
  END_MESSAGES, jogHubFor, type EndReason, type FrameSink, type JogHub, type LiveJogSession, type StartAdmission,
} from "./hub.ts";

/**
 * The live-jogging WebSocket endpoint, /ws/jog on the app's own http.Server (protocol in
 * packages/shared/src/jog-protocol.ts and DEVELOPERS.md "Live jogging"). The upgrade is refused with 403
 * from a foreign Origin and 401 without a valid session cookie, before any WebSocket exists; when the
 * database cannot be asked (issue 11, item 5) it is completed and closed at once with 1013 and a reason,
 * which a browser can show (it never sees a refused upgrade's status). Each text
 * frame is size-checked, rate-limited, JSON-parsed and validated with the shared zod schema; every bad
 * one gets {type:"error"} and changes nothing.
 *
 * Authority is re-checked, not cached (issue 11, items 2 and 10): an account change made through the API
 * (roles, deactivation, password) and a sign-out reach the connections of that account at once
 * (users/account-changes.ts) — a deactivated or signed-out driver's arm makes a controlled stop, the
 * `ended` frame goes out, then the socket closes (JOG_CLOSE_CODES); lost roles end what they no longer
 * allow. Every privileged message compares the account's epoch (a Map lookup) and re-reads the account
 * when it moved. The periodic re-check reads the cookie session without extending it (an idle page
 * expires) and re-reads the account, for changes made outside the API.
 */

export const JOG_SOCKET_PATH = "/ws/jog";
/** Largest accepted message (bytes); bigger ones get an error frame. Far bigger ones close the socket (ws maxPayload). */
export const MAX_MESSAGE_BYTES = 4096;
const HARD_MAX_PAYLOAD_BYTES = 64 * 1024;
/** Input frames accepted at up to 120 Hz (token bucket, burst of 12 for network jitter; common practice, no source). */
export const INPUT_RATE_HZ = 120;
const INPUT_BURST = 12;
/** All messages together: 250/s, burst 50. Beyond, they are dropped and count as misbehaviour. */
const MESSAGE_RATE_HZ = 250;
const MESSAGE_BURST = 50;
/** Misbehaviour score (bad or excess messages), leaking 10/s; above 100 the socket is closed (1008). */
const STRIKE_LIMIT = 100;
const STRIKE_LEAK_PER_S = 10;
/** A client with more than this much unsent data gets no frames until it catches up (frames are snapshots). */
const MAX_BUFFERED_BYTES = 512 * 1024;
/**
 * How often each connection re-checks, off the message path, that its cookie session is still valid (read
 * without extending it), re-reads its account (changes made outside the API) and that the driven version
 * is still driveable. Changes made through the API reach it at once instead.
 */
export const REVALIDATE_INTERVAL_MS = 10_000;
/** The interval's turns: one every 100 ms, so 50 connections' re-checks come one at a time (recheck-rota.ts). */
const RECHECK_TURNS = 100;
/** Longest wait for a session's end (its controlled stop and `ended` frame) before the socket closes anyway. */
const END_BEFORE_CLOSE_MAX_MS = 3000;
/** Who may watch live sessions; of them, safety officers may also stop the session they watch. */
const WATCH_ROLES: Role[] = ["engineer", "safety_officer"];
const STOP_WATCHED_ROLES: Role[] = ["safety_officer"];
/** Messages that use a role or the account's standing, re-checked on every one (estop and ping are handled apart). */
const PRIVILEGED = new Set<JogClientMessage["type"]>(["start", "watch", "input", "reset-estop", "acknowledge", "device-changed", "ready-pose"]);

/** Why a connection is closed by its account or cookie session: the close code and the words for the person. */
interface Revocation {
  reason: EndReason;
  code: number;
  /** The close frame's reason (≤ 123 bytes). */
  closeReason: string;
  /** The `ended` frame of the session they drove (its watchers get END_MESSAGES' words). */
  driverMessage: string;
  /** The `ended` frame of the session they watched (which goes on). */
  watcherMessage: string;
}

/** A revocation that signs the account out (the close code and end reason every sign-out shares). */
const signedOut = (closeReason: string, driverMessage: string, watcherMessage: string): Revocation =>
  ({ reason: "signed-out", code: JOG_CLOSE_CODES.signedOut, closeReason, driverMessage, watcherMessage });

const REVOKED = {
  deactivated: {
    reason: "account-deactivated", code: JOG_CLOSE_CODES.accountDeactivated, closeReason: "account deactivated",
    driverMessage: END_MESSAGES["account-deactivated"].driver,
    watcherMessage: "An administrator deactivated your account, so you no longer watch this session.",
  },
  signedOut: signedOut("signed out",
    "You signed out, so the arm made a controlled stop and the session ended. Sign in again to drive.",
    "You signed out, so you no longer watch this session."),
  passwordChanged: signedOut("signed out: password changed",
    "Your password was changed, which signs you out everywhere: the arm made a controlled stop and the session ended. Sign in again.",
    "Your password was changed, which signs you out everywhere, so you no longer watch this session. Sign in again."),
  gone: signedOut("signed out",
    "Your sign-in has ended (signed out elsewhere), so the arm made a controlled stop and the session ended. Sign in again.",
    "Your sign-in has ended (signed out elsewhere), so you no longer watch this session. Sign in again."),
  expired: {
    reason: "session-expired", code: JOG_CLOSE_CODES.signedOut, closeReason: "sign-in expired",
    driverMessage: END_MESSAGES["session-expired"].driver,
    watcherMessage: "Your sign-in expired, so you no longer watch this session. Sign in again.",
  },
} satisfies Record<string, Revocation>;

class TokenBucket {
  private tokens: number;
  private at = performance.now();
  constructor(private readonly ratePerS: number, private readonly burst: number) {
    this.tokens = burst;
  }
  take(nowMs: number): boolean {
    this.tokens = Math.min(this.burst, this.tokens + ((nowMs - this.at) / 1000) * this.ratePerS);
    this.at = nowMs;
    if (this.tokens >= 1) {
      this.tokens -= 1;
      return true;
    }
    return false;
  }
}

/**
 * The session a connection watches: one of this instance's, or (scaled out) one driven on another
 * instance, whose frames arrive through the live directory and whose STOP goes back through it.
 */
interface WatchTarget {
  readonly id: string;
  readonly recordingId: number | null;
  /** A safety officer's STOP: latches the driver's station (where the session runs), audited there. */
  estop(by: User): void;
  /** Stop receiving its frames. */
  leave(): void;
}

class JogConnection implements FrameSink {
  driving: LiveJogSession | null = null;
  watching: WatchTarget | null = null;
  private readonly inputBucket = new TokenBucket(INPUT_RATE_HZ, INPUT_BURST);
  private readonly messageBucket = new TokenBucket(MESSAGE_RATE_HZ, MESSAGE_BURST);
  private strikes = 0;
  private strikesAt = performance.now();
  private lastRateErrorAt = -Infinity;
  private isStarting = false;
  private isClosed = false;
  /** Closing because of the account or the cookie session: nothing but ping and the driver's e-stop is handled. */
  private revocation: Revocation | null = null;
  /** The session of this driver still making its controlled stop before a revocation closes the socket. */
  private stoppingSession: LiveJogSession | null = null;
  /** The account's epoch (users/account-changes.ts) that `user` reflects; −1: re-read it before anything privileged. */
  private accountEpoch: number;
  private accountReload: Promise<void> | null = null;

  constructor(
    private readonly hub: JogHub,
    private readonly ws: WebSocket,
    /** The account as last read or pushed: current roles and active flag (replaced on every change). */
    public user: User,
    readonly sessionId: string,
    private readonly accounts: AccountChanges,
    /** accounts.serial read before the account was read at the upgrade. */
    serialBeforeRead: number,
    private readonly registry: Set<JogConnection>,
  ) {
    registry.add(this);
    // A change published between the upgrade's read of the account and now was not pushed to this
    // connection: the first privileged message re-reads the account, and the session is checked now.
    const isMaybeStale = accounts.serial !== serialBeforeRead;
    this.accountEpoch = isMaybeStale ? -1 : accounts.epochOf(user.id);
    ws.on("message", (data, isBinary) => this.onMessage(data, isBinary));
    ws.on("close", () => this.onClose());
    ws.on("error", () => this.onClose());
    this.sendJson({ type: "welcome", userId: user.id, roles: user.roles });
    if (isMaybeStale) void this.recheckLogged();
  }

  sendText(text: string): boolean {
    if (this.isClosed || this.ws.readyState !== this.ws.OPEN) return false;
    if (this.ws.bufferedAmount > MAX_BUFFERED_BYTES) return false;
    this.ws.send(text);
    return true;
  }

  private sendJson(message: object): void {
    this.sendText(JSON.stringify(message));
  }

  private sendError(code: string, message: string): void {
    this.sendJson({ type: "error", code, message });
  }

  onSessionEnded(session: LiveJogSession): void {
    if (this.driving === session) this.driving = null;
    if (this.watching?.id === session.id) this.watching = null;
  }

  private strike(nowMs: number, weight = 1): void {
    this.strikes = Math.max(0, this.strikes - ((nowMs - this.strikesAt) / 1000) * STRIKE_LEAK_PER_S) + weight;
    this.strikesAt = nowMs;
    if (this.strikes > STRIKE_LIMIT) {
      this.sendError("too_many_bad_messages", "Too many bad or excess messages: the connection is closed.");
      this.ws.close(1008, "too many bad messages");
    }
  }

  private rateError(nowMs: number, message: string): void {
    if (nowMs - this.lastRateErrorAt >= 1000) {
      this.lastRateErrorAt = nowMs;
      this.sendError("rate_limited", message);
    }
  }

  private onMessage(data: RawData, isBinary: boolean): void {
    const now = performance.now();
    try {
      const size = Array.isArray(data) ? data.reduce((n, b) => n + b.length, 0) : (data as Buffer | ArrayBuffer).byteLength;
      if (isBinary) {
        this.strike(now, 5);
        return this.sendError("bad_message", "Send JSON text frames, not binary.");
      }
      if (size > MAX_MESSAGE_BYTES) {
        this.strike(now, 5);
        return this.sendError("too_large", `A message may be at most ${MAX_MESSAGE_BYTES} bytes (got ${size}).`);
      }
      if (!this.messageBucket.take(now)) {
        this.strike(now);
        return this.rateError(now, `More than ${MESSAGE_RATE_HZ} messages per second: extra ones are dropped.`);
      }
      let raw: unknown;
      try {
        raw = JSON.parse(data.toString());
      } catch {
        this.strike(now, 2);
        return this.sendError("bad_json", "The message is not valid JSON.");
      }
      const parsed = jogClientMessageSchema.safeParse(raw);
      if (!parsed.success) {
        this.strike(now, 2);
        const first = parsed.error.issues[0];
        const where = first && first.path.length ? `${first.path.join(".")}: ` : "";
        return this.sendError("validation_failed", `The message is not valid — ${where}${first?.message ?? "invalid"}.`);
      }
      this.handle(parsed.data, now);
    } catch (error) {
      // Never let one message take the process (or the session) down.
      console.error("[jogwright] jog message failed:", error);
      this.sendError("internal", "The message could not be handled; it has been logged.");
    }
  }

  /**
   * True when `user` reflects the account's latest published change. Otherwise the account is re-read
   * (and applied) and the caller refuses the message: nothing privileged runs on a stale account.
   */
  private isAccountCurrent(): boolean {
    if (this.accounts.epochOf(this.user.id) === this.accountEpoch) return true;
    if (!this.accountReload) {
      this.sendError("account_changed", "Your account was just changed; this was not done. Try again in a moment.");
      void this.reloadAccount().catch((error: unknown) => console.error("[jogwright] jog account re-read failed:", (error as Error).message));
    }
    return false;
  }

  private handle(msg: JogClientMessage, now: number): void {
    if (this.revocation) {
      // Closing: only a stop of the arm still stopping, and pings, are answered.
      if (msg.type === "estop" && this.stoppingSession) this.hub.emergencyStop(this.stoppingSession);
      else if (msg.type === "ping") this.sendJson({ type: "pong", id: msg.id, clientTimeMs: msg.clientTimeMs, serverTimeMs: Date.now() });
      return;
    }
    if (PRIVILEGED.has(msg.type) && !this.isAccountCurrent()) return;
    switch (msg.type) {
      case "ping":
        return this.sendJson({ type: "pong", id: msg.id, clientTimeMs: msg.clientTimeMs, serverTimeMs: Date.now() });
      case "start":
        void this.start(msg.versionId);
        return;
      case "watch":
        return void this.watch(msg.sessionId).catch((error: unknown) => this.sendError("internal", `Watching failed: ${(error as Error).message}`));
      case "input": {
        const s = this.requireDriving();
        if (!s) return;
        if (!this.inputBucket.take(now)) {
          if (s.noteDroppedInput(now)) this.sendError("rate_limited", `Inputs above ${INPUT_RATE_HZ} Hz are dropped.`);
          return;
        }
        // The simulation thread stamps its arrival with its own clock (performance.now origins differ per thread).
        const result = s.applyInput(msg);
        if (!result.ok) {
          this.strike(now, 2);
          this.sendError(result.code, result.message);
        }
        return;
      }
      case "estop":
        return this.emergencyStop();
      case "reset-estop": {
        const s = this.requireDriving();
        if (s) this.hub.resetEmergencyStop(s);
        return;
      }
      case "acknowledge": {
        const s = this.requireDriving();
        if (s) s.command("acknowledge");
        return;
      }
      case "device-changed": {
        // A device that reappears with its enabling control held must not restart motion (gate requireRelease).
        const s = this.requireDriving();
        if (s) s.command("require-release");
        return;
      }
      case "ready-pose": {
        const s = this.requireDriving();
        // Checked by the simulation thread against the state there (in order with the inputs before it); a
        // refusal (estop_latched, not_stopped) comes back as an error frame.
        if (s) s.command("ready-pose");
        return;
      }
      case "stop":
        if (this.driving) void this.driving.end("stopped");
        else if (this.watching) this.stopWatching();
        return;
    }
  }

  /**
   * The driver's e-stop latches their own station and is never refused. A watcher's latches the DRIVER's
   * station (the driver at that arm), only for a safety officer (roles as of now), audited with the
   * officer as the one who pressed it; the driver's deliberate reset clears it.
   */
  private emergencyStop(): void {
    if (this.driving) return this.hub.emergencyStop(this.driving);
    const watched = this.watching;
    if (!watched) return void this.requireDriving();
    if (!this.isAccountCurrent()) return;
    if (!hasAnyRole(this.user.roles, STOP_WATCHED_ROLES)) {
      return this.sendError("read_only", "You are watching this session: only a safety officer may stop it from here.");
    }
    watched.estop(this.user);
  }

  private requireDriving(): LiveJogSession | null {
    if (this.driving) return this.driving;
    if (this.watching) this.sendError("read_only", "You are watching this session: it cannot be driven from here.");
    else this.sendError("no_session", "No session is running: pick a version and start driving first.");
    return null;
  }

  /** Closed or closing for its account or cookie session: whatever is under way must not go on. */
  private get isGone(): boolean {
    return this.isClosed || this.revocation !== null;
  }

  private async start(versionId: number): Promise<void> {
    if (this.isStarting) return this.sendError("busy", "A session is already starting.");
    this.isStarting = true;
    let admission: StartAdmission | null = null;
    try {
      // The start rate and the caps on live sessions, before anything is read or created (issue 11, item 8).
      const admitted = await this.hub.admitStart(this.user, this.driving);
      if ("code" in admitted) return this.sendError(admitted.code, admitted.message);
      admission = admitted;
      if (this.isGone) return;
      const driven = await loadVersionForDriving(this.hub.ctx.db, this.user, versionId);
      if (this.isGone) return;
      const previous = this.driving;
      this.stopWatching();
      // Switching on the same arm keeps the arm where it is (from rest); another arm starts at its ready pose.
      const finalQ = previous ? await previous.end("switched") : null;
      const q0 = previous && finalQ && previous.driven.arm.id === driven.arm.id ? finalQ : undefined;
      if (this.isGone) return;
      const session = await this.hub.start(this, driven, q0);
      // Gone meanwhile, or the account changed while the version was read: the rule decides again on the
      // account as it is now (an engineer demoted during the start must not be left driving a draft).
      const decision = isDriveable(drivingFacts(driven.version, driven.profile), this.user);
      if (this.isGone || !decision.isDriveable) {
        void session.end(this.revocation?.reason ?? (this.isClosed ? "disconnected" : "roles-changed"));
        if (!this.isGone) this.sendError("forbidden", "Your roles were changed while the session was starting: it was not started.");
        return;
      }
      this.driving = session;
      this.sendJson({ type: "session", session: session.info(false) });
    } catch (error) {
      if (error instanceof AppError) this.sendError(error.code, error.message);
      else {
        console.error("[jogwright] jog start failed:", error);
        this.sendError("internal", "The session could not be started; it has been logged.");
      }
    } finally {
      // Live (counted among the sessions) or failed: either way the place held for the start is given back.
      admission?.release();
      this.isStarting = false;
    }
  }

  private async watch(sessionId: string): Promise<void> {
    if (!hasAnyRole(this.user.roles, WATCH_ROLES)) {
      return this.sendError("forbidden", "Watching live sessions needs the engineer or safety officer role.");
    }
    const session = this.hub.sessions.get(sessionId);
    if (!session) return this.watchElsewhere(sessionId);
    if (this.driving) void this.driving.end("stopped");
    this.stopWatching();
    session.watchers.add(this);
    this.watching = {
      id: session.id,
      get recordingId() {
        return session.recordingId;
      },
      estop: (by) => this.hub.emergencyStop(session, by),
      leave: () => session.watchers.delete(this),
    };
    this.sendJson({ type: "session", session: session.info(true) });
  }

  /**
   * Scaled out: a session driven on another instance, found in the live directory. Its frames (and its
   * `ended`) arrive from there as sent to its driver; a STOP is sent there, where the officer's account is
   * checked again and the driver's station latched.
   */
  private async watchElsewhere(sessionId: string): Promise<void> {
    const directory = this.hub.directory;
    const entry = directory ? await directory.find(sessionId).catch(() => null) : null;
    if (!directory || !entry || this.isGone) return this.sendError("not_found", "No live session with that id (it may have ended).");
    if (this.driving) void this.driving.end("stopped");
    this.stopWatching();
    let target: WatchTarget | null = null;
    const leave = await directory.watch(entry, (text) => {
      if (this.watching !== target) return;
      this.sendText(text);
      if (text.startsWith('{"type":"ended"')) this.stopWatching();
    });
    target = { id: sessionId, recordingId: null, estop: (by) => void directory.requestEstop(entry, by.id), leave };
    this.watching = target;
    this.sendJson({ type: "session", session: { ...entry.info, isWatching: true } });
  }

  private stopWatching(): void {
    this.watching?.leave();
    this.watching = null;
  }

  /** A change published by the users service or the sign-out route (account-changes.ts), applied at once. */
  onAccountChange(change: AccountChange): void {
    if (this.isGone) return;
    if (change.kind === "signed-out") {
      if (change.sessionId === this.sessionId) void this.revoke(REVOKED.signedOut);
      return;
    }
    if (change.kind === "versions") {
      // The driven version may no longer be driveable: decided now, as the periodic re-check would.
      if (this.driving) void this.recheckLogged();
      return;
    }
    if (change.user.id !== this.user.id) return;
    if (change.isPasswordChanged && change.user.isActive) return void this.revoke(REVOKED.passwordChanged);
    this.applyAccount(change.user, this.accounts.epochOf(change.user.id));
  }

  /**
   * The account as it is now (pushed or re-read) at `epoch`. Deactivated: the controlled stop, `ended`,
   * close (4403). Other roles: what they no longer allow ends at once — the drive (the driving rule on the
   * version's facts as last checked; a controlled stop), the watch — and a new `welcome` carries the roles.
   */
  private applyAccount(user: User, epoch: number): void {
    if (this.isGone) return;
    this.accountEpoch = epoch;
    if (!user.isActive) return void this.revoke(REVOKED.deactivated);
    const isSameRoles = user.roles.join() === this.user.roles.join();
    this.user = user;
    if (isSameRoles) return;
    const s = this.driving;
    if (s) {
      const decision = isDriveable(drivingFacts(s.driven.version, s.driven.profile), user);
      if (decision.isDriveable) s.driven.kind = decision.kind;
      else void s.end("roles-changed", { afterControlledStop: true });
    }
    const watched = this.watching;
    if (watched && !hasAnyRole(user.roles, WATCH_ROLES)) {
      this.stopWatching();
      this.sendJson({
        type: "ended", sessionId: watched.id, reason: "roles-changed", recordingId: watched.recordingId,
        message: "Your roles were changed: watching live sessions needs the engineer or safety officer role.",
      });
    }
    this.sendJson({ type: "welcome", userId: user.id, roles: user.roles });
  }

  /** Re-reads the account from the database and applies it (one read at a time). */
  private reloadAccount(): Promise<void> {
    this.accountReload ??= (async () => {
      try {
        // The epoch before the read: a change published during it raises it again, so it is read again.
        const epoch = this.accounts.epochOf(this.user.id);
        const user = await findUserById(this.hub.ctx.db, this.user.id);
        this.applyAccount(user ?? { ...this.user, isActive: false }, epoch);
      } finally {
        this.accountReload = null;
      }
    })();
    return this.accountReload;
  }

  /**
   * Ends what this connection drives (a controlled stop, then `ended`) or watches (`ended` for it), then
   * closes the socket with the revocation's code — in that order, so the person reads why.
   */
  private async revoke(why: Revocation): Promise<void> {
    if (this.isGone) return;
    this.revocation = why;
    const watched = this.watching;
    this.stopWatching();
    if (watched) {
      this.sendJson({ type: "ended", sessionId: watched.id, reason: why.reason, message: why.watcherMessage, recordingId: watched.recordingId });
    }
    const driven = this.driving;
    if (driven) {
      this.stoppingSession = driven;
      const ended = driven.end(why.reason, { afterControlledStop: true, driverMessage: why.driverMessage });
      let timer: NodeJS.Timeout | undefined;
      await Promise.race([ended, new Promise((resolve) => (timer = setTimeout(resolve, END_BEFORE_CLOSE_MAX_MS)))]);
      clearTimeout(timer);
      this.stoppingSession = null;
    }
    this.ws.close(why.code, why.closeReason);
  }

  /**
   * The periodic re-check, off the tick path: the cookie session still valid (read WITHOUT extending it,
   * so a page left open expires with its session), the account re-read (changes made outside the API),
   * the driven version still driveable.
   */
  async recheck(): Promise<void> {
    if (this.isGone) return;
    const ctx = this.hub.ctx;
    const check = await checkSessionWithoutExtending(ctx, this.sessionId);
    if (check !== "valid") return this.revoke(check === "expired" ? REVOKED.expired : REVOKED.gone);
    await this.reloadAccount();
    const s = this.driving;
    if (!s || this.isGone) return;
    try {
      // Still driveable; an engineer's drive of a version flagged since the start becomes a test drive.
      const now = await loadVersionForDriving(ctx.db, this.user, s.driven.version.id);
      s.driven.kind = now.kind;
      // The facts a role change is decided on at once (applyAccount); the parameters stay those it runs with.
      s.driven.version = { ...s.driven.version, state: now.version.state, exceedsCeilings: now.version.exceedsCeilings };
    } catch (error) {
      if (error instanceof AppError && (error.status === 403 || error.status === 404) && this.driving === s) {
        s.command("estop");
        void s.end("profile-not-driveable");
        this.sendError(error.code, `This version may no longer be driven: ${error.message}`);
      }
    }
  }

  /** recheck(), its failure logged rather than thrown (for callers that do not wait for it). */
  recheckLogged(): Promise<void> {
    return this.recheck().catch((error: unknown) => console.error("[jogwright] jog re-check failed:", (error as Error).message));
  }

  close(code: number, reason: string): void {
    this.ws.close(code, reason);
  }

  private onClose(): void {
    if (this.isClosed) return;
    this.isClosed = true;
    void this.driving?.end("disconnected");
    this.stopWatching();
    this.registry.delete(this);
  }
}

/** The close reason for an upgrade without a valid session cookie (closed at once with 4401). */
export const NOT_SIGNED_IN_CLOSE_REASON = "not signed in";

/** The close reason for an upgrade refused while the database is unavailable (at most 123 bytes, RFC 6455 §5.5). */
export const DATABASE_UNAVAILABLE_CLOSE_REASON = "Database unavailable: the sign-in cannot be checked; try again shortly.";

function refuse(socket: Duplex, status: 401 | 403 | 404 | 500, code: string, message: string): void {
  const body = JSON.stringify({ error: { code, message } });
  const text = status === 401 ? "Unauthorized" : status === 403 ? "Forbidden" : status === 404 ? "Not Found" : "Internal Server Error";
  socket.end(
    `HTTP/1.1 ${status} ${text}\r\nConnection: close\r\nContent-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`,
  );
}

export interface JogSockets {
  hub: JogHub;
  /** Runs every connection's periodic re-check now (the timer does it every REVALIDATE_INTERVAL_MS). */
  recheck(): Promise<void>;
  close(): Promise<void>;
}

/** Serves /ws/jog on the given server. Returns a handle whose close() ends every session and flushes recordings. */
export function attachJogSockets(server: Server, ctx: AppContext): JogSockets {
  const hub = jogHubFor(ctx);
  const connections = new Set<JogConnection>();
  const accounts = accountChangesFor(ctx);
  const wss = new WebSocketServer({ noServer: true, maxPayload: HARD_MAX_PAYLOAD_BYTES, perMessageDeflate: false });
  // Each connection is re-checked once every REVALIDATE_INTERVAL_MS, at its own turn (recheck-rota.ts).
  const rota = new RecheckRota<JogConnection>(RECHECK_TURNS);

  const onUpgrade = (req: IncomingMessage, socket: Duplex, head: Buffer) => {
    const path = (req.url ?? "").split("?")[0];
    if (path !== JOG_SOCKET_PATH) {
      // Leave other upgrade paths to other handlers; nobody else listens today.
      if (server.listenerCount("upgrade") <= 1) refuse(socket, 404, "not_found", "No WebSocket endpoint here.");
      return;
    }
    socket.on("error", () => socket.destroy());
    const origin = req.headers.origin;
    if (!isAllowedOrigin(ctx, origin)) {
      return refuse(socket, 403, "bad_origin", origin ? `Connections from ${origin} are not allowed.` : "A WebSocket connection must carry an Origin header.");
    }
    const serialBeforeRead = accounts.serial;
    resolveAccount(ctx, req.headers.cookie).then(
      (resolved) => {
        if (!resolved.session || !resolved.account) {
          // Completed and closed at once with 4401 rather than refused with HTTP 401: a browser never sees a
          // refused upgrade's status (only a 1006 close, which it would retry for ever); this close tells
          // it the person must sign in. Nothing is read or sent on it.
          wss.handleUpgrade(req, socket, head, (ws) => ws.close(JOG_CLOSE_CODES.signedOut, NOT_SIGNED_IN_CLOSE_REASON));
          return;
        }
        const user = resolved.account;
        const sessionId = readSessionId(req.headers.cookie)!;
        wss.handleUpgrade(req, socket, head, (ws) => {
          rota.add(new JogConnection(hub, ws, user, sessionId, accounts, serialBeforeRead, connections));
        });
      },
      (error: unknown) => {
        if (isDatabaseUnavailable(error)) {
          // A browser's WebSocket never shows the page an HTTP status of a refused upgrade (only a 1006
          // close), so the upgrade is completed and closed at once with a code and a sentence it can show.
          wss.handleUpgrade(req, socket, head, (ws) => ws.close(JOG_CLOSE_CODES.databaseUnavailable, DATABASE_UNAVAILABLE_CLOSE_REASON));
          return;
        }
        console.error("[jogwright] jog upgrade failed:", error);
        refuse(socket, 500, "internal", "The connection could not be set up; it has been logged.");
      },
    );
  };
  server.on("upgrade", onUpgrade);

  // Account changes and sign-outs made through the API reach the connections at once.
  const unsubscribe = accounts.subscribe((change) => {
    for (const c of [...connections]) c.onAccountChange(change);
  });

  const recheck = () => Promise.all([...connections].map((c) => c.recheckLogged())).then(() => undefined);
  const revalidateTimer = setInterval(() => {
    for (const c of rota.next()) {
      if (connections.has(c)) void c.recheckLogged();
      else rota.delete(c); // closed since
    }
  }, REVALIDATE_INTERVAL_MS / RECHECK_TURNS);
  revalidateTimer.unref();

  return {
    hub,
    recheck,
    async close() {
      unsubscribe();
      clearInterval(revalidateTimer);
      server.off("upgrade", onUpgrade);
      await hub.close();
      for (const c of [...connections]) c.close(1001, "server shutting down");
      wss.close();
    },
  };
}
