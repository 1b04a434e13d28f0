import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fc from "fast-check";
import type { Sequelize } from "sequelize";
import { ROLES, type Role } from "@jogwright/shared";
import { createHarness, DEMO_BY_ROLE, ORIGIN, signIn, type Harness } from "../test/harness.ts";
import { createOwnerDb } from "../test/owner-db.ts";
import { changedCounts, rowCounts } from "./row-counts.ts";

/**
 * Property-based fuzzing of every route in the route table (issue 11, "Fuzz and fault suites"): random
 * path parameters, query strings and bodies — JSON values of any shape, malformed JSON, bad percent
 * encodings — sent as no one and as a role the route admits, so they reach the validation and the
 * services behind it. Whatever arrives: never a 5xx, always the one JSON error shape for a refusal, and no
 * table's row count changes (a refused request writes nothing, not even half a record).
 *
 * fast-check's seed is fixed per run through FUZZ_SEED (default: a new one each run, printed on failure
 * with the shrunk counterexample, so any failure can be replayed with FUZZ_SEED=<seed>).
 */
const RUNS_PER_ROUTE = Number(process.env.FUZZ_RUNS_PER_ROUTE ?? 16);
const seed = process.env.FUZZ_SEED ? Number(process.env.FUZZ_SEED) : undefined;

let h: Harness;
let owner: Sequelize;
const cookies = {} as Record<Role, string>;

beforeAll(async () => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  owner = createOwnerDb();
  for (const role of ROLES) cookies[role] = await signIn(h, DEMO_BY_ROLE[role]);
});
afterAll(async () => {
  await owner?.close();
  await h?.close();
});

/** A path segment: strings of every kind, numbers at the edges, traversal, NUL and broken percent-encodings. */
const segment = fc.oneof(
  fc.string({ maxLength: 40 }).map(encodeURIComponent),
  fc.string({ unit: "grapheme", maxLength: 20 }).map(encodeURIComponent),
  fc.integer().map(String),
  fc.constantFrom("0", "-1", "1e309", "NaN", "Infinity", "9".repeat(40), "..", "%00", "%", "%E0%A4%A", "%ZZ", "abcdefgh12345678", " ", "null"),
);

/** A query string: random keys and values, repeated keys, and raw broken encodings. */
const query = fc.oneof(
  fc.constant(""),
  fc
    .array(fc.tuple(fc.string({ maxLength: 12 }), fc.oneof(fc.string({ maxLength: 30 }), fc.integer().map(String))), { maxLength: 5 })
    .map((pairs) => (pairs.length ? `?${pairs.map(([k, v]) => `${encodeURIComponent(k)}=${encodeURIComponent(v)}`).join("&")}` : "")),
  fc.constantFrom("?from=%", "?limit=-1", "?limit=1e9", "?page=NaN", "?a[b][c][d]=1", "?entity=%00", "?from=2026-13-45&to=x"),
);

/** A body: any JSON value (objects with arbitrary keys, deep nesting, big numbers) or text that is not JSON. */
const body = fc.oneof(
  { weight: 3, arbitrary: fc.jsonValue({ maxDepth: 4 }).map((v) => ({ json: true as const, text: JSON.stringify(v) })) },
  {
    weight: 1,
    arbitrary: fc.oneof(fc.string({ maxLength: 60 }), fc.constantFrom("{", '{"a":', "[1,2", "\u0000", '{"__proto__":{"x":1}}', "1e999")).map((text) => ({ json: true as const, text })),
  },
  { weight: 1, arbitrary: fc.string({ maxLength: 60 }).map((text) => ({ json: false as const, text })) },
);

const requestArb = fc.record({ segments: fc.array(segment, { minLength: 4, maxLength: 4 }), query, body, asAllowed: fc.boolean() });

function allowedCookie(access: string): string | undefined {
  if (access === "public") return undefined;
  if (access === "signed-in") return cookies.operator;
  const role = ROLES.find((r) => access.includes(r));
  return role ? cookies[role] : undefined;
}

describe("HTTP fuzz over the route table", () => {
  it("never answers 5xx, always answers a refusal in the one error shape, and never half-writes a record", async () => {
    const routes = h.routes.filter((r) => r.path !== "/api/auth/sign-out");
    expect(routes.length).toBeGreaterThan(30);
    const problems: string[] = [];
    let sent = 0;
    for (const route of routes) {
      const before = await rowCounts(owner);
      let wrote = false;
      await fc.assert(
        fc.asyncProperty(requestArb, async ({ segments, query, body, asAllowed }) => {
          let i = 0;
          const path = route.path.replace(/:\w+/g, () => segments[i++ % segments.length]!) + query;
          const cookie = asAllowed ? allowedCookie(String(route.access)) : undefined;
          let req = h.request[route.method](path).set("Origin", ORIGIN);
          if (cookie) req = req.set("Cookie", cookie);
          if (route.method !== "get") req = req.set("Content-Type", body.json ? "application/json" : "text/plain").send(body.text);
          const res = await req;
          sent++;
          if (res.status >= 200 && res.status < 300 && route.method !== "get") wrote = true;
          const shapeOk = res.status < 400 || (typeof res.body?.error?.code === "string" && typeof res.body?.error?.message === "string");
          if (res.status >= 500 || !shapeOk) {
            throw new Error(`${route.method.toUpperCase()} ${path} → ${res.status} ${JSON.stringify(res.body).slice(0, 200)}`);
          }
        }),
        { numRuns: RUNS_PER_ROUTE, seed, endOnFailure: false },
      ).catch((error: Error) => problems.push(error.message.split("\n").slice(0, 6).join(" | ")));
      // A random body that happened to be valid may write; none did in practice, and such a route is named.
      const changed = changedCounts(before, await rowCounts(owner));
      if (changed.length && !wrote) problems.push(`${route.method.toUpperCase()} ${route.path} refused everything but changed ${changed.join(", ")}`);
    }
    expect(problems).toEqual([]);
    expect(sent).toBeGreaterThanOrEqual(routes.length * RUNS_PER_ROUTE);
  }, 240_000);
});
