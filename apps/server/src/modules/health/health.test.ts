import { describe, expect, it } from "vitest";
import { healthSchema } from "@jogwright/shared";
import { createHarness } from "../../test/harness.ts";

describe("GET /api/health", () => {
  it("answers ok when the database answers", async () => {
    const h = createHarness();
    try {
      const res = await h.request.get("/api/health");
      expect(res.status).toBe(200);
      expect(healthSchema.parse(res.body)).toEqual({ status: "ok", database: "ok" });
    } finally {
      await h.close();
    }
  });

  it("answers 503 with database down when the database is gone", async () => {
    const h = createHarness();
    await h.db.close();
    const res = await h.request.get("/api/health");
    expect(res.status).toBe(503);
    expect(healthSchema.parse(res.body)).toEqual({ status: "degraded", database: "down" });
  });
});
