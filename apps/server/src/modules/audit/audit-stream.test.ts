import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { text } from "node:stream/consumers";
import { parse } from "csv-parse/sync";
import { call, createHarness, DEMO_BY_ROLE, freshUser, signIn, type Harness } from "../../test/harness.ts";
import { recordAudit, streamAuditCsv } from "./service.ts";

let h: Harness;
let actorId: string;
const N = 23;
beforeAll(async () => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  actorId = (await freshUser(h, ["engineer"])).user.id;
  await h.db.transaction(async (t) => {
    for (let i = 0; i < N; i++) {
      await recordAudit(h.db, t, { actorId, entity: "arm", entityId: 1, action: "update", summary: i === 5 ? "=1+1, with a comma" : `entry ${i}` });
    }
  });
});
afterAll(() => h.close());

describe("the audit trail's CSV export, streamed", () => {
  it("reads every entry the filter selects, newest first, across batches (keyset by id), with no row cap", async () => {
    // A batch of 7 makes 23 entries four batches, the last one short (derived).
    const rows = parse(await text(streamAuditCsv(h.db, { actorId }, 7))) as string[][];
    expect(rows[0]).toEqual(["id", "at", "actor_id", "actor_name", "entity", "entity_id", "action", "summary", "sha256_before", "sha256_after"]);
    const body = rows.slice(1);
    expect(body).toHaveLength(N);
    const ids = body.map((r) => Number(r[0]));
    expect(ids).toEqual([...ids].sort((a, b) => b - a));
    expect(new Set(ids).size).toBe(N);
    expect(body.map((r) => r[7])).toContain("'=1+1, with a comma"); // OWASP CSV injection: a formula gets an apostrophe
  });

  it("the route streams the same rows as a CSV attachment", async () => {
    const officer = await signIn(h, DEMO_BY_ROLE.safety_officer);
    const res = await call(h, "get", `/api/audit/export.csv?actorId=${actorId}`, officer);
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toMatch(/^text\/csv/);
    expect(res.headers["content-disposition"]).toMatch(/^attachment; filename="jogwright-audit-.*\.csv"$/);
    expect(res.text.endsWith("\r\n")).toBe(true);
    const rows = parse(res.text) as string[][];
    expect(rows).toHaveLength(N + 1);
  });
});
