import { performance } from "node:perf_hooks";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { defaultProfileParams, JOG_CLOSE_CODES, type Ceilings, type JogServerMessage, type JogState, type ProfileParams, type RecordedFrame, type User } from "@jogwright/shared";
import { findArm } from "../arms/service.ts";
import { createProfile } from "../versions/service.ts";
import { call, DEMO_BY_ROLE, signedInUser, signIn, type Harness } from "../../test/harness.ts";
import { closeJogServer, openJogServer, type Listener } from "../../test/jog-fixture.ts";
import { approvedProfile, compliantParams, freshTeam, sixAxisArm } from "../../test/profiles-fixture.ts";
import { JogTestClient, sleep, upgradeOutcome } from "./jog-test-client.ts";

/**
 * Authority on an open jog socket is re-checked, not cached (issue 11, item 2 and item 10's sign-out and
 * idle-expiry points): role changes, deactivation, password changes and sign-out made through the API
 * reach the open sockets of that account at once; the periodic re-check never extends the cookie session.
 * Real `ws` clients against the real server and MariaDB; every test has its own people.
 */
let h: Harness;
let net: Listener;
let admin: string;
let officerCookie: string;
let operatorId: string;
let armId: number;
let params: ProfileParams;

// The drive page streams inputs at up to 120 Hz (jog-protocol.ts); 100 Hz here.
const INPUT_PERIOD_MS = 10;
// Loopback, timer granularity and a busy 2-core test machine: slack on top of each derived bound
// (common practice, no source; as in jog.test.ts).
const SLACK_MS = 25;
const FRAME_PERIOD_MS = 1000 / 60;
/** Commanded: axis 1.0 × 250 mm/s cap × 40 % override = 0.1 m/s (profile params below, derived). */
const SPEED_MPS = 0.1;
/** A controlled stop from 0.1 m/s at the profile's 1 m/s² TCP deceleration: T = v/a = 100 ms (derived). */
const RAMP_MS = 100;

/** A draft by `engineer` on the six-axis arm with the jog.test parameters (no deadband, linear curve). */
async function draft(engineer: User, forOperatorId = operatorId): Promise<number> {
  const p = await createProfile(h.ctx, engineer, {
    name: `authority ${engineer.username} ${Math.random().toString(36).slice(2, 7)}`, operatorId: forOperatorId, armId, params, note: "",
  });
  return p.latestVersion.id;
}

async function connect(cookie: string): Promise<JogTestClient> {
  const c = await JogTestClient.connect(net.wsUrl, { Cookie: cookie, Origin: net.baseUrl });
  await (c.messages.some((m) => m.msg.type === "welcome") ? Promise.resolve() : c.next((m) => m.type === "welcome"));
  return c;
}

async function startDriving(cookie: string, versionId: number): Promise<{ c: JogTestClient; sessionId: string }> {
  const c = await connect(cookie);
  c.send({ type: "start", versionId });
  const m = await c.next((x) => x.type === "session" || x.type === "error");
  if (m.type !== "session") throw new Error(`start refused: ${JSON.stringify(m)}`);
  await c.nextState();
  return { c, sessionId: m.session.sessionId };
}

/** Released, then held with +z deflected (a fresh press), streamed; resolves once moving at speed. */
/** An engineer driving a draft of their own, and a fresh safety officer watching that session. */
async function watchedDraftSession() {
  const driver = await signedInUser(h, ["engineer"]);
  const { c: d, sessionId } = await startDriving(driver.cookie, await draft(driver.user));
  const officer = await signedInUser(h, ["safety_officer"]);
  const w = await connect(officer.cookie);
  w.send({ type: "watch", sessionId });
  await w.next((m) => m.type === "session");
  return { driver, d, sessionId, officer, w };
}

async function moveAlongZ(c: JogTestClient): Promise<void> {
  c.input = { ...c.input, enabling: false, axes: [0, 0, 0, 0, 0, 0] };
  c.sendInput();
  await sleep(20);
  c.input = { ...c.input, enabling: true, axes: [0, 0, 1, 0, 0, 0] };
  c.stream(INPUT_PERIOD_MS);
  // Up to speed after the ramp v/a = 100 ms (derived).
  await c.nextState((s) => s.enabled && Math.abs(s.twistAchieved[2]! - SPEED_MPS) < 1e-6, 3000);
}

/** Resolves when the socket closes: its code and reason, when, and how many messages had arrived before. */
function closed(c: JogTestClient): Promise<{ code: number; reason: string; at: number; messagesBefore: number }> {
  return new Promise((resolve) => {
    c.ws.once("close", (code, reason) => resolve({ code, reason: reason.toString(), at: performance.now(), messagesBefore: c.messages.length }));
  });
}

/**
 * The first message from index `from` on matching pred, already here or still to come (a change made
 * through the API reaches the socket before the API's answer reaches the test).
 */
function after<T extends JogServerMessage>(c: JogTestClient, from: number, pred: (m: JogServerMessage) => m is T, timeoutMs?: number): Promise<T>;
function after(c: JogTestClient, from: number, pred: (m: JogServerMessage) => boolean, timeoutMs?: number): Promise<JogServerMessage>;
function after(c: JogTestClient, from: number, pred: (m: JogServerMessage) => boolean, timeoutMs = 3000): Promise<JogServerMessage> {
  const seen = c.messages.slice(from).find((m) => pred(m.msg));
  return seen ? Promise.resolve(seen.msg) : c.next(pred, timeoutMs);
}

const isEnded = (m: JogServerMessage): m is Extract<JogServerMessage, { type: "ended" }> => m.type === "ended";
const speed = (s: Pick<JogState, "twistAchieved">) => Math.hypot(s.twistAchieved[0]!, s.twistAchieved[1]!, s.twistAchieved[2]!);

async function patchUser(id: string, body: object): Promise<number> {
  const res = await call(h, "patch", `/api/users/${id}`, admin).send(body);
  expect(res.status).toBe(200);
  return performance.now();
}

beforeAll(async () => {
  ({ h, net, arm6Id: armId, operatorId } = await openJogServer());
  admin = await signIn(h, DEMO_BY_ROLE.admin);
  officerCookie = (await signedInUser(h, ["safety_officer"])).cookie;
  const arm = (await findArm(h.db, armId))!;
  const base = defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));
  // As jog.test.ts: no deadband and a linear curve (axis 1 → the cap), 40 % override, 1 m/s² ramp (default).
  params = { ...base, shaping: { ...base.shaping, deadband: 0, expo: 0 }, speedOverride: { defaultPercent: 40, maxPercent: 100 } };
});

afterAll(() => closeJogServer(net, h));

describe("a role change reaches the open socket at once", () => {
  it("an engineer whose engineer role was removed cannot start a draft on the socket that was already open", async () => {
    const e = await signedInUser(h, ["engineer", "operator"]);
    // A draft of a profile assigned to this very person, so the refusal is about the draft, not whose it is.
    const versionId = await draft(e.user, e.user.id);
    const c = await connect(e.cookie);
    await patchUser(e.user.id, { roles: ["operator"] });
    // The socket is told the new roles (a downgrade, not a close) ...
    expect(await after(c, 0, (m) => m.type === "welcome" && m.roles.join() === "operator")).toMatchObject({ userId: e.user.id });
    // ... and the very next start is decided on them: operators never drive drafts.
    c.send({ type: "start", versionId });
    const answer = await c.next((m) => m.type === "session" || m.type === "error");
    expect(answer).toMatchObject({ type: "error", code: "forbidden", message: expect.stringMatching(/draft/) });
    expect((await net.jog.hub.listLive()).some((s) => s.driverId === e.user.id)).toBe(false);
    await c.close();
  });

  it("an engineer driving a draft who loses the engineer role: a controlled stop, `ended` roles-changed, the socket stays open", async () => {
    const e = await signedInUser(h, ["engineer", "operator"]);
    const { c, sessionId } = await startDriving(e.cookie, await draft(e.user));
    await moveAlongZ(c);
    const patchedAt = await patchUser(e.user.id, { roles: ["operator"] });
    const ended = await after(c, 0, isEnded, 2000);
    const endedAt = c.messages.find((m) => m.msg === ended)!.at;
    c.stopStream();
    expect(ended).toMatchObject({ sessionId, reason: "roles-changed" });
    expect(ended.message).toMatch(/roles were changed/);
    // Ended once the ramp is over: T = 100 ms (derived), plus slack.
    expect(endedAt - patchedAt).toBeLessThanOrEqual(RAMP_MS + FRAME_PERIOD_MS + SLACK_MS);
    // Downgraded, not closed: a ping still answers.
    c.send({ type: "ping", id: 1, clientTimeMs: 0 });
    await c.next((m) => m.type === "pong");
    expect(c.ws.readyState).toBe(c.ws.OPEN);
    await c.close();
  });

  it("a watcher who loses both watching roles stops watching at once, with an `ended` that says why", async () => {
    const { d, sessionId, officer, w } = await watchedDraftSession();
    await patchUser(officer.user.id, { roles: ["operator"] });
    const ended = await after(w, 0, isEnded, 1000);
    expect(ended).toMatchObject({ sessionId, reason: "roles-changed" });
    expect(ended.message).toMatch(/watching live sessions needs/);
    // No more frames of that session reach the former watcher; the driver drives on.
    const from = w.messages.length;
    await sleep(150);
    expect(w.statesSince(from)).toEqual([]);
    expect(net.jog.hub.sessions.has(sessionId)).toBe(true);
    await Promise.all([w.close(), d.close()]);
  });
});

describe("deactivation", () => {
  it("a deactivated driver's arm makes a controlled stop at once; `ended` comes first, then the close (4403); the recording is complete", async () => {
    const e = await signedInUser(h, ["engineer"]);
    const { c, sessionId } = await startDriving(e.cookie, await draft(e.user));
    const closing = closed(c);
    await moveAlongZ(c);
    const patchedAt = await patchUser(e.user.id, { isActive: false });
    const ended = await after(c, 0, isEnded, 2000);
    const endedAt = c.messages.find((m) => m.msg === ended)!.at;
    const close = await closing;
    c.stopStream();

    expect(ended).toMatchObject({ sessionId, reason: "account-deactivated" });
    expect(ended.message).toMatch(/deactivated your account/);
    // The stop starts when the PATCH is made, not at a timer: the session has ended once the ramp is over
    // (T = v/a = 100 ms, derived), where before it drove on for up to the 10 s re-check.
    expect(endedAt - patchedAt).toBeLessThanOrEqual(RAMP_MS + FRAME_PERIOD_MS + SLACK_MS);
    // Every frame shown more than a frame period after the PATCH answered is no longer enabled.
    const shownLater = c.messages.filter((m) => m.at > patchedAt + FRAME_PERIOD_MS + SLACK_MS && m.msg.type === "state").map((m) => m.msg as JogState);
    for (const f of shownLater) expect(f.enabled).toBe(false);
    // `ended` before the close, and the close says why with its own code.
    expect(close.messagesBefore).toBeGreaterThan(c.messages.findIndex((m) => m.msg.type === "ended"));
    expect(close).toMatchObject({ code: JOG_CLOSE_CODES.accountDeactivated, reason: "account deactivated" });

    // The recording: every frame, the ramp down included, then the end; a controlled stop, not a halt.
    await net.jog.hub.writer.drain();
    const res = await call(h, "get", `/api/recordings/${ended.recordingId}`, officerCookie);
    expect(res.status).toBe(200);
    const frames = res.body.frames as RecordedFrame[];
    expect(res.body.recording).toMatchObject({ driverId: e.user.id, endReason: "account-deactivated" });
    expect(res.body.recording.endedAt).not.toBeNull();
    expect(res.body.recording.summary.frames).toBe(frames.length);
    const last = frames.at(-1)!;
    expect(last.stopReason).toBe("session-ended");
    expect(last.qdot.every((v) => v === 0)).toBe(true);
    // The ramp: frames with the speed between full and zero after the last full-speed one (at 60 Hz a
    // 100 ms ramp spans ~6 frames; at least 2 on a busy machine), never rising.
    const lastFull = frames.findLastIndex((f) => f.enabled && Math.abs(speed(f) - SPEED_MPS) < 1e-6);
    const ramp = frames.slice(lastFull + 1, -1);
    expect(ramp.filter((f) => speed(f) > 0).length).toBeGreaterThanOrEqual(2);
    for (let i = 1; i < ramp.length; i++) expect(speed(ramp[i]!)).toBeLessThanOrEqual(speed(ramp[i - 1]!) + 1e-12);
    // Measured as a controlled stop: within T = v/a = 0.1 s plus a tick (2 ms at 500 Hz; derived).
    const stops = res.body.recording.summary.stopsMeasured["enabling-released"];
    expect(stops.count).toBeGreaterThanOrEqual(1);
    expect(stops.maxTimeS).toBeLessThanOrEqual(0.1 + 0.002);
    // And no later start on another socket: the cookie is gone.
    expect(await upgradeOutcome(net.wsUrl, { Cookie: e.cookie, Origin: net.baseUrl })).toMatchObject({ code: JOG_CLOSE_CODES.signedOut, messages: 0 });
  });

  it("a changed password signs the socket out: `ended` signed-out first, then the close (4401)", async () => {
    const e = await signedInUser(h, ["engineer"]);
    const { c, sessionId } = await startDriving(e.cookie, await draft(e.user));
    const closing = closed(c);
    await patchUser(e.user.id, { password: "another-long-password" });
    const ended = await after(c, 0, isEnded, 2000);
    const close = await closing;
    expect(ended).toMatchObject({ sessionId, reason: "signed-out" });
    expect(ended.message).toMatch(/password was changed/);
    expect(close.messagesBefore).toBeGreaterThan(c.messages.findIndex((m) => m.msg.type === "ended"));
    expect(close.code).toBe(JOG_CLOSE_CODES.signedOut);
  });
});

describe("signing out", () => {
  it("the driver's and the watcher's sockets of that sign-in get `ended` with the reason first, then close (4401); other sign-ins stay", async () => {
    const e = await signedInUser(h, ["engineer", "safety_officer"]);
    const { c: driving, sessionId } = await startDriving(e.cookie, await draft(e.user));
    // The same person signed in a second time (another browser), watching: unaffected by the first sign-out.
    const elsewhere = await signIn(h, e.username, e.password);
    const other = await connect(elsewhere);
    other.send({ type: "watch", sessionId });
    await other.next((m) => m.type === "session");
    const officer = await signedInUser(h, ["safety_officer"]);
    const watching = await connect(officer.cookie);
    watching.send({ type: "watch", sessionId });
    await watching.next((m) => m.type === "session");

    const drivingClosed = closed(driving);
    expect((await call(h, "post", "/api/auth/sign-out", e.cookie)).status).toBe(204);
    const ended = await after(driving, 0, isEnded, 2000);
    const close = await drivingClosed;
    expect(ended).toMatchObject({ sessionId, reason: "signed-out" });
    expect(ended.message).toMatch(/signed out/);
    expect(close.messagesBefore).toBeGreaterThan(driving.messages.findIndex((m) => m.msg.type === "ended"));
    expect(close).toMatchObject({ code: JOG_CLOSE_CODES.signedOut, reason: "signed out" });
    // The watchers learn that the session ended, in their own words.
    expect(await after(watching, 0, isEnded, 2000)).toMatchObject({ sessionId, reason: "signed-out", message: expect.stringMatching(/driver was signed out/) });
    // The other sign-in of the same person stays open.
    other.send({ type: "ping", id: 2, clientTimeMs: 0 });
    await other.next((m) => m.type === "pong");
    await Promise.all([other.close(), watching.close()]);
  });

  it("a watcher who signs out gets `ended` for the watched session, then the close; the driver drives on", async () => {
    const { d, sessionId, officer, w } = await watchedDraftSession();
    const closing = closed(w);
    await call(h, "post", "/api/auth/sign-out", officer.cookie).expect(204);
    expect(await after(w, 0, isEnded, 1000)).toMatchObject({ sessionId, reason: "signed-out", message: expect.stringMatching(/no longer watch/) });
    const close = await closing;
    expect(close.messagesBefore).toBeGreaterThan(w.messages.findIndex((m) => m.msg.type === "ended"));
    expect(close.code).toBe(JOG_CLOSE_CODES.signedOut);
    expect(net.jog.hub.sessions.has(sessionId)).toBe(true);
    await d.close();
  });
});

describe("an idle page expires", () => {
  const sessionIdOf = (cookie: string) => decodeURIComponent(cookie.split("=")[1]!);
  const expiresAt = async (id: string) =>
    new Date(
      (await h.db.query<{ expires_at: Date }>("SELECT expires_at FROM sessions WHERE id = ?", { replacements: [id], type: QueryTypes.SELECT }))[0]!.expires_at,
    ).getTime();

  it("the socket's re-check never extends the cookie session; once it expires, the watch ends (`ended`, then close 4401)", async () => {
    const { d, sessionId, officer, w } = await watchedDraftSession();
    // Past half its 12 h life, where lucia's validateSession would move the expiry 12 h ahead (lucia 3).
    const id = sessionIdOf(officer.cookie);
    const inOneHour = new Date(Date.now() + 3600_000);
    await h.db.query("UPDATE sessions SET expires_at = ? WHERE id = ?", { replacements: [inOneHour, id] });
    const before = await expiresAt(id);
    await net.jog.recheck();
    expect(await expiresAt(id)).toBe(before);

    // Expired: the next re-check ends the watch and closes the socket, the reason first.
    await h.db.query("UPDATE sessions SET expires_at = ? WHERE id = ?", { replacements: [new Date(Date.now() - 1000), id] });
    const closing = closed(w);
    await net.jog.recheck();
    const ended = await after(w, 0, isEnded, 1000);
    expect(ended).toMatchObject({ sessionId, reason: "session-expired", message: expect.stringMatching(/expired/) });
    const close = await closing;
    expect(close.messagesBefore).toBeGreaterThan(w.messages.findIndex((m) => m.msg.type === "ended"));
    expect(close).toMatchObject({ code: JOG_CLOSE_CODES.signedOut, reason: "sign-in expired" });
    // The driver, whose sign-in is valid, drives on.
    expect(net.jog.hub.sessions.has(sessionId)).toBe(true);
    await d.close();
  });

  it("the live page's poll (marked as a background request) does not extend the session either; a person's request does", async () => {
    const officer = await signedInUser(h, ["safety_officer"]);
    const id = sessionIdOf(officer.cookie);
    await h.db.query("UPDATE sessions SET expires_at = ? WHERE id = ?", { replacements: [new Date(Date.now() + 3600_000), id] });
    const before = await expiresAt(id);
    const polled = await call(h, "get", "/api/jog/live", officer.cookie).set("X-Jogwright-Background", "1");
    expect(polled.status).toBe(200);
    expect(polled.headers["set-cookie"]).toBeUndefined();
    expect(await expiresAt(id)).toBe(before);
    // The same request without the mark is somebody using the page: lucia extends the session to 12 h.
    await call(h, "get", "/api/jog/live", officer.cookie).expect(200);
    expect(await expiresAt(id)).toBeGreaterThan(Date.now() + 11 * 3600_000);
  });

  it("a change made outside the API (the database directly) is found by the re-check: a deactivated watcher is closed (4403)", async () => {
    const { d, sessionId, officer, w } = await watchedDraftSession();
    await h.db.query("UPDATE users SET is_active = 0 WHERE id = ?", { replacements: [officer.user.id] });
    const closing = closed(w);
    await net.jog.recheck();
    expect(await after(w, 0, isEnded, 1000)).toMatchObject({ sessionId, reason: "account-deactivated" });
    expect((await closing).code).toBe(JOG_CLOSE_CODES.accountDeactivated);
    await d.close();
  });
});

describe("a change to what may be driven reaches the driving socket at once", () => {
  // Before, only the periodic re-check (every 10 s) found these: the operator drove on for up to 10 s.
  const AT_ONCE_MS = 1000;

  async function operatorDrivingApproved() {
    const team = await freshTeam(h);
    const arm = await sixAxisArm(h);
    const { profile, version } = await approvedProfile(h, team, arm);
    const { c, sessionId } = await startDriving(team.operator.cookie, version.id);
    return { team, arm, profile, version, c, sessionId };
  }

  it("a ceiling change that flags the operator's approved version ends the drive (`ended` profile-not-driveable) at once", async () => {
    const { team, c, sessionId } = await operatorDrivingApproved();
    const before = (await call(h, "get", "/api/ceilings", team.officer.cookie)).body as { revision: number; ceilings: Ceilings };
    try {
      // The default parameters run at 250 mm/s; a 200 mm/s ceiling flags the version.
      const res = await call(h, "put", "/api/ceilings", team.officer.cookie).send({
        revision: before.revision,
        ceilings: { ...before.ceilings, tcpLinearMaxMPerS: 0.2 },
        note: "test: lowered below the driven version",
      });
      expect(res.status).toBe(200);
      expect(res.body.flaggedVersionIds.length).toBeGreaterThan(0);
      const answeredAt = performance.now();
      const ended = await after(c, 0, isEnded, AT_ONCE_MS);
      expect(ended).toMatchObject({ sessionId, reason: "profile-not-driveable" });
      expect(c.messages.find((m) => m.msg === ended)!.at - answeredAt).toBeLessThan(AT_ONCE_MS);
      expect(net.jog.hub.sessions.has(sessionId)).toBe(false);
    } finally {
      const now = (await call(h, "get", "/api/ceilings", team.officer.cookie)).body as { revision: number };
      await call(h, "put", "/api/ceilings", team.officer.cookie).send({ revision: now.revision, ceilings: before.ceilings, note: "test: restored" }).expect(200);
      await c.close();
    }
  });

  it("approving a newer version ends the operator's drive of the one it supersedes at once; retiring the new one ends that drive too", async () => {
    const { team, arm, profile, version, c, sessionId } = await operatorDrivingApproved();
    const saved = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({
      parentVersionId: version.id,
      params: { ...compliantParams(arm), speedOverride: { defaultPercent: 30, maxPercent: 100 } },
      note: "v2",
    });
    expect(saved.status).toBe(201);
    const v2 = saved.body.version as { id: number; paramsSha256: string };
    await call(h, "post", `/api/versions/${v2.id}/submit`, team.engineer.cookie).expect(200);
    await call(h, "post", `/api/versions/${v2.id}/approve`, team.officer.cookie).send({ comment: "v2 looks right", paramsSha256: v2.paramsSha256 }).expect(200);
    expect(await after(c, 0, isEnded, AT_ONCE_MS)).toMatchObject({ sessionId, reason: "profile-not-driveable" });
    await c.close();

    const second = await startDriving(team.operator.cookie, v2.id);
    await call(h, "post", `/api/versions/${v2.id}/retire`, team.officer.cookie).send({ reason: "retired for a test" }).expect(200);
    expect(await after(second.c, 0, isEnded, AT_ONCE_MS)).toMatchObject({ sessionId: second.sessionId, reason: "profile-not-driveable" });
    await second.c.close();
  });
});
