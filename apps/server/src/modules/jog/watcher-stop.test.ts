import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import type { JogState } from "@jogwright/shared";
import { call, DEMO_BY_ROLE, signedInUser, signIn, type Harness, type SignedInUser } from "../../test/harness.ts";
import { closeJogServer, connectJog, draftVersion, openJogServer, type Listener } from "../../test/jog-fixture.ts";
import { JogTestClient, sleep } from "./jog-test-client.ts";

/**
 * A safety officer watching a live session can stop it (issue 11, item 10): `estop` from a watcher who
 * holds the safety officer role latches the DRIVER's station (the driver at that arm), exactly as the
 * driver's own STOP does, and the audit trail names the officer. Real `ws` clients, real server and
 * MariaDB; every test has its own people, so its own stations.
 */
let h: Harness;
let net: Listener;
let admin: string;
let operatorId: string;
let arm6Id: number;

const INPUT_PERIOD_MS = 10;

const connect = (cookie: string) => connectJog(net, cookie);

/** An engineer driving a fresh draft on the six-axis arm, moving along +z after a fresh press. */
async function drivingAndMoving(): Promise<{ driver: SignedInUser; c: JogTestClient; sessionId: string; versionId: number }> {
  const driver = await signedInUser(h, ["engineer"]);
  const versionId = await draftVersion(h, driver.user, arm6Id, operatorId, `watched ${driver.user.username}`);
  const c = await connect(driver.cookie);
  c.send({ type: "start", versionId });
  const m = await c.next((x) => x.type === "session" || x.type === "error");
  if (m.type !== "session") throw new Error(`start refused: ${JSON.stringify(m)}`);
  c.input = { ...c.input, enabling: false, axes: [0, 0, 0, 0, 0, 0] };
  c.sendInput();
  await sleep(20);
  c.input = { ...c.input, enabling: true, axes: [0, 0, 1, 0, 0, 0] };
  c.stream(INPUT_PERIOD_MS);
  await c.nextState((s) => s.qdot.some((v) => v !== 0), 3000);
  return { driver, c, sessionId: m.session.sessionId, versionId };
}

async function watch(cookie: string, sessionId: string): Promise<JogTestClient> {
  const w = await connect(cookie);
  w.send({ type: "watch", sessionId });
  await w.next((m) => m.type === "session");
  return w;
}

const isHalted = (s: JogState) => s.estopLatched && s.qdot.every((v) => v === 0);

beforeAll(async () => {
  ({ h, net, arm6Id, operatorId } = await openJogServer());
  admin = await signIn(h, DEMO_BY_ROLE.admin);
});
afterAll(() => closeJogServer(net, h));

describe("a safety officer's STOP on a watched session", () => {
  it("halts the driver's arm at once and latches the driver's station; the watcher sees it too", async () => {
    const { driver, c, sessionId, versionId } = await drivingAndMoving();
    const officer = await signedInUser(h, ["safety_officer"]);
    const w = await watch(officer.cookie, sessionId);
    w.send({ type: "estop" });
    // The driver's frames: rates exactly zero, latched, the stop reason says so (the instant halt, jog.test.ts).
    const halted = await c.nextState(isHalted, 3000);
    expect(halted.stopReason).toBe("emergency-stop");
    await w.nextState(isHalted, 3000);
    // Still holding the enabling control with the stick deflected: nothing moves.
    await sleep(200);
    const held = await c.nextState();
    expect(held.estopLatched).toBe(true);
    expect(held.q).toEqual(halted.q);
    c.stopStream();
    // A watcher cannot reset it (only the driver's deliberate reset does).
    w.send({ type: "reset-estop" });
    expect(await w.next((m) => m.type === "error")).toMatchObject({ code: "read_only" });
    // It is the station's latch (the driver at this arm): the driver's next session starts latched.
    c.send({ type: "start", versionId });
    await c.next((m) => m.type === "session");
    expect((await c.nextState()).estopLatched).toBe(true);
    expect(net.jog.hub.stations.isLatched({ userId: driver.user.id, armId: arm6Id })).toBe(true);
    await Promise.all([w.close(), c.close()]);
  });

  it("is audited against the driver's station, with the officer as the one who pressed it", async () => {
    const { driver, c, sessionId } = await drivingAndMoving();
    const officer = await signedInUser(h, ["safety_officer"]);
    const w = await watch(officer.cookie, sessionId);
    w.send({ type: "estop" });
    await c.nextState(isHalted, 3000);
    c.stopStream();
    await net.jog.hub.stations.settled();
    const rows = await h.db.query<{ action: string; actor_id: string; summary: string }>(
      "SELECT action, actor_id, summary FROM audit_log WHERE entity = 'session' AND entity_id = ? ORDER BY id",
      { replacements: [`station:${driver.user.id}:${arm6Id}`], type: QueryTypes.SELECT },
    );
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ action: "estop-latch", actor_id: officer.user.id });
    expect(rows[0]!.summary).toContain(`at ${driver.user.displayName}'s station`);
    expect(rows[0]!.summary).toContain(`by ${officer.user.displayName}, watching the session as safety officer`);
    await Promise.all([w.close(), c.close()]);
  });

  it("an officer whose safety officer role was removed while watching can no longer stop it (roles checked on the message)", async () => {
    const { c, sessionId } = await drivingAndMoving();
    const officer = await signedInUser(h, ["safety_officer", "engineer"]);
    const w = await watch(officer.cookie, sessionId);
    await call(h, "patch", `/api/users/${officer.user.id}`, admin).send({ roles: ["engineer"] }).expect(200);
    // Still an engineer, so still watching; but the STOP is refused and the driver drives on.
    w.send({ type: "estop" });
    expect(await w.next((m) => m.type === "error")).toMatchObject({ code: "read_only" });
    const s = await c.nextState();
    expect(s.estopLatched).toBe(false);
    expect(s.qdot.some((v) => v !== 0)).toBe(true);
    c.stopStream();
    await Promise.all([w.close(), c.close()]);
  });
});
