import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ROLES, type Role } from "@jogwright/shared";
import { call, createHarness, DEMO_BY_ROLE, signIn, type Harness } from "../test/harness.ts";

/**
 * Every route the app registers, tried with no session and with each role. The access rule comes from
 * the route table itself, so a new route is covered the moment it is added; the first test holds the table
 * to what Express really registered, so a route added beside ApiRouter.add fails it. Allowed callers may still
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

/**
 * What Express actually registered under /api, as "METHOD /path": every route on the app's own router and
 * on the api router, through the routers mounted in it. A mounted function that is not a router (for
 * example `api.use("/api/x", handler)`) is listed as "USE /api/x", so it cannot slip past either. Routes
 * outside /api (the console's static files and fallback page) are not the API's and are left out.
 * Express 5 (router 2.x) keeps a layer's mount path in `rawPath` and a route's methods in `route.methods`.
 */
interface RouterLayer {
  rawPath?: string | string[];
  route?: { path: string; methods: Record<string, boolean> };
  handle: { stack?: RouterLayer[] };
}

function registeredApiRoutes(stack: RouterLayer[], prefix = ""): string[] {
  const found: string[] = [];
  for (const layer of stack) {
    if (layer.route) {
      const path = `${prefix}${layer.route.path === "/" ? "" : layer.route.path}`;
      for (const method of Object.keys(layer.route.methods)) found.push(`${method.replace(/^_/, "").toUpperCase()} ${path}`);
      continue;
    }
    const mountPath = typeof layer.rawPath === "string" ? layer.rawPath : JSON.stringify(layer.rawPath);
    const here = `${prefix}${mountPath === "/" ? "" : mountPath}`;
    if (layer.handle.stack) found.push(...registeredApiRoutes(layer.handle.stack, here));
    else if (mountPath !== "/") found.push(`USE ${here}`);
  }
  return found.filter((r) => / \/api(\/|$)/.test(r));
}

const probePath = (path: string) => path.replace(/:id\b/g, "abcdefgh12345678").replace(/:(\w+)/g, "x");

describe("role matrix", () => {
  it("every route registered in the app is in the matrix, and every route in the matrix is registered", () => {
    const registered = [...registeredApiRoutes(h.app.router.stack as RouterLayer[]), ...registeredApiRoutes(h.api.stack as RouterLayer[])];
    const matrix = h.routes.map((r) => `${r.method.toUpperCase()} ${r.path}`);
    expect(registered.sort()).toEqual(matrix.sort());
    // The walk itself found the routers: an empty registry would make the equality above meaningless.
    expect(matrix.length).toBeGreaterThan(0);
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
