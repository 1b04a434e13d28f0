import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, createHarness, DEMO_BY_ROLE, signIn, type Harness } from "../test/harness.ts";

let h: Harness;
let admin: string;
beforeAll(async () => {
  h = createHarness();
  admin = await signIn(h, DEMO_BY_ROLE.admin);
});
afterAll(() => h.close());

describe("bad requests get one clear error shape", () => {
  it("malformed JSON is a 400 that says so", async () => {
    const res = await call(h, "post", "/api/users", admin).set("Content-Type", "application/json").send('{"username": "x",');
    expect(res.status).toBe(400);
    expect(res.body).toEqual({ error: { code: "bad_request", message: "The request body is not valid JSON." } });
  });

  it("a body that breaks the schema is a 400 naming each field", async () => {
    const res = await call(h, "post", "/api/users", admin).send({ username: "A!", email: "nope", password: "short", roles: [] });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(res.body.error.message).toMatch(/^The request body is not valid — username: /);
    const paths = res.body.error.issues.map((i: { path: string }) => i.path);
    expect(paths).toEqual(expect.arrayContaining(["username", "displayName", "email", "password", "roles"]));
  });

  it("a body that is not JSON is refused with 415", async () => {
    const res = await call(h, "post", "/api/auth/sign-in").type("form").send("username=adele&password=x");
    expect(res.status).toBe(415);
    expect(res.body.error.code).toBe("bad_request");
  });

  it("an unknown API route is a JSON 404", async () => {
    const res = await call(h, "get", "/api/no-such-thing", admin);
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe("not_found");
  });

  it("a bad id in the address is a 400", async () => {
    const res = await call(h, "patch", "/api/users/NOT-AN-ID!", admin).send({ displayName: "x" });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toBe("id");
  });
});

describe("cross-origin requests", () => {
  it("a POST from a foreign origin is refused before it does anything", async () => {
    const res = await h.request
      .post("/api/users")
      .set("Host", "127.0.0.1")
      .set("Origin", "http://evil.example")
      .set("Cookie", admin)
      .send({ username: "crossorigin", displayName: "X", email: "x@x.example", password: "long-enough-1", roles: ["operator"] });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe("bad_origin");
    const list = await call(h, "get", "/api/users", admin);
    expect(list.body.users.map((u: { username: string }) => u.username)).not.toContain("crossorigin");
  });

  it("a state-changing request without an Origin header is refused", async () => {
    const res = await h.request.post("/api/auth/sign-out").set("Host", "127.0.0.1").set("Cookie", admin);
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe("bad_origin");
  });

  it("a GET from anywhere may read (no state changes), still subject to the session", async () => {
    const res = await h.request.get("/api/auth/me").set("Host", "127.0.0.1").set("Origin", "http://evil.example").set("Cookie", admin);
    expect(res.status).toBe(200);
  });
});
