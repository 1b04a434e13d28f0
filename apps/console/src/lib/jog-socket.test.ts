import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { JOG_CLOSE_CODES, type JogSessionInfo } from "@jogwright/shared";
import { describeEnded, isFinalClose, jogErrorTitle, JogSocketClient, mayStopWatchedSession } from "./jog-socket.ts";

describe("the jog socket client's decisions", () => {
  it("shows a STOP on a watched session to safety officers only, and never while driving or with nothing watched", () => {
    const watching = { isWatching: true };
    expect(mayStopWatchedSession(["safety_officer"], watching)).toBe(true);
    expect(mayStopWatchedSession(["engineer", "safety_officer"], watching)).toBe(true);
    expect(mayStopWatchedSession(["engineer"], watching)).toBe(false);
    expect(mayStopWatchedSession(["safety_officer"], { isWatching: false })).toBe(false);
    expect(mayStopWatchedSession(["safety_officer"], null)).toBe(false);
    // Roles come from the server's latest `welcome`, which it sends again when an admin changes them.
    expect(mayStopWatchedSession([], watching)).toBe(false);
  });

  it("does not reconnect after a sign-out or a deactivation, and does after other closes", () => {
    expect(isFinalClose(JOG_CLOSE_CODES.signedOut)).toBe(true);
    expect(isFinalClose(JOG_CLOSE_CODES.accountDeactivated)).toBe(true);
    for (const code of [1000, 1001, 1006, 1008, 1009]) expect(isFinalClose(code)).toBe(false);
  });

  it("says why a session ended in the server's words, or in words for its reason from an older server — never the code", () => {
    expect(describeEnded({ sessionId: "s", reason: "account-deactivated", message: "An administrator deactivated your account.", recordingId: 1 })).toBe(
      "An administrator deactivated your account.",
    );
    expect(describeEnded({ sessionId: "s", reason: "profile-not-driveable", recordingId: null })).toBe("Version no longer driveable.");
    expect(describeEnded({ sessionId: "s", reason: "some-new-reason", recordingId: null })).toBe("Some new reason.");
  });

  it("titles refusals in words: the socket's own codes, the API's, and unknown ones", () => {
    const titles = {
      start_rate_limited: "Too many starts in a short time",
      account_session_limit: "You drive too many sessions",
      no_session: "No session is running",
      forbidden: "Not allowed",
      brand_new_code: "Brand new code",
    };
    for (const [code, title] of Object.entries(titles)) expect(jogErrorTitle(code), code).toBe(title);
  });
});

/** A stand-in for the browser's WebSocket: the test plays the server's side. */
class FakeSocket {
  static readonly OPEN = 1;
  static made: FakeSocket[] = [];
  readyState = 0;
  sent: unknown[] = [];
  onopen: (() => void) | null = null;
  onmessage: ((event: { data: string }) => void) | null = null;
  onclose: ((event: { code: number; reason: string }) => void) | null = null;
  constructor(readonly url: string) {
    FakeSocket.made.push(this);
  }
  send(text: string) {
    this.sent.push(JSON.parse(text));
  }
  close() {
    this.readyState = 3;
  }
  serverOpens() {
    this.readyState = 1;
    this.onopen?.();
  }
  serverSends(message: object) {
    this.onmessage?.({ data: JSON.stringify(message) });
  }
  serverCloses(code: number, reason = "") {
    this.readyState = 3;
    this.onclose?.({ code, reason });
  }
}

const SESSION: JogSessionInfo = {
  sessionId: "s1", versionId: 7, versionNumber: 2, versionState: "approved", isUnapproved: false, profileId: 3,
  profileName: "P", armId: 1, armName: "cell-arm-6", driverId: "u1", driverName: "Olena", tickRateHz: 500,
  frameRateHz: 60, watchdogMs: 200, isWatching: false,
};

/** A state frame of a moving, enabled arm (qdot non-zero), as the server sends it. */
function movingFrame(sessionId = "s1", t = 1) {
  return {
    type: "state", sessionId, t, q: [0, 0, 0, 0, 0.8, 0], qdot: [0.1, 0, 0, 0, 0, 0],
    pose: [1, 0, 0, 0.5, 0, 1, 0, 0, 0, 0, 1, 0.6, 0, 0, 0, 1],
    twistCommanded: [0.1, 0, 0, 0, 0, 0], twistAchieved: [0.1, 0, 0, 0, 0, 0], sigmaMin: 0.1, manipulability: 0.01,
    lambda: 0, scales: { jointRate: 1, tcpLinear: 1, tcpAngular: 1, jointLimit: 1 }, binding: "none", bindingJoint: -1,
    guardState: "clear", enabled: true, estopLatched: true, stopReason: "none", overridePercent: 50, warnings: [],
    lastInputSeq: 0, lastInputClientTimeMs: 0,
  };
}

describe("the jog socket client when the server ends the session or closes", () => {
  beforeEach(() => {
    FakeSocket.made = [];
    vi.useFakeTimers();
    vi.stubGlobal("WebSocket", FakeSocket);
    vi.stubGlobal("window", { location: { protocol: "http:", host: "127.0.0.1:3000" } });
  });
  afterEach(() => {
    vi.useRealTimers();
    vi.unstubAllGlobals();
  });

  function driving(): { client: JogSocketClient; socket: FakeSocket } {
    const client = new JogSocketClient();
    client.connect();
    const socket = FakeSocket.made[0]!;
    socket.serverOpens();
    socket.serverSends({ type: "session", session: SESSION });
    socket.serverSends(movingFrame());
    expect(client.getSnapshot().state?.enabled).toBe(true);
    return { client, socket };
  }

  it("tells its frame listeners of each frame of the live session as it arrives, not of frames it ignores (the 3D view renders on them)", () => {
    const { client, socket } = driving();
    const told: number[] = [];
    const unsubscribe = client.onFrame(() => told.push(client.frameSerial()));
    socket.serverSends(movingFrame("s1", 1.1));
    socket.serverSends(movingFrame("s1", 1.2));
    socket.serverSends(movingFrame("another session", 1.3));
    expect(told).toHaveLength(2);
    expect(told[1]).toBe(told[0]! + 1);
    expect(client.latestFrame()).toMatchObject({ t: 1.2 });
    unsubscribe();
    socket.serverSends(movingFrame("s1", 1.4));
    expect(told).toHaveLength(2);
  });

  it("after a deactivation (4403) shows no state, says why in words and never reconnects", () => {
    const { client, socket } = driving();
    socket.serverSends({
      type: "ended", sessionId: "s1", reason: "account-deactivated", recordingId: 9,
      message: "An administrator deactivated your account: the arm made a controlled stop and the session ended.",
    });
    socket.serverCloses(JOG_CLOSE_CODES.accountDeactivated, "account deactivated");
    const snapshot = client.getSnapshot();
    expect(snapshot.state).toBeNull();
    expect(snapshot.session).toBeNull();
    expect(snapshot.connection).toBe("closed");
    expect(snapshot.error?.code).toBe("account_deactivated");
    expect(describeEnded(snapshot.ended!)).toMatch(/deactivated your account/);
    vi.advanceTimersByTime(60_000);
    expect(FakeSocket.made).toHaveLength(1);
    expect(client.getSnapshot().reconnectAttempt).toBe(0);
  });

  it("after a sign-out (4401), also on an upgrade that was never signed in, stays closed with the signed-out error", () => {
    const { client, socket } = driving();
    socket.serverCloses(JOG_CLOSE_CODES.signedOut, "signed out");
    expect(client.getSnapshot()).toMatchObject({ connection: "closed", state: null, session: null, error: { code: "signed_out" } });
    // The session was live when the socket closed without an `ended`: it ended, in words.
    expect(client.getSnapshot().ended).toMatchObject({ sessionId: "s1", reason: "signed-out" });
    vi.advanceTimersByTime(60_000);
    expect(FakeSocket.made).toHaveLength(1);

    const fresh = new JogSocketClient();
    fresh.connect();
    FakeSocket.made[1]!.serverOpens();
    FakeSocket.made[1]!.serverCloses(JOG_CLOSE_CODES.signedOut, "not signed in");
    vi.advanceTimersByTime(60_000);
    expect(FakeSocket.made).toHaveLength(2);
    expect(fresh.getSnapshot()).toMatchObject({ connection: "closed", error: { code: "signed_out" } });
  });

  it("after a lost connection (1006) drops the dead session's state and reconnects with backoff", () => {
    const { client, socket } = driving();
    socket.serverCloses(1006);
    expect(client.getSnapshot()).toMatchObject({ connection: "reconnecting", state: null, session: null, error: null });
    expect(client.getSnapshot().ended).toMatchObject({ reason: "disconnected" });
    vi.advanceTimersByTime(600);
    expect(FakeSocket.made).toHaveLength(2);
  });

  it("an `ended` frame clears the state (no 'moving' or 'latched' for a dead session), and later frames of it are ignored", () => {
    const { client, socket } = driving();
    socket.serverSends({ type: "ended", sessionId: "s1", reason: "profile-not-driveable", recordingId: 4 });
    expect(client.getSnapshot().state).toBeNull();
    socket.serverSends(movingFrame("s1", 2));
    vi.advanceTimersByTime(500);
    expect(client.getSnapshot().state).toBeNull();
    expect(client.getSnapshot().connection).toBe("open");
  });
});
