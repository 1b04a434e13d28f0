import { useSyncExternalStore } from "react";
import {
  ERROR_CODES,
  JOG_CLOSE_CODES,
  JOG_ERROR_CODES,
  humanizeCode,
  jogServerMessageSchema,
  label,
  type JogClientMessage,
  type JogInput,
  type JogSessionInfo,
  type JogState,
  type RecordedFrame,
} from "@jogwright/shared";
import { FrameSignal } from "./frame-signal.ts";
import { FrameTrace, type FrameSource } from "./frame-trace.ts";
import { reportDatabaseUnavailable } from "./database-status.ts";
import { SnapshotStore } from "./snapshot-store.ts";

/**
 * The one client of the live-jogging socket (/ws/jog, same origin; the browser sends the session cookie
 * and Origin itself). It parses and validates every server frame with the shared schema and feeds a
 * small external store; components read the store (useJogSnapshot) and call the command methods, never
 * the socket. The newest state frame and the chart trace are read without React renders by the 3D view
 * and the charts (FrameSource); the React snapshot follows state frames at most ~15 times a second,
 * and at once when a stop, the enabling state or the guard changes.
 */

export type ConnectionState = "idle" | "connecting" | "open" | "reconnecting" | "closed";

export interface JogError {
  code: string;
  message: string;
  /** performance.now() when it arrived, so the same message twice still shows as new. */
  atMs: number;
}

export interface JogEnded {
  sessionId: string;
  /** A code (e.g. "stopped", "account-deactivated"). */
  reason: string;
  /** The server's sentence for the person, when it sent one. */
  message?: string;
  recordingId: number | null;
}

/** What to show for an ended session: the server's sentence, else the words for its reason (never the code). */
export function describeEnded(ended: JogEnded): string {
  return ended.message ?? `${label("jogEndReason", ended.reason)}.`;
}

/** The title for an error frame's code: the socket's own codes, then the API's, else the code in words. */
export function jogErrorTitle(code: string): string {
  if ((JOG_ERROR_CODES as readonly string[]).includes(code)) return label("jogError", code);
  if ((ERROR_CODES as readonly string[]).includes(code)) return label("errorCode", code);
  return humanizeCode(code);
}

/**
 * What a close means for the person: whether the client reconnects, the end of a session that was live
 * (its reason code and sentence), and for a final close the error the page shows (`signed_out` sends the
 * person to sign in; `account_deactivated` stays and says why).
 */
export interface CloseOutcome {
  isFinal: boolean;
  endReason: string;
  endMessage: string;
  error: { code: string; message: string } | null;
}

/**
 * The closes after which reconnecting cannot help (the cookie session is gone: signed out, expired,
 * password changed, never signed in; or the account deactivated): the client stays closed and says why.
 */
const FINAL_CLOSES = new Map<number, CloseOutcome>([
  [
    JOG_CLOSE_CODES.accountDeactivated,
    {
      isFinal: true,
      endReason: "account-deactivated",
      endMessage: "An administrator deactivated your account: the arm made a controlled stop and the session ended.",
      error: { code: "account_deactivated", message: "Your account has been deactivated, so live jogging is closed. Ask an administrator if this is a mistake." },
    },
  ],
  [
    JOG_CLOSE_CODES.signedOut,
    {
      isFinal: true,
      endReason: "signed-out",
      endMessage: "You were signed out, so the arm made a controlled stop and the session ended.",
      error: { code: "signed_out", message: "You are signed out (here or elsewhere, or the sign-in expired or the password was changed). Sign in again to drive." },
    },
  ],
]);

/** Any other close: the connection was lost, and the client reconnects. */
const CONNECTION_LOST: CloseOutcome = {
  isFinal: false,
  endReason: "disconnected",
  endMessage: "The connection to the server was lost, so the session ended. Start it again once connected.",
  error: null,
};

export const isFinalClose = (code: number): boolean => FINAL_CLOSES.has(code);

export const closeOutcome = (code: number): CloseOutcome => FINAL_CLOSES.get(code) ?? CONNECTION_LOST;

/** Safety officers may stop the session they watch (it latches the driver's station); nobody else from a watch. */
export function mayStopWatchedSession(roles: readonly string[], session: Pick<JogSessionInfo, "isWatching"> | null): boolean {
  return session !== null && session.isWatching && roles.includes("safety_officer");
}

export interface JogSnapshot {
  connection: ConnectionState;
  /** Reconnect attempts since the last open socket. */
  reconnectAttempt: number;
  roles: readonly string[];
  session: JogSessionInfo | null;
  /** The newest state, refreshed at most ~15 Hz (at once on stop/enable/guard changes). */
  state: JogState | null;
  /** State frames received in this session. */
  frameCount: number;
  /** Round trip of the last ping [ms]. */
  roundTripMs: number | null;
  /** From sampling an input to the state frame that applied it [ms]. */
  inputToStateMs: number | null;
  error: JogError | null;
  ended: JogEnded | null;
}

const INITIAL: JogSnapshot = {
  connection: "idle",
  reconnectAttempt: 0,
  roles: [],
  session: null,
  state: null,
  frameCount: 0,
  roundTripMs: null,
  inputToStateMs: null,
  error: null,
  ended: null,
};

const PING_INTERVAL_MS = 1000;
const SNAPSHOT_INTERVAL_MS = 66;
const BACKOFF_MS = [500, 1000, 2000, 4000, 8000];

function socketUrl(): string {
  const scheme = window.location.protocol === "https:" ? "wss" : "ws";
  return `${scheme}://${window.location.host}/ws/jog`;
}

export class JogSocketClient extends SnapshotStore<JogSnapshot> implements FrameSource {
  readonly trace = new FrameTrace();
  private socket: WebSocket | null = null;
  private wantOpen = false;
  private reconnectTimer: ReturnType<typeof setTimeout> | null = null;
  private pingTimer: ReturnType<typeof setInterval> | null = null;
  private pingId = 0;
  private inputSeq = 0;
  private latest: JogState | null = null;
  private serial = 0;
  private readonly frameSignal = new FrameSignal();
  readonly onFrame = this.frameSignal.onFrame;
  private framesInSession = 0;
  private inputToStateMs: number | null = null;
  private lastSnapshotMs = 0;
  private snapshotTimer: ReturnType<typeof setTimeout> | null = null;
  /** Messages asked for before the socket opened (start/watch), sent on open. */
  private pending: JogClientMessage[] = [];

  constructor() {
    super(INITIAL);
  }

  // ---- FrameSource -----------------------------------------------------------------------------------

  latestFrame(): RecordedFrame | null {
    return this.latest;
  }

  frameSerial(): number {
    return this.serial;
  }

  /** The newest state frame, unthrottled (for the input loop and tests). */
  latestState(): JogState | null {
    return this.latest;
  }

  // ---- connection -------------------------------------------------------------------------------------

  /** Opens the socket (idempotent) and keeps it open, reconnecting with backoff, until disconnect(). */
  connect(): void {
    this.wantOpen = true;
    if (this.socket || this.reconnectTimer) return;
    this.open();
  }

  disconnect(): void {
    this.wantOpen = false;
    this.pending = [];
    if (this.reconnectTimer) clearTimeout(this.reconnectTimer);
    this.reconnectTimer = null;
    this.stopPing();
    const socket = this.socket;
    this.socket = null;
    socket?.close(1000, "page closed");
    this.latest = null;
    this.publish({ ...INITIAL, connection: "closed" });
  }

  private open(): void {
    const attempt = this.snapshot.reconnectAttempt;
    this.publish({ connection: attempt > 0 ? "reconnecting" : "connecting" });
    let socket: WebSocket;
    try {
      socket = new WebSocket(socketUrl());
    } catch {
      this.scheduleReconnect();
      return;
    }
    this.socket = socket;
    socket.onopen = () => {
      if (this.socket !== socket) return;
      this.publish({ connection: "open", reconnectAttempt: 0, error: null });
      this.startPing();
      const queued = this.pending;
      this.pending = [];
      for (const message of queued) this.send(message);
    };
    socket.onmessage = (event) => {
      if (this.socket === socket) this.receive(event.data);
    };
    socket.onclose = (event) => {
      if (this.socket !== socket) return;
      this.socket = null;
      this.stopPing();
      const hadSession = this.snapshot.session;
      // Signed out, never signed in, or deactivated (4401/4403): the server sent `ended` (with its
      // sentence) before closing, and a reconnect would only be refused, so the client stays closed and says why.
      const outcome = closeOutcome(event.code);
      if (outcome.isFinal) this.wantOpen = false;
      // The upgrade could not check the sign-in: the shell's banner says why; the reconnect backoff retries.
      if (event.code === JOG_CLOSE_CODES.databaseUnavailable) reportDatabaseUnavailable();
      // No session outlives its socket (the server ends it on close): nothing may keep showing its motion.
      this.clearLiveState();
      this.publish({
        connection: this.wantOpen ? "reconnecting" : "closed",
        session: null,
        state: null,
        ended: hadSession
          ? { sessionId: hadSession.sessionId, reason: outcome.endReason, message: outcome.endMessage, recordingId: null }
          : this.snapshot.ended,
        ...(outcome.error ? { error: { ...outcome.error, atMs: performance.now() } } : {}),
      });
      if (this.wantOpen) this.scheduleReconnect();
    };
  }

  private scheduleReconnect(): void {
    const attempt = this.snapshot.reconnectAttempt;
    const delay = BACKOFF_MS[Math.min(attempt, BACKOFF_MS.length - 1)]!;
    this.publish({ connection: "reconnecting", reconnectAttempt: attempt + 1 });
    this.reconnectTimer = setTimeout(() => {
      this.reconnectTimer = null;
      if (this.wantOpen) this.open();
    }, delay);
  }

  private startPing(): void {
    this.stopPing();
    const ping = () => this.send({ type: "ping", id: ++this.pingId, clientTimeMs: performance.now() });
    ping();
    this.pingTimer = setInterval(ping, PING_INTERVAL_MS);
  }

  private stopPing(): void {
    if (this.pingTimer) clearInterval(this.pingTimer);
    this.pingTimer = null;
  }

  private send(message: JogClientMessage): boolean {
    const socket = this.socket;
    if (!socket || socket.readyState !== WebSocket.OPEN) return false;
    socket.send(JSON.stringify(message));
    return true;
  }

  private sendOrQueue(message: JogClientMessage): void {
    if (!this.send(message)) {
      this.pending = [message];
      this.connect();
    }
  }

  // ---- commands ---------------------------------------------------------------------------------------

  /** Start driving (or switch to) a profile version. */
  start(versionId: number): void {
    this.publish({ ended: null, error: null });
    this.sendOrQueue({ type: "start", versionId });
  }

  /** Watch somebody else's live session, read-only. */
  watch(sessionId: string): void {
    this.publish({ ended: null, error: null });
    this.sendOrQueue({ type: "watch", sessionId });
  }

  /** One input frame; the seq is assigned here. Returns false when the socket is not open. */
  sendInput(input: Omit<JogInput, "type" | "seq">): boolean {
    return this.send({ type: "input", seq: ++this.inputSeq, ...input });
  }

  command(type: "estop" | "reset-estop" | "acknowledge" | "ready-pose" | "stop" | "device-changed"): boolean {
    return this.send({ type });
  }

  /**
   * A safety officer's STOP on the session they watch: the server latches the driver's station (audited
   * with the officer's name); only the driver's deliberate reset clears it.
   */
  stopWatchedSession(): boolean {
    return this.send({ type: "estop" });
  }

  // ---- receiving --------------------------------------------------------------------------------------

  private receive(raw: unknown): void {
    if (typeof raw !== "string") return;
    let json: unknown;
    try {
      json = JSON.parse(raw);
    } catch {
      this.publish({ error: { code: "bad_frame", message: "The server sent a frame that is not JSON.", atMs: performance.now() } });
      return;
    }
    const parsed = jogServerMessageSchema.safeParse(json);
    if (!parsed.success) {
      this.publish({
        error: { code: "bad_frame", message: "The server sent a frame the console cannot read.", atMs: performance.now() },
      });
      return;
    }
    const message = parsed.data;
    switch (message.type) {
      case "welcome":
        this.publish({ roles: message.roles });
        break;
      case "session":
        this.latest = null;
        this.serial++;
        this.frameSignal.notify();
        this.framesInSession = 0;
        this.inputToStateMs = null;
        this.publish({ session: message.session, state: null, frameCount: 0, ended: null, error: null });
        break;
      case "state":
        this.receiveState(message);
        break;
      case "pong":
        this.publish({ roundTripMs: performance.now() - message.clientTimeMs });
        break;
      case "ended":
        // The session is over: its last frame stays only in the 3D view (where the arm stands); the panels
        // and the motion line get no state, so nothing reads "Moving" or "latched" for a dead session.
        this.clearLiveState();
        this.publish({
          ended: { sessionId: message.sessionId, reason: message.reason, message: message.message, recordingId: message.recordingId },
          session: null,
          state: null,
        });
        break;
      case "error":
        this.publish({ error: { code: message.code, message: message.message, atMs: performance.now() } });
        break;
    }
  }

  private receiveState(state: JogState): void {
    // Only the live session's frames count (none arrive before its `session` or after its `ended`).
    if (this.snapshot.session?.sessionId !== state.sessionId) return;
    const previous = this.latest;
    if (previous === null || this.trace.joints !== state.q.length) {
      this.trace.reset(state.q.map(() => "revolute"));
    }
    const isDriving = this.snapshot.session !== null && !this.snapshot.session.isWatching;
    if (isDriving && state.lastInputSeq > 0 && state.lastInputSeq !== previous?.lastInputSeq) {
      // A new input of ours applied: from sampling it to seeing its effect, on this client's clock (a
      // watcher sees the driver's clock in these fields, so it has no such latency).
      this.inputToStateMs = performance.now() - state.lastInputClientTimeMs;
    }
    this.latest = state;
    this.serial++;
    this.framesInSession++;
    this.trace.push(state);
    this.frameSignal.notify();
    const isUrgent =
      previous === null ||
      previous.estopLatched !== state.estopLatched ||
      previous.enabled !== state.enabled ||
      previous.stopReason !== state.stopReason ||
      previous.guardState !== state.guardState;
    const now = performance.now();
    if (isUrgent || now - this.lastSnapshotMs >= SNAPSHOT_INTERVAL_MS) {
      this.publishState();
    } else if (!this.snapshotTimer) {
      // Make sure the last frame of a burst reaches the panels too.
      this.snapshotTimer = setTimeout(() => this.publishState(), SNAPSHOT_INTERVAL_MS);
    }
  }

  /** Drops the throttled snapshot's pending refresh, so no state of an ended session is published later. */
  private clearLiveState(): void {
    if (this.snapshotTimer) clearTimeout(this.snapshotTimer);
    this.snapshotTimer = null;
  }

  private publishState(): void {
    if (this.snapshotTimer) clearTimeout(this.snapshotTimer);
    this.snapshotTimer = null;
    const state = this.latest;
    if (!state) return;
    this.lastSnapshotMs = performance.now();
    this.publish({ state, frameCount: this.framesInSession, inputToStateMs: this.inputToStateMs });
  }

  /** Tells the trace which joints slide (mm/s instead of deg/s); call once the arm is known. */
  setJointTypes(types: readonly ("revolute" | "prismatic")[]): void {
    this.trace.reset(types);
  }
}

/** The console's one jog socket client. */
export const jogClient = new JogSocketClient();

export function useJogSnapshot(): JogSnapshot {
  return useSyncExternalStore(jogClient.subscribe, jogClient.getSnapshot);
}
