import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { createHarness, type Harness } from "../test/harness.ts";

/**
 * The security headers of every answer, on the console's page and on the API, and the built console's
 * source maps staying unpublished. The console here is a stand-in dist folder with a page, a bundle and
 * its map, so the test does not depend on a build.
 */
let dist: string;
let h: Harness;
let production: Harness;
beforeAll(() => {
  dist = mkdtempSync(path.join(tmpdir(), "jogwright-dist-"));
  mkdirSync(path.join(dist, "assets"));
  writeFileSync(path.join(dist, "index.html"), '<!doctype html><title>Jogwright</title><div id="root"></div><script type="module" src="/assets/index-abc.js"></script>');
  writeFileSync(path.join(dist, "assets/index-abc.js"), 'console.log("console");\n');
  writeFileSync(path.join(dist, "assets/index-abc.js.map"), '{"version":3,"sources":["../src/main.tsx"],"sourcesContent":["secret source"],"mappings":""}');
  h = createHarness({ CONSOLE_DIST: dist });
  production = createHarness({ CONSOLE_DIST: dist, NODE_ENV: "production", PUBLIC_ORIGIN: "https://jog.example" });
});
afterAll(async () => {
  await h?.close();
  await production?.close();
  rmSync(dist, { recursive: true, force: true });
});

/** "default-src 'self'; img-src 'self'" → { "default-src": ["'self'"], … } */
function directives(csp: string | undefined): Record<string, string[]> {
  expect(csp, "Content-Security-Policy header").toBeTruthy();
  return Object.fromEntries(
    csp!.split(";").map((d) => d.trim()).filter(Boolean).map((d) => {
      const [name, ...values] = d.split(/\s+/);
      return [name!, values];
    }),
  );
}

describe.each([
  ["the console page /", "/"],
  ["a console route such as /drive", "/drive"],
  ["the API's /api/health", "/api/health"],
])("%s", (_what, url) => {
  it("carries a content security policy that allows only our own origin", async () => {
    const res = await h.request.get(url).set("Host", "127.0.0.1");
    expect(res.status).toBe(200);
    const csp = directives(res.headers["content-security-policy"]);
    expect(csp["default-src"]).toEqual(["'self'"]);
    expect(csp["script-src"]).toEqual(["'self'"]);
    expect(csp["style-src"]).toEqual(["'self'"]);
    expect(csp["font-src"]).toEqual(["'self'"]);
    // The harness's public origin is http://127.0.0.1: the jog socket is ws://127.0.0.1 (derived).
    expect(csp["connect-src"]).toEqual(["'self'", "ws://127.0.0.1"]);
    expect(csp["object-src"]).toEqual(["'none'"]);
    expect(csp["base-uri"]).toEqual(["'none'"]);
    expect(csp["frame-ancestors"]).toEqual(["'none'"]);
    const everySource = Object.values(csp).flat();
    expect(everySource.filter((s) => s.includes("*") || ["http:", "https:", "data:", "blob:", "'unsafe-inline'", "'unsafe-eval'"].includes(s))).toEqual([]);
    // Plain http on loopback: requests must not be rewritten to https.
    expect(csp["upgrade-insecure-requests"]).toBeUndefined();
  });

  it("forbids framing and MIME sniffing, sends no Referer to other sites, and does not announce Express", async () => {
    const res = await h.request.get(url).set("Host", "127.0.0.1");
    expect(res.headers["x-frame-options"]).toBe("DENY");
    expect(res.headers["x-content-type-options"]).toBe("nosniff");
    // same-origin, not no-referrer: under no-referrer browsers may send `Origin: null` on our own POSTs.
    expect(res.headers["referrer-policy"]).toBe("same-origin");
    expect(res.headers["x-powered-by"]).toBeUndefined();
    // HSTS only when the public origin is https (not on the harness's http://127.0.0.1).
    expect(res.headers["strict-transport-security"]).toBeUndefined();
  });
});

describe("behind https", () => {
  it("the socket source is wss: on the public host, and HSTS is sent", async () => {
    const res = await production.request.get("/").set("Host", "jog.example");
    expect(directives(res.headers["content-security-policy"])["connect-src"]).toEqual(["'self'", "wss://jog.example"]);
    expect(res.headers["strict-transport-security"]).toBe("max-age=15552000");
  });
});

describe("source maps", () => {
  it.each([
    ["in test", () => h],
    ["in production", () => production],
  ])("are not served %s, while the bundle itself is", async (_env, harness) => {
    const bundle = await harness().request.get("/assets/index-abc.js");
    expect(bundle.status).toBe(200);
    for (const url of ["/assets/index-abc.js.map", "/assets/INDEX-ABC.JS.MAP", "/assets/missing.js.map"]) {
      const res = await harness().request.get(url);
      expect(res.status, url).toBe(404);
      expect(res.text).not.toContain("secret source");
      expect(res.text).not.toContain("<title>Jogwright</title>");
    }
  });
});

describe("the console page with a malformed session cookie", () => {
  it("is the normal page, and nothing is logged", async () => {
    const logged = vi.spyOn(console, "error");
    try {
      const res = await h.request.get("/").set("Host", "127.0.0.1").set("Cookie", "jogwright_session=%E0%A4%A");
      expect(res.status).toBe(200);
      expect(res.text).toContain("<title>Jogwright</title>");
      expect(logged).not.toHaveBeenCalled();
    } finally {
      logged.mockRestore();
    }
  });
});
