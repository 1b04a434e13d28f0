import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { JogTestClient } from "../modules/jog/jog-test-client.ts";
import { createHarness, freshUser, listenHarness, type Harness } from "../test/harness.ts";

/**
 * The Origin check compares with the configured public origin (PUBLIC_ORIGIN, plus ALLOWED_ORIGINS), never
 * with the Host header: a sender chooses its Host (DNS rebinding, a crafted request), so "Origin equals
 * Host" proves nothing. Here the public origin is https://jog.example, as behind a TLS proxy.
 */
const PUBLIC = "https://jog.example";
let h: Harness;
let net: Awaited<ReturnType<typeof listenHarness>>;
let admin: string;
let wsUrl: string;

beforeAll(async () => {
  h = createHarness({ PUBLIC_ORIGIN: PUBLIC, ALLOWED_ORIGINS: "http://127.0.0.1:5173", SIGN_IN_MAX_FAILURES: "1000" });
  admin = await sessionCookie((await freshUser(h, ["admin"])).user.id);
  net = await listenHarness(h);
  wsUrl = net.wsUrl;
});
afterAll(async () => {
  await net?.close();
  await h?.close();
});

const stamp = Date.now().toString(36);
const newUserBody = (name: string) => {
  const username = `${name}${stamp}`;
  return { username, displayName: "X", email: `${username}@x.example`, password: "long-enough-1", roles: ["operator"] };
};

describe("state-changing requests", () => {
  it("a sign-in from the public origin works behind the proxy (Host is the public host)", async () => {
    const { username, password } = await freshUser(h, ["operator"]);
    const res = await h.request.post("/api/auth/sign-in").set("Host", "jog.example").set("Origin", PUBLIC).send({ username, password });
    expect(res.status).toBe(200);
  });

  it("a forged Host header that matches a foreign Origin is refused before anything changes", async () => {
    const res = await h.request.post("/api/users").set("Host", "evil.example").set("Origin", "http://evil.example").set("Cookie", admin).send(newUserBody("forgedhost"));
    expect(res.status).toBe(403);
    expect(res.body.error).toEqual({
      code: "bad_origin",
      message: "Requests from http://evil.example may not change anything here; open Jogwright at https://jog.example (or set PUBLIC_ORIGIN).",
    });
    const rows = await h.db.query("SELECT id FROM users WHERE username = ?", { replacements: [`forgedhost${stamp}`], type: QueryTypes.SELECT });
    expect(rows).toHaveLength(0);
  });

  it("a request from the public origin is accepted whatever Host the proxy forwards", async () => {
    const res = await h.request.post("/api/users").set("Host", "10.0.0.7:3000").set("Origin", PUBLIC).set("Cookie", admin).send(newUserBody("viaproxy"));
    expect(res.status).toBe(201);
  });

  it("an origin from ALLOWED_ORIGINS is accepted too; the same host on another scheme is not", async () => {
    const extra = await h.request.post("/api/users").set("Host", "jog.example").set("Origin", "http://127.0.0.1:5173").set("Cookie", admin).send(newUserBody("viadevserver"));
    expect(extra.status).toBe(201);
    const plainHttp = await h.request.post("/api/users").set("Host", "jog.example").set("Origin", "http://jog.example").set("Cookie", admin).send(newUserBody("plainhttp"));
    expect(plainHttp.status).toBe(403);
  });
});

describe("the jog socket upgrade", () => {
  it("a forged Host header that matches a foreign Origin is refused with 403, even with a valid session", async () => {
    const cookie = await sessionCookie((await freshUser(h, ["operator"])).user.id);
    await expect(JogTestClient.connect(wsUrl, { Host: "evil.example", Origin: "http://evil.example", Cookie: cookie })).rejects.toMatchObject({ status: 403 });
  });

  it("is accepted from the public origin whatever the Host", async () => {
    const cookie = await sessionCookie((await freshUser(h, ["operator"])).user.id);
    const c = await JogTestClient.connect(wsUrl, { Host: "10.0.0.7:3000", Origin: PUBLIC, Cookie: cookie });
    await c.close();
  });
});

/** A session made directly, so these tests do not depend on the sign-in route passing the Origin check. */
async function sessionCookie(userId: string): Promise<string> {
  const session = await h.ctx.lucia.createSession(userId, {});
  return `jogwright_session=${session.id}`;
}
