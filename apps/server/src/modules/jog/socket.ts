import type { IncomingMessage, Server } from "node:http";
import type { Duplex } from "node:stream";
import { performance } from "node:perf_hooks";
import type { Request } from "express";
import { WebSocketServer, type RawData, type WebSocket } from "ws";
import { hasAnyRole, jogClientMessageSchema, type JogClientMessage, type User } from "@jogwright/shared";
import { isAllowedOrigin, readSessionId, resolveAccount } from "../../auth/middleware.ts";
import type { AppContext } from "../../context.ts";
import { AppError } from "../../errors.ts";
import { loadVersionForDriving } from "../profiles/service.ts";
import { jogHubFor, type EndReason, type FrameSink, type JogHub, type LiveJogSession } from "./hub.ts";

/**
 * The live-jogging WebSocket endpoint, /ws/jog on the app's own http.Server (protocol in
 * packages/shared/src/jog-protocol.ts and DEVELOPERS.md "Live jogging"). The upgrade is refused with 403
 * from a foreign Origin and 401 without a valid session cookie, before any WebSocket exists. Each text
 * frame is size-checked, rate-limited, JSON-parsed and validated with the shared zod schema; every bad
 * one gets {type:"error"} and changes nothing.
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
/** How often live sessions re-check that the driver may still drive the version and is still signed in. */
export const REVALIDATE_INTERVAL_MS = 10_000;

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

class JogConnection implements FrameSink {
  driving: LiveJogSession | null = null;
  watching: LiveJogSession | null = null;
  private readonly inputBucket = new TokenBucket(INPUT_RATE_HZ, INPUT_BURST);
  private readonly messageBucket = new TokenBucket(MESSAGE_RATE_HZ, MESSAGE_BURST);
  private strikes = 0;
  private strikesAt = performance.now();
  private lastRateErrorAt = -Infinity;
  private isStarting = false;
  private isClosed = false;

  constructor(
    private readonly hub: JogHub,
    private readonly ws: WebSocket,
    readonly user: User,
    readonly sessionId: string,
    private readonly registry: Set<JogConnection>,
  ) {
    registry.add(this);
    ws.on("message", (data, isBinary) => this.onMessage(data, isBinary));
    ws.on("close", () => this.onClose());
    ws.on("error", () => this.onClose());
    this.sendJson({ type: "welcome", userId: user.id, roles: user.roles });
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
    if (this.watching === session) this.watching = null;
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

  private handle(msg: JogClientMessage, now: number): void {
    switch (msg.type) {
      case "ping":
        return this.sendJson({ type: "pong", id: msg.id, clientTimeMs: msg.clientTimeMs, serverTimeMs: Date.now() });
      case "start":
        void this.start(msg.versionId);
        return;
      case "watch":
        return this.watch(msg.sessionId);
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
      case "estop": {
        // Latches this person's station at this arm, not just this session (hub.ts, station-latches.ts).
        const s = this.requireDriving();
        if (s) this.hub.emergencyStop(s);
        return;
      }
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

  private requireDriving(): LiveJogSession | null {
    if (this.driving) return this.driving;
    if (this.watching) this.sendError("read_only", "You are watching this session: it cannot be driven from here.");
    else this.sendError("no_session", "Start a session first: {type:\"start\", versionId}.");
    return null;
  }

  private async start(versionId: number): Promise<void> {
    if (this.isStarting) return this.sendError("busy", "A session is already starting.");
    this.isStarting = true;
    try {
      const driven = await loadVersionForDriving(this.hub.ctx.db, this.user, versionId);
      if (this.isClosed) return;
      const previous = this.driving;
      this.stopWatching();
      // Switching on the same arm keeps the arm where it is (from rest); another arm starts at its ready pose.
      const finalQ = previous ? await previous.end("switched") : null;
      const q0 = previous && finalQ && previous.driven.arm.id === driven.arm.id ? finalQ : undefined;
      if (this.isClosed) return;
      const session = await this.hub.start(this, driven, q0);
      if (this.isClosed) {
        void session.end("disconnected");
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
      this.isStarting = false;
    }
  }

  private watch(sessionId: string): void {
    if (!hasAnyRole(this.user.roles, ["engineer", "safety_officer"])) {
      return this.sendError("forbidden", "Watching live sessions needs the engineer or safety officer role.");
    }
    const session = this.hub.sessions.get(sessionId);
    if (!session) return this.sendError("not_found", "No live session with that id (it may have ended).");
    if (this.driving) void this.driving.end("stopped");
    this.stopWatching();
    session.watchers.add(this);
    this.watching = session;
    this.sendJson({ type: "session", session: session.info(true) });
  }

  private stopWatching(): void {
    if (this.watching) this.watching.watchers.delete(this);
    this.watching = null;
  }

  /** Periodic re-check off the tick path: still signed in, version still driveable. */
  async revalidate(): Promise<void> {
    if (this.isClosed) return;
    const ctx = this.hub.ctx;
    const { session } = await ctx.lucia.validateSession(this.sessionId);
    if (!session) {
      void this.driving?.end("signed-out");
      this.sendError("unauthenticated", "Your session has ended: sign in again.");
      this.ws.close(1008, "signed out");
      return;
    }
    const s = this.driving;
    if (!s) return;
    try {
      // Still driveable; an engineer's drive of a version flagged since the start becomes a test drive.
      const now = await loadVersionForDriving(ctx.db, this.user, s.driven.version.id);
      s.driven.kind = now.kind;
    } catch (error) {
      if (error instanceof AppError && (error.status === 403 || error.status === 404) && this.driving === s) {
        s.command("estop");
        void s.end("profile-not-driveable");
        this.sendError(error.code, `This version may no longer be driven: ${error.message}`);
      }
    }
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

function refuse(socket: Duplex, status: 401 | 403 | 404, code: string, message: string): void {
  const body = JSON.stringify({ error: { code, message } });
  const text = status === 401 ? "Unauthorized" : status === 403 ? "Forbidden" : "Not Found";
  socket.end(
    `HTTP/1.1 ${status} ${text}\r\nConnection: close\r\nContent-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`,
  );
}

/** Just enough of an Express request for isAllowedOrigin/ownOrigin (protocol and Host as Express reads them). */
function requestShim(ctx: AppContext, req: IncomingMessage): Request {
  const forwarded = String(req.headers["x-forwarded-proto"] ?? "").split(",")[0]!.trim();
  const encrypted = (req.socket as { encrypted?: boolean }).encrypted === true;
  const protocol = ctx.config.trustProxy && forwarded ? forwarded : encrypted ? "https" : "http";
  return { protocol, get: (name: string) => req.headers[name.toLowerCase()] as string | undefined } as unknown as Request;
}

export interface JogSockets {
  hub: JogHub;
  close(): Promise<void>;
}

/** Serves /ws/jog on the given server. Returns a handle whose close() ends every session and flushes recordings. */
export function attachJogSockets(server: Server, ctx: AppContext): JogSockets {
  const hub = jogHubFor(ctx);
  const connections = new Set<JogConnection>();
  const wss = new WebSocketServer({ noServer: true, maxPayload: HARD_MAX_PAYLOAD_BYTES, perMessageDeflate: false });

  const onUpgrade = (req: IncomingMessage, socket: Duplex, head: Buffer) => {
    const path = (req.url ?? "").split("?")[0];
    if (path !== JOG_SOCKET_PATH) {
      // Leave other upgrade paths to other handlers; nobody else listens today.
      if (server.listenerCount("upgrade") <= 1) refuse(socket, 404, "not_found", "No WebSocket endpoint here.");
      return;
    }
    socket.on("error", () => socket.destroy());
    const origin = req.headers.origin;
    if (!isAllowedOrigin(ctx, requestShim(ctx, req), origin)) {
      return refuse(socket, 403, "bad_origin", origin ? `Connections from ${origin} are not allowed.` : "A WebSocket connection must carry an Origin header.");
    }
    resolveAccount(ctx, req.headers.cookie).then(
      (resolved) => {
        if (!resolved.session || !resolved.account) return refuse(socket, 401, "unauthenticated", "Sign in first.");
        const user = resolved.account;
        const sessionId = readSessionId(req.headers.cookie)!;
        wss.handleUpgrade(req, socket, head, (ws) => {
          new JogConnection(hub, ws, user, sessionId, connections);
        });
      },
      (error: unknown) => {
        console.error("[jogwright] jog upgrade failed:", error);
        socket.destroy();
      },
    );
  };
  server.on("upgrade", onUpgrade);

  const revalidateTimer = setInterval(() => {
    for (const c of connections) {
      c.revalidate().catch((error: unknown) => console.error("[jogwright] jog revalidation failed:", (error as Error).message));
    }
  }, REVALIDATE_INTERVAL_MS);
  revalidateTimer.unref();

  return {
    hub,
    async close() {
      clearInterval(revalidateTimer);
      server.off("upgrade", onUpgrade);
      await hub.close();
      for (const c of [...connections]) c.close(1001, "server shutting down");
      wss.close();
    },
  };
}
