import { afterEach, describe, expect, it, vi } from "vitest";
import { apiRequest, ApiRequestError } from "./api-client.ts";
import { isDatabaseUnavailable, reportDatabaseAvailable } from "./database-status.ts";

function answer(status: number, body: unknown): Response {
  return new Response(JSON.stringify(body), { status, headers: { "Content-Type": "application/json" } });
}

describe("the database status the app shell's banner reads", () => {
  afterEach(() => {
    vi.unstubAllGlobals();
    reportDatabaseAvailable();
  });

  it("turns on when an answer says database_unavailable, and off at the next successful answer", async () => {
    const body = { error: { code: "database_unavailable", message: "The database is not answering." } };
    vi.stubGlobal("fetch", vi.fn(async () => answer(503, body)));
    const error = await apiRequest("/api/arms").catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ApiRequestError);
    expect((error as ApiRequestError).code).toBe("database_unavailable");
    expect(isDatabaseUnavailable()).toBe(true);

    vi.stubGlobal("fetch", vi.fn(async () => answer(200, {})));
    await apiRequest("/api/arms");
    expect(isDatabaseUnavailable()).toBe(false);
  });

  it("stays off for other server errors", async () => {
    vi.stubGlobal("fetch", vi.fn(async () => answer(500, { error: { code: "internal", message: "Something went wrong." } })));
    await apiRequest("/api/arms").catch(() => undefined);
    expect(isDatabaseUnavailable()).toBe(false);
  });
});
