import { QueryTypes } from "sequelize";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { call, createHarness, freshUser, signIn, type Harness } from "../test/harness.ts";

let h: Harness;
beforeAll(() => {
  h = createHarness();
});
afterAll(() => h.close());

describe("sign-in", () => {
  it("with the right password answers the account and sets an HttpOnly, SameSite=Lax session cookie", async () => {
    const { username, password } = await freshUser(h, ["engineer"]);
    const res = await call(h, "post", "/api/auth/sign-in").send({ username, password });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ username, roles: ["engineer"], isActive: true });
    expect(res.body.user.passwordHash).toBeUndefined();
    const cookie = (res.headers["set-cookie"] as unknown as string[])[0]!;
    expect(cookie).toMatch(/^jogwright_session=[a-z0-9]+;/);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Lax/);
    // Plain http on loopback: no Secure flag, or the browser would drop the cookie.
    expect(cookie).not.toMatch(/Secure/);
  });

  it("marks the cookie Secure behind an https proxy", async () => {
    const proxied = createHarness({ TRUST_PROXY: "1", PUBLIC_ORIGIN: "https://jog.example" });
    try {
      const { username, password } = await freshUser(proxied, ["operator"]);
      const res = await proxied.request
        .post("/api/auth/sign-in")
        .set("Host", "jog.example")
        .set("X-Forwarded-Proto", "https")
        .set("Origin", "https://jog.example")
        .send({ username, password });
      expect(res.status).toBe(200);
      expect((res.headers["set-cookie"] as unknown as string[])[0]).toMatch(/Secure/);
    } finally {
      await proxied.close();
    }
  });

  it("with a wrong password answers 401 and no cookie", async () => {
    const { username } = await freshUser(h, ["operator"]);
    const res = await call(h, "post", "/api/auth/sign-in").send({ username, password: "not-the-password" });
    expect(res.status).toBe(401);
    expect(res.body.error).toEqual({ code: "invalid_credentials", message: "Wrong user name or password." });
    expect(res.headers["set-cookie"]).toBeUndefined();
  });

  it("for an unknown user answers exactly like a wrong password", async () => {
    const res = await call(h, "post", "/api/auth/sign-in").send({ username: "nobody-here", password: "whatever-1" });
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe("invalid_credentials");
  });

  it("after five failures for one account and address answers 429 even for the right password, other accounts unaffected", async () => {
    const victim = await freshUser(h, ["operator"]);
    const other = await freshUser(h, ["operator"]);
    for (let i = 0; i < 5; i += 1) {
      const res = await call(h, "post", "/api/auth/sign-in").send({ username: victim.username, password: `wrong-${i}-password` });
      expect(res.status).toBe(401);
    }
    const blocked = await call(h, "post", "/api/auth/sign-in").send({ username: victim.username, password: victim.password });
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe("rate_limited");
    expect(Number(blocked.headers["retry-after"])).toBeGreaterThan(0);
    const unaffected = await call(h, "post", "/api/auth/sign-in").send({ username: other.username, password: other.password });
    expect(unaffected.status).toBe(200);
  });

  it("forty wrong passwords sent at once are evaluated at most five times, and the right one is then refused", async () => {
    // A separate app, so this burst does not use up the address budget of the other tests.
    const burst = createHarness({ SIGN_IN_MAX_FAILURES: "5", SIGN_IN_MAX_FAILURES_PER_ADDRESS: "50" });
    try {
      const victim = await freshUser(burst, ["operator"]);
      const answers = await Promise.all(
        Array.from({ length: 40 }, (_, i) =>
          call(burst, "post", "/api/auth/sign-in").send({ username: victim.username, password: `wrong-${i}-password` }),
        ),
      );
      const statuses = answers.map((r) => r.status);
      expect(statuses.filter((s) => s !== 401 && s !== 429)).toEqual([]);
      // The limit is 5 (SIGN_IN_MAX_FAILURES above): no more than 5 passwords were checked.
      expect(statuses.filter((s) => s === 401).length).toBeLessThanOrEqual(5);
      expect(statuses.filter((s) => s === 429).length).toBeGreaterThanOrEqual(35);
      const right = await call(burst, "post", "/api/auth/sign-in").send({ username: victim.username, password: victim.password });
      expect(right.status).toBe(429);
      expect(right.headers["set-cookie"]).toBeUndefined();
    } finally {
      await burst.close();
    }
  });

  it("a good sign-in gives back its attempt: right passwords never lock an account out", async () => {
    const { username, password } = await freshUser(h, ["operator"]);
    for (let i = 0; i < 8; i += 1) {
      const res = await call(h, "post", "/api/auth/sign-in").send({ username, password });
      expect(res.status).toBe(200);
    }
  });

  it("limits failures per address across accounts", async () => {
    const strict = createHarness({ SIGN_IN_MAX_FAILURES_PER_ADDRESS: "3" });
    try {
      for (let i = 0; i < 3; i += 1) {
        await call(strict, "post", "/api/auth/sign-in").send({ username: `spray${i}`, password: "wrong-password" }).expect(401);
      }
      const res = await call(strict, "post", "/api/auth/sign-in").send({ username: "spray-next", password: "wrong-password" });
      expect(res.status).toBe(429);
    } finally {
      await strict.close();
    }
  });

  it("refuses a deactivated account", async () => {
    const { user, username, password } = await freshUser(h, ["operator"]);
    await h.db.query("UPDATE users SET is_active = 0 WHERE id = ?", { replacements: [user.id] });
    const res = await call(h, "post", "/api/auth/sign-in").send({ username, password });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe("account_inactive");
  });
});

describe("sign-out", () => {
  it("ends the session on the server: the old cookie no longer works", async () => {
    const { username, password } = await freshUser(h, ["operator"]);
    const cookie = await signIn(h, username, password);
    await call(h, "get", "/api/auth/me", cookie).expect(200);
    const out = await call(h, "post", "/api/auth/sign-out", cookie);
    expect(out.status).toBe(204);
    const rows = await h.db.query("SELECT id FROM sessions WHERE id = ?", {
      replacements: [cookie.split("=")[1]],
      type: QueryTypes.SELECT,
    });
    expect(rows).toHaveLength(0);
    const after = await call(h, "get", "/api/auth/me", cookie);
    expect(after.status).toBe(401);
    expect(after.body.error.code).toBe("unauthenticated");
  });
});

describe("the session cookie", () => {
  it("lives exactly as long as the session on the server (12 h), not 400 days", async () => {
    const { username, password } = await freshUser(h, ["operator"]);
    const res = await call(h, "post", "/api/auth/sign-in").send({ username, password });
    const cookie = (res.headers["set-cookie"] as unknown as string[])[0]!;
    // 12 h = 43 200 s, lucia's sessionExpiresIn (lucia.ts); derived.
    expect(cookie).toMatch(/Max-Age=43200(;|$)/);
    const rows = await h.db.query<{ expires_at: Date }>("SELECT expires_at FROM sessions WHERE id = ?", {
      replacements: [cookie.split(";")[0]!.split("=")[1]],
      type: QueryTypes.SELECT,
    });
    const serverLifetimeS = (new Date(rows[0]!.expires_at).getTime() - Date.now()) / 1000;
    expect(Math.abs(serverLifetimeS - 43_200)).toBeLessThan(60);
  });

  it("with a malformed percent-encoding counts as no session: 401, nothing logged", async () => {
    const logged = vi.spyOn(console, "error");
    try {
      for (const value of ["%E0%A4%A", "%", "abc%zz", "%C0%80"]) {
        const res = await call(h, "get", "/api/auth/me", `jogwright_session=${value}`);
        expect(res.status).toBe(401);
        expect(res.body.error.code).toBe("unauthenticated");
      }
      expect(logged).not.toHaveBeenCalled();
    } finally {
      logged.mockRestore();
    }
  });
});
