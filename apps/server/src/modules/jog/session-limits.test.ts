import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import type { JogServerMessage } from "@jogwright/shared";
import { createHarness, freshUser, listenHarness, signIn, type Harness } from "../../test/harness.ts";
import { closeJogServer, connectJog, draftVersion, openJogServer, type Listener } from "../../test/jog-fixture.ts";
import { JogTestClient, sleep } from "./jog-test-client.ts";

/**
 * Caps on live sessions and the start rate (issue 11, item 8: one account held 400 sessions, and 200
 * `start` messages in one second created 145 recordings). Real `ws` clients against the real server and
 * MariaDB, with the shipped defaults (3 per account, 5 starts per 10 s per account) set explicitly, since
 * the harness relaxes the start rate for the other tests. Each test uses its own people.
 */
const DEFAULTS = { JOG_MAX_SESSIONS_PER_ACCOUNT: "3", JOG_MAX_SESSIONS: "200", JOG_STARTS_PER_WINDOW: "5", JOG_START_WINDOW_S: "10" };

let h: Harness;
let net: Listener;
let arm6Id: number;
let operatorId: string;

interface Engineer {
  userId: string;
  cookie: string;
  versionId: number;
}

/** A fresh engineer with a draft on the six-axis arm (engineers may drive drafts). */
async function newEngineer(harness = h): Promise<Engineer> {
  const e = await freshUser(harness, ["engineer"]);
  const cookie = await signIn(harness, e.username, e.password);
  return { userId: e.user.id, cookie, versionId: await draftVersion(harness, e.user, arm6Id, operatorId, `limits ${e.username}`) };
}

const connect = (e: Engineer, server = net) => connectJog(server, e.cookie);

/** Sends start; resolves with the session frame or the error frame that answered it. */
async function start(c: JogTestClient, versionId: number): Promise<JogServerMessage> {
  c.send({ type: "start", versionId });
  return c.next((m) => m.type === "session" || m.type === "error", 5000);
}

async function recordingsOf(userId: string, harness = h): Promise<number> {
  const [row] = await harness.db.query<{ n: number }>("SELECT COUNT(*) AS n FROM jog_recordings WHERE driver_id = ?", {
    replacements: [userId],
    type: QueryTypes.SELECT,
  });
  return Number(row!.n);
}

beforeAll(async () => ({ h, net, arm6Id, operatorId } = await openJogServer(DEFAULTS)));
afterAll(() => closeJogServer(net, h));

describe("the cap on live sessions per account", () => {
  it("a 4th concurrent session of one account is refused with a sentence to act on and no recording, while other accounts still start", async () => {
    const a = await newEngineer();
    const b = await newEngineer();
    const tabs = await Promise.all([1, 2, 3, 4].map(() => connect(a)));
    const other = await connect(b);
    try {
      for (const c of tabs.slice(0, 3)) expect((await start(c, a.versionId)).type).toBe("session");
      const before = await recordingsOf(a.userId);

      const refused = await start(tabs[3]!, a.versionId);
      expect(refused).toMatchObject({ type: "error", code: "account_session_limit" });
      expect(refused.type === "error" && refused.message).toMatch(/already drive 3 live sessions.*stop one/);
      expect(await recordingsOf(a.userId)).toBe(before);

      // Another account is not held back by this one's cap.
      expect((await start(other, b.versionId)).type).toBe("session");

      // A switch on a socket already driving replaces its session, so it is allowed at the cap.
      expect((await start(tabs[0]!, a.versionId)).type).toBe("session");

      // Once one ends, the 4th tab may start.
      tabs[1]!.send({ type: "stop" });
      await tabs[1]!.next((m) => m.type === "ended");
      expect((await start(tabs[3]!, a.versionId)).type).toBe("session");
      expect((await net.jog.hub.listLive()).filter((s) => s.driverId === a.userId)).toHaveLength(3);
    } finally {
      await Promise.all([...tabs, other].map((c) => c.close()));
    }
  });

  it("4 starts of one account sent at the same instant from 4 sockets make exactly 3 sessions and 3 recordings", async () => {
    const a = await newEngineer();
    const tabs = await Promise.all([1, 2, 3, 4].map(() => connect(a)));
    const before = await recordingsOf(a.userId);
    try {
      const answers = await Promise.all(tabs.map((c) => start(c, a.versionId)));
      expect(answers.filter((m) => m.type === "session")).toHaveLength(3);
      expect(answers.filter((m) => m.type === "error" && m.code === "account_session_limit")).toHaveLength(1);
      expect((await recordingsOf(a.userId)) - before).toBe(3);
    } finally {
      await Promise.all(tabs.map((c) => c.close()));
    }
  });
});

describe("the start rate", () => {
  it("200 start messages in one second, over two sockets of one account, create at most 5 recordings", async () => {
    const a = await newEngineer();
    const sockets = await Promise.all([connect(a), connect(a)]);
    const before = await recordingsOf(a.userId);
    try {
      // 100 per socket, one every 10 ms: 200 in about a second (within the 250/s message budget).
      for (let i = 0; i < 100; i++) {
        for (const c of sockets) c.send({ type: "start", versionId: a.versionId });
        await sleep(10);
      }
      // Let the starts under way finish (each admitted one writes its recording row).
      await sleep(1500);
      const created = (await recordingsOf(a.userId)) - before;
      // The default start rate is 5 per account per 10 s (derived: the limit under test).
      expect(created).toBeGreaterThanOrEqual(1);
      expect(created).toBeLessThanOrEqual(5);
      const refusals = sockets.flatMap((c) => c.messages.map((m) => m.msg)).filter((m) => m.type === "error" && m.code === "start_rate_limited");
      expect(refusals.length).toBeGreaterThan(0);
      expect(refusals[0]!.type === "error" && refusals[0]!.message).toMatch(/^You started 5 sessions within 10 s, the most allowed: wait \d+ s, then start again\.$/);
      // Nothing was closed for it: the sockets still answer.
      for (const c of sockets) {
        c.send({ type: "ping", id: 1, clientTimeMs: 0 });
        await c.next((m) => m.type === "pong");
      }
    } finally {
      await Promise.all(sockets.map((c) => c.close()));
    }
  });
});

describe("the cap on live sessions per server", () => {
  it("refuses with its own message once the server runs its limit, whoever starts, and admits again when one ends", async () => {
    // A second server on the same database whose cap is 2.
    const h2 = createHarness({ SIGN_IN_MAX_FAILURES: "1000", ...DEFAULTS, JOG_MAX_SESSIONS: "2" });
    const net2 = await listenHarness(h2);
    const people = [await newEngineer(h2), await newEngineer(h2), await newEngineer(h2)];
    const clients = await Promise.all(people.map((p) => connect(p, net2)));
    try {
      expect((await start(clients[0]!, people[0]!.versionId)).type).toBe("session");
      expect((await start(clients[1]!, people[1]!.versionId)).type).toBe("session");
      const before = await recordingsOf(people[2]!.userId, h2);

      const refused = await start(clients[2]!, people[2]!.versionId);
      expect(refused).toMatchObject({ type: "error", code: "server_session_limit" });
      expect(refused.type === "error" && refused.message).toBe(
        "The server is running 2 live sessions, its limit: try again when one has ended, or ask an administrator to raise JOG_MAX_SESSIONS.",
      );
      expect(await recordingsOf(people[2]!.userId, h2)).toBe(before);

      clients[0]!.send({ type: "stop" });
      await clients[0]!.next((m) => m.type === "ended");
      expect((await start(clients[2]!, people[2]!.versionId)).type).toBe("session");
    } finally {
      await Promise.all(clients.map((c) => c.close()));
      await net2.close();
      await h2.close();
    }
  });
});
