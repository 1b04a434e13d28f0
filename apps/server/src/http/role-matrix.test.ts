import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ROLES, type Role } from "@jogwright/shared";
import { call, createHarness, DEMO_BY_ROLE, signIn, type Harness } from "../test/harness.ts";

/**
 * Every route the app registers, tried with no session and with each role. The access rule comes from
 * the route table itself, so a new route is covered the moment it is added. Allowed callers may still
 * get 400/404 (the probe body is empty); what matters here is that the server, not the console,
 * answers 401 without a session and 403 for a role that may not use the route.
 */
let h: Harness;
const cookies = {} as Record<Role, string>;
beforeAll(async () => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  for (const role of ROLES) cookies[role] = await signIn(h, DEMO_BY_ROLE[role]);
});
afterAll(() => h.close());

const probePath = (path: string) => path.replace(/:id\b/g, "abcdefgh12345678").replace(/:(\w+)/g, "x");

describe("role matrix", () => {
  it("covers a non-trivial route table", () => {
    expect(h.routes.length).toBeGreaterThanOrEqual(7);
  });

  it("every route answers as its access rule says, for no session and for each role", async () => {
    const mismatches: string[] = [];
    for (const route of h.routes) {
      // Signing out would end the shared sessions; its rule is checked separately below.
      if (route.path === "/api/auth/sign-out") continue;
      const path = probePath(route.path);
      const anonymous = await call(h, route.method, path).send({});
      const anonymousOk = route.access === "public" ? anonymous.status !== 401 && anonymous.status !== 403 : anonymous.status === 401;
      if (!anonymousOk) mismatches.push(`${route.method.toUpperCase()} ${route.path} without a session: ${anonymous.status}`);
      for (const role of ROLES) {
        const res = await call(h, route.method, path, cookies[role]).send({});
        const allowed = route.access === "public" || route.access === "signed-in" || route.access.includes(role);
        const ok = allowed ? res.status !== 401 && res.status !== 403 : res.status === 403 && res.body.error?.code === "forbidden";
        if (!ok) mismatches.push(`${route.method.toUpperCase()} ${route.path} as ${role}: ${res.status} (${allowed ? "allowed" : "forbidden"})`);
      }
    }
    expect(mismatches).toEqual([]);
  });

  it("user administration is for admins only", () => {
    const adminOnly = h.routes.filter((r) => r.path.startsWith("/api/users"));
    expect(adminOnly.length).toBeGreaterThanOrEqual(3);
    for (const r of adminOnly) expect(r.access).toEqual(["admin"]);
  });

  it("sign-out needs a session", async () => {
    const res = await call(h, "post", "/api/auth/sign-out");
    expect(res.status).toBe(401);
  });
});
