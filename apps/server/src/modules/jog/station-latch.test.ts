import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import type { JogState, User } from "@jogwright/shared";
import { createHarness, freshUser, listenHarness, signIn, type Harness } from "../../test/harness.ts";
import { closeJogServer, connectJog, draftVersion, openJogServer, type Listener } from "../../test/jog-fixture.ts";
import { JogTestClient, sleep } from "./jog-test-client.ts";
import type { StationLatchStore } from "./station-latches.ts";

/**
 * The emergency-stop latch belongs to the operator's station (user and arm), not to one session (issue 8:
 * "An emergency stop is cleared by starting again"). Real `ws` clients against the real server and MariaDB.
 * Each test uses its own person, so each has its own stations.
 */
let h: Harness;
let net: Listener;
let arm6Id: number;
let arm7Id: number;
let operatorId: string;

// The drive page streams inputs at up to 120 Hz (jog-protocol.ts); 100 Hz here.
const INPUT_PERIOD_MS = 10;

interface Station {
  user: User;
  cookie: string;
  /** Two drafts on the six-axis arm (a version switch) and one on the seven-axis arm (another station). */
  versionA: number;
  versionB: number;
  versionOtherArm: number;
}

async function newStation(): Promise<Station> {
  const e = await freshUser(h, ["engineer"]);
  const cookie = await signIn(h, e.username, e.password);
  const draft = (armId: number) => draftVersion(h, e.user, armId, operatorId, `latch ${e.username} ${armId} ${Math.random().toString(36).slice(2, 7)}`);
  return { user: e.user, cookie, versionA: await draft(arm6Id), versionB: await draft(arm6Id), versionOtherArm: await draft(arm7Id) };
}

const connect = (cookie: string, server = net) => connectJog(server, cookie);

/** Sends start and waits for the session and its first state frame. */
async function start(c: JogTestClient, versionId: number): Promise<JogState> {
  c.stopStream();
  const from = c.messages.length;
  c.send({ type: "start", versionId });
  // Inputs still in flight while the old session ends are answered with no_session: not the start's answer.
  const m = await c.next((x) => x.type === "session" || (x.type === "error" && x.code !== "no_session"));
  if (m.type !== "session") throw new Error(`start refused: ${JSON.stringify(m)}`);
  const sessionId = m.session.sessionId;
  const seen = c.statesSince(from).find((s) => s.state.sessionId === sessionId);
  return seen?.state ?? c.nextState((s) => s.sessionId === sessionId);
}

/** A fresh press: released first, then held with the stick deflected, streamed. */
async function freshPress(c: JogTestClient, axes = [0, 0, 1, 0, 0, 0]): Promise<void> {
  c.stopStream();
  c.input = { ...c.input, enabling: false, mode: "cartesian", axes: axes.map(() => 0) };
  c.sendInput();
  await sleep(40);
  c.input = { ...c.input, enabling: true, axes };
  c.stream(INPUT_PERIOD_MS);
}

const isMoving = (s: JogState) => s.qdot.some((v) => v !== 0);

/** Drives until moving, then presses STOP; returns the latched frame. */
async function moveThenEstop(c: JogTestClient): Promise<JogState> {
  await freshPress(c);
  await c.nextState(isMoving, 3000);
  c.send({ type: "estop" });
  return c.nextState((s) => s.estopLatched && s.qdot.every((v) => v === 0), 3000);
}

/** A fresh station driving version A on one socket, moved and then STOPped: the station, its socket and the latched frame. */
async function latchedStation(): Promise<{ st: Station; c: JogTestClient; latched: JogState }> {
  const st = await newStation();
  const c = await connect(st.cookie);
  await start(c, st.versionA);
  return { st, c, latched: await moveThenEstop(c) };
}

/** Holds the enabling control (after a fresh press) for holdMs and returns the frames of that time. */
async function pressAndWatch(c: JogTestClient, holdMs = 400): Promise<JogState[]> {
  const from = c.messages.length;
  await freshPress(c);
  await sleep(holdMs);
  return c.statesSince(from).map((f) => f.state);
}

beforeAll(async () => ({ h, net, arm6Id, arm7Id, operatorId } = await openJogServer()));
afterAll(() => closeJogServer(net, h));

describe("the emergency-stop latch of an operator station", () => {
  it("after STOP, a start of the same version on the same socket begins latched, and a fresh press does not move the arm", async () => {
    const { st, c, latched } = await latchedStation();
    const first = await start(c, st.versionA);
    expect(first.estopLatched).toBe(true);
    const frames = await pressAndWatch(c);
    expect(frames.length).toBeGreaterThan(3);
    for (const f of frames) {
      expect(f.estopLatched).toBe(true);
      expect(f.enabled).toBe(false);
      expect(isMoving(f)).toBe(false);
    }
    // Switching on the same arm starts from where the arm stopped, and it stays there.
    expect(frames.at(-1)!.q).toEqual(latched.q);
    await c.close();
  });

  it("a version switch on the same arm, a new socket and a page reload all find the station latched", async () => {
    const { st, c } = await latchedStation();
    // Version switch.
    expect((await start(c, st.versionB)).estopLatched).toBe(true);
    expect((await pressAndWatch(c, 250)).every((f) => f.estopLatched && !isMoving(f))).toBe(true);
    await c.close();
    // Reconnect / reload: a new socket, a new session.
    const again = await connect(st.cookie);
    expect((await start(again, st.versionA)).estopLatched).toBe(true);
    expect((await pressAndWatch(again, 250)).every((f) => f.estopLatched && !isMoving(f))).toBe(true);
    // The same person at another arm is another station: not latched.
    expect((await start(again, st.versionOtherArm)).estopLatched).toBe(false);
    await again.close();
  });

  it("reset clears the latch without moving: the arm stays until the enabling control is released and pressed again", async () => {
    const { st, c } = await latchedStation();
    await start(c, st.versionA); // a new session, latched from the station
    // Hold the enabling control with the stick deflected, then reset while it is held.
    await freshPress(c);
    await sleep(150);
    const before = await c.nextState();
    expect(before.estopLatched).toBe(true);
    c.send({ type: "reset-estop" });
    await c.nextState((s) => !s.estopLatched, 3000);
    await sleep(300);
    const held = await c.nextState();
    expect(held.estopLatched).toBe(false);
    expect(held.enabled).toBe(false);
    expect(isMoving(held)).toBe(false);
    expect(held.q).toEqual(before.q);
    // Released and pressed again: it moves.
    await freshPress(c);
    const moving = await c.nextState((s) => s.enabled && isMoving(s), 3000);
    expect(moving.estopLatched).toBe(false);
    c.stopStream();
    await c.close();
    // And the station stays reset for the next session.
    const next = await connect(st.cookie);
    expect((await start(next, st.versionA)).estopLatched).toBe(false);
    await next.close();
  });

  it("an e-stop in one tab halts the other tab driving at the same station", async () => {
    const st = await newStation();
    const [a, b] = [await connect(st.cookie), await connect(st.cookie)];
    await start(a, st.versionA);
    await start(b, st.versionB);
    await freshPress(b);
    await b.nextState(isMoving, 3000);
    a.send({ type: "estop" });
    const halted = await b.nextState((s) => s.estopLatched, 3000);
    expect(halted.qdot.every((v) => v === 0)).toBe(true);
    b.stopStream();
    await Promise.all([a.close(), b.close()]);
  });

  it("the latch and the reset are audited against the station, by the person who pressed them", async () => {
    const { st, c } = await latchedStation();
    c.stopStream();
    c.send({ type: "reset-estop" });
    await c.nextState((s) => !s.estopLatched, 3000);
    await net.jog.hub.stations.settled();
    const rows = await h.db.query<{ action: string; actor_id: string }>(
      "SELECT action, actor_id FROM audit_log WHERE entity = 'session' AND entity_id = ? ORDER BY id",
      { replacements: [`station:${st.user.id}:${arm6Id}`], type: QueryTypes.SELECT },
    );
    expect(rows).toEqual([
      { action: "estop-latch", actor_id: st.user.id },
      { action: "estop-reset", actor_id: st.user.id },
    ]);
    await c.close();
  });

  it("the latch survives a server restart: a new server on the same database starts the station latched", async () => {
    const { st, c } = await latchedStation();
    c.stopStream();
    await c.close();
    await net.jog.hub.stations.settled();
    // A second app (its own hub, memory empty) on the same database, as after a restart.
    const h2 = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
    const net2 = await listenHarness(h2);
    try {
      const c2 = await connect(st.cookie, net2);
      expect((await start(c2, st.versionA)).estopLatched).toBe(true);
      await c2.close();
    } finally {
      await net2.close();
      await h2.close();
    }
  });

  it("a database that fails does not prevent latching: the station latches in memory and the next start is latched", async () => {
    const st = await newStation();
    const stations = net.jog.hub.stations;
    const working = stations.store;
    const failing: StationLatchStore = {
      loadLatched: () => Promise.reject(new Error("database down (test)")),
      saveLatched: () => Promise.reject(new Error("database down (test)")),
      saveReset: () => Promise.reject(new Error("database down (test)")),
    };
    const c = await connect(st.cookie);
    try {
      await start(c, st.versionA);
      stations.store = failing;
      const latched = await moveThenEstop(c);
      expect(latched.estopLatched).toBe(true);
      await stations.settled(); // the failed write is logged, not thrown
      expect((await start(c, st.versionA)).estopLatched).toBe(true);
    } finally {
      stations.store = working;
      c.stopStream();
      await c.close();
    }
  });
});
