import { beforeAll, describe, expect, it } from "vitest";
import { auditEntrySchema } from "@jogwright/shared";
import { call, createMailHarness, DEMO_BY_ROLE, signIn } from "../../test/harness.ts";
import { approvedProfile, teamForFile } from "../../test/profiles-fixture.ts";
import { createUser } from "../users/service.ts";
import { csvCell } from "./service.ts";
import { createOwnerDb } from "../../test/owner-db.ts";

const cast = teamForFile(createMailHarness);
let admin: string;
let officer: string;
beforeAll(async () => {
  admin = await signIn(cast.h, DEMO_BY_ROLE.admin);
  officer = await signIn(cast.h, DEMO_BY_ROLE.safety_officer);
});

const HEX64 = /^[0-9a-f]{64}$/;

describe("the audit trail", () => {
  it("records each workflow step with who did it and the record's hash before and after", async () => {
    const { profile, version } = await approvedProfile(cast.h, cast.team, cast.arm);
    const res = await call(cast.h, "get", `/api/audit?actorId=${cast.team.engineer.id}`, officer);
    expect(res.status).toBe(200);
    const entries = res.body.entries.map((e: unknown) => auditEntrySchema.parse(e));
    const created = entries.find((e: { entity: string; entityId: string }) => e.entity === "profile" && e.entityId === String(profile.id));
    expect(created).toMatchObject({ action: "create", actorId: cast.team.engineer.id, actorName: cast.team.engineer.displayName, sha256Before: null });
    expect(created.sha256After).toMatch(HEX64);
    const submit = entries.find((e: { action: string; entityId: string }) => e.action === "submit" && e.entityId === String(version.id));
    expect(submit.sha256Before).toMatch(HEX64);
    expect(submit.sha256After).toMatch(HEX64);
    expect(submit.sha256After).not.toBe(submit.sha256Before);

    const byOfficer = (await call(cast.h, "get", `/api/audit?actorId=${cast.team.officer.id}`, admin)).body.entries;
    expect(byOfficer.map((e: { entity: string; action: string }) => `${e.entity}:${e.action}`)).toEqual(expect.arrayContaining(["version:approve", "approval:create"]));
  });

  it("filters by entity, action and time, and pages through the result", async () => {
    await approvedProfile(cast.h, cast.team, cast.arm);
    await approvedProfile(cast.h, cast.team, cast.arm);
    const from = new Date(Date.now() - 60 * 60 * 1000).toISOString();
    const base = `entity=version&action=approve&actorId=${cast.team.officer.id}`;
    const q = `${base}&from=${encodeURIComponent(from)}`;
    const page1 = (await call(cast.h, "get", `/api/audit?${q}&page=1&pageSize=1`, officer)).body;
    const page2 = (await call(cast.h, "get", `/api/audit?${q}&page=2&pageSize=1`, officer)).body;
    expect(page1.total).toBeGreaterThanOrEqual(2);
    expect(page1).toMatchObject({ page: 1, pageSize: 1 });
    expect(page1.entries).toHaveLength(1);
    expect(page2.entries).toHaveLength(1);
    expect(page2.entries[0].id).toBeLessThan(page1.entries[0].id);
    for (const e of [...page1.entries, ...page2.entries]) expect(e).toMatchObject({ entity: "version", action: "approve" });
    const future = new Date(Date.now() + 60 * 60 * 1000).toISOString();
    expect((await call(cast.h, "get", `/api/audit?${base}&from=${encodeURIComponent(future)}`, officer)).body.total).toBe(0);
    expect((await call(cast.h, "get", "/api/audit?entity=spaceship", officer)).status).toBe(400);
  });

  it("records account changes by admins without password hashes", async () => {
    const username = `aud${Date.now().toString(36)}`;
    const created = await call(cast.h, "post", "/api/users", admin).send({ username, displayName: "Audit Subject", email: `${username}@test.example`, password: "a-long-password-1", roles: ["operator"] });
    const id = created.body.user.id;
    await call(cast.h, "patch", `/api/users/${id}`, admin).send({ roles: ["operator", "engineer"] }).expect(200);
    await call(cast.h, "patch", `/api/users/${id}`, admin).send({ isActive: false }).expect(200);
    const entries = (await call(cast.h, "get", `/api/audit?entity=user`, admin)).body.entries.filter((e: { entityId: string }) => e.entityId === id);
    expect(entries.map((e: { action: string }) => e.action)).toEqual(["deactivate", "roles", "create"]);
    expect(entries[1].summary).toContain("roles operator → operator, engineer");
    expect(entries[1].sha256Before).toMatch(HEX64);
  });

  it("exports the filtered trail as CSV, quoted per RFC 4180 and safe against formula injection", async () => {
    const user = await createUser(cast.h.db, { username: `csv${Date.now().toString(36)}`, displayName: '=HYPERLINK("x",1)', email: "csv@test.example", password: "a-long-password-1", roles: ["engineer"] });
    await call(cast.h, "patch", `/api/users/${user.id}`, admin).send({ isActive: false }).expect(200);
    const res = await call(cast.h, "get", `/api/audit/export.csv?entity=user&action=deactivate`, admin);
    expect(res.status).toBe(200);
    expect(res.headers["content-type"]).toMatch(/^text\/csv/);
    expect(res.headers["content-disposition"]).toMatch(/^attachment; filename="jogwright-audit-.*\.csv"$/);
    const lines = res.text.split("\r\n");
    expect(lines[0]).toBe("id,at,actor_id,actor_name,entity,entity_id,action,summary,sha256_before,sha256_after");
    const line = lines.find((l) => l.includes(user.id))!;
    expect(line).toContain(",user,");
    // csvCell is the one quoting rule; the cases below are RFC 4180 §2 (quotes doubled) and OWASP CSV injection.
    expect(csvCell('=HYPERLINK("x",1)')).toBe(`"'=HYPERLINK(""x"",1)"`);
    expect(csvCell("+1")).toBe("'+1");
    expect(csvCell("@SUM(A1)")).toBe("'@SUM(A1)");
    expect(csvCell("-2")).toBe("'-2");
    expect(csvCell("line\nbreak")).toBe('"line\nbreak"');
    expect(csvCell(42)).toBe("42");
    expect(csvCell(null)).toBe("");
  });

  it("names what each entry is about as people do: a version as \"name\" v1, never its row id; fields by their labels", async () => {
    // Issue 13, item 9: the page once read "version #7" for what everyone else calls v6, and a flag's
    // summary listed "(tcpLinearCapMPerS)".
    const { profile, version } = await approvedProfile(cast.h, cast.team, cast.arm);
    const entries: { entity: string; entityId: string; entityLabel: string; action: string; summary: string }[] = (
      await call(cast.h, "get", `/api/audit?entity=version&actorId=${cast.team.engineer.id}&pageSize=200`, officer)
    ).body.entries;
    const saved = entries.find((e) => e.entityId === String(version.id) && e.action === "submit")!;
    expect(saved.entityLabel).toBe(`"${profile.name}" v${version.number}`);
    const approval = (await call(cast.h, "get", `/api/audit?entity=approval&actorId=${cast.team.officer.id}`, officer)).body.entries[0];
    expect(approval.entityLabel).toMatch(/^".*" v\d+$/);
    const account = (await call(cast.h, "get", `/api/audit?entity=user`, admin)).body.entries[0];
    expect(account.entityLabel).not.toMatch(/^#/);

    const before = (await call(cast.h, "get", "/api/ceilings", cast.team.officer.cookie)).body;
    const lowered = { ...before.ceilings, tcpLinearMaxMPerS: 0.01 };
    const put = await call(cast.h, "put", "/api/ceilings", cast.team.officer.cookie).send({ revision: before.revision, ceilings: lowered, note: "audit wording" });
    expect(put.status).toBe(200);
    try {
      const flag = (await call(cast.h, "get", `/api/audit?entity=version&action=flag`, officer)).body.entries.find((e: { entityId: string }) => e.entityId === String(version.id));
      expect(flag.summary).toContain("TCP linear cap");
      expect(flag.summary).not.toMatch(/tcpLinearCapMPerS/);
      expect(flag.summary).toContain(`v${version.number}`);
      const ceilingsEntry = (await call(cast.h, "get", `/api/audit?entity=ceilings`, officer)).body.entries[0];
      expect(ceilingsEntry.entityLabel).toBe(`revision ${put.body.record.revision}`);
    } finally {
      const now = (await call(cast.h, "get", "/api/ceilings", cast.team.officer.cookie)).body;
      await call(cast.h, "put", "/api/ceilings", cast.team.officer.cookie).send({ revision: now.revision, ceilings: before.ceilings, note: "restore" }).expect(200);
    }
  });

  it("refuses a period whose start is after its end, with a message", async () => {
    const res = await call(cast.h, "get", `/api/audit?from=${encodeURIComponent("2026-12-03T00:00:00.000Z")}&to=${encodeURIComponent("2026-12-01T23:59:59.999Z")}`, officer);
    expect(res.status).toBe(400);
    expect(res.body.error.issues).toEqual([{ path: "to", message: "the start of the period must not be after its end" }]);
  });

  it("entries cannot be updated or deleted, even with raw SQL", async () => {
    await expect(cast.h.db.query("UPDATE audit_log SET summary = 'rewritten' ORDER BY id DESC LIMIT 1")).rejects.toThrow(/append-only/);
    // The runtime account may not delete here at all (db/privileges.ts); the trigger refuses even the owner.
    await expect(cast.h.db.query("DELETE FROM audit_log ORDER BY id DESC LIMIT 1")).rejects.toThrow(/DELETE command denied|append-only/);
    const owner = createOwnerDb();
    try {
      await expect(owner.query("UPDATE audit_log SET summary = 'rewritten' ORDER BY id DESC LIMIT 1")).rejects.toThrow(/append-only/);
      await expect(owner.query("DELETE FROM audit_log ORDER BY id DESC LIMIT 1")).rejects.toThrow(/append-only/);
    } finally {
      await owner.close();
    }
  });
});
