import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  driveVersionsResponseSchema,
  isDriveable,
  VERSION_STATES,
  type Arm,
  type DrivingDecision,
  type Role,
  type User,
  type VersionState,
} from "@jogwright/shared";
import { call, createHarness, listenHarness, signedInUser, type Harness, type SignedInUser } from "../../test/harness.ts";
import { JogTestClient } from "../jog/jog-test-client.ts";
import { approveInDatabase, compliantParams, sixAxisArm, uniqueName } from "../../test/profiles-fixture.ts";
import { AppError } from "../../errors.ts";
import { findProfile } from "../profiles/service.ts";
import { createProfile } from "../versions/service.ts";
import { driveableVersionsFor, drivingFacts, listDriveableVersions, loadVersionForDriving } from "./service.ts";

/**
 * One driving rule (issue 8): every version state × role × ceiling flag, walked through each user of the
 * rule — the shared isDriveable, the listing's query (driveableWhere), the profile summary's driveable version,
 * driveableVersionsFor, loadVersionForDriving (the socket's check) and GET /api/drive/versions — which
 * must all agree. Before this, five copies disagreed (hub.ts, for one, ignored the ceiling flag).
 */
let h: Harness;
let arm: Arm;
const people: Record<string, SignedInUser> = {};
/** Every version made here: its profile, state, flag and the owner (the profile's operator). */
const versions: { id: number; profileId: number; state: VersionState; flagged: boolean; ownerId: string }[] = [];

const ROLE_SETS: Record<string, Role[]> = {
  // Profiles are assigned to the first two.
  ownerOperator: ["operator"],
  ownerOperatorEngineer: ["operator", "engineer"],
  otherOperator: ["operator"],
  engineer: ["engineer"],
  safetyOfficer: ["safety_officer"],
  admin: ["admin"],
  operatorOfficer: ["operator", "safety_officer"],
  operatorAdmin: ["operator", "admin"],
  officerAdmin: ["safety_officer", "admin"],
};

beforeAll(async () => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  arm = await sixAxisArm(h);
  for (const [key, roles] of Object.entries(ROLE_SETS)) {
    people[key] = await signedInUser(h, roles);
  }
  // One profile per owner × state × flag (one approved version per profile, as the workflow keeps it).
  for (const owner of [people.ownerOperator!, people.ownerOperatorEngineer!]) {
    for (const state of VERSION_STATES) {
      for (const flagged of [false, true]) {
        const profile = await createProfile(h.ctx, people.engineer!.user, {
          name: uniqueName(`rule ${state}${flagged ? " flagged" : ""}`),
          operatorId: owner.user.id,
          armId: arm.id,
          params: compliantParams(arm),
          note: "",
        });
        const id = profile.latestVersion.id;
        // Straight from draft (the lifecycle trigger allows any other state from draft); approved only through
        // an approvals row by someone other than the author (migration 0014), which also locks the row.
        if (state === "approved") await approveInDatabase(h, id, people.safetyOfficer!.user.id);
        else await h.db.query("UPDATE version_status SET state = ? WHERE version_id = ?", { replacements: [state, id] });
        if (flagged) await h.db.query("UPDATE version_status SET exceeds_ceilings = 1 WHERE version_id = ?", { replacements: [id] });
        versions.push({ id, profileId: profile.id, state, flagged, ownerId: owner.user.id });
      }
    }
  }
}, 120_000);

afterAll(async () => {
  await h?.close();
});

const decide = (v: (typeof versions)[number], user: User): DrivingDecision =>
  isDriveable({ state: v.state, exceedsCeilings: v.flagged, operatorId: v.ownerId }, user);
const ours = (id: number) => versions.some((v) => v.id === id);
const describeCase = (who: string, v: (typeof versions)[number]) =>
  `${who} · ${v.ownerId === people.ownerOperator!.user.id ? "owner operator" : "owner operator+engineer"} · ${v.state}${v.flagged ? " · flagged" : ""}`;

describe("the one driving rule", () => {
  it("covers every state × flag for two owners (24 versions) and nine role sets", () => {
    expect(versions).toHaveLength(VERSION_STATES.length * 2 * 2);
    expect(Object.keys(people)).toHaveLength(9);
  });

  it("the listing query (driveableWhere) and driveableVersionsFor select exactly what isDriveable allows, with the same kind", async () => {
    const mismatches: string[] = [];
    for (const [who, p] of Object.entries(people)) {
      const sql = new Set((await listDriveableVersions(h.db, p.user)).map((r) => r.id).filter(ours));
      const listed = new Map((await driveableVersionsFor(h.db, p.user)).filter((v) => ours(v.id)).map((v) => [v.id, v.kind]));
      for (const v of versions) {
        const d = decide(v, p.user);
        if (sql.has(v.id) !== d.isDriveable) mismatches.push(`SQL ${describeCase(who, v)}: ${sql.has(v.id)}`);
        const want = d.isDriveable ? d.kind : undefined;
        if (listed.get(v.id) !== want) mismatches.push(`listing ${describeCase(who, v)}: ${listed.get(v.id)} vs ${want}`);
      }
    }
    expect(mismatches).toEqual([]);
  });

  it("the profile summary's driveable version is the version isDriveable lets its own operator drive", async () => {
    const mismatches: string[] = [];
    for (const v of versions) {
      const profile = (await findProfile(h.db, v.profileId))!;
      const d = isDriveable(drivingFacts({ state: v.state, exceedsCeilings: v.flagged }, profile), { id: profile.operatorId, roles: ["operator"] });
      const want = d.isDriveable ? v.id : null;
      if (profile.driveableVersionId !== want) mismatches.push(`${v.state}${v.flagged ? " flagged" : ""}: ${profile.driveableVersionId} vs ${want}`);
    }
    expect(mismatches).toEqual([]);
  });

  it("loadVersionForDriving (the socket's check) allows and refuses exactly as isDriveable, with its status and code", async () => {
    const mismatches: string[] = [];
    for (const [who, p] of Object.entries(people)) {
      for (const v of versions) {
        const d = decide(v, p.user);
        let got: string;
        try {
          got = `ok ${(await loadVersionForDriving(h.db, p.user, v.id)).kind}`;
        } catch (error) {
          if (!(error instanceof AppError)) throw error;
          got = `${error.status} ${error.code}`;
        }
        const want = d.isDriveable ? `ok ${d.kind}` : `${d.status} ${d.code}`;
        if (got !== want) mismatches.push(`${describeCase(who, v)}: ${got} vs ${want}`);
      }
    }
    expect(mismatches).toEqual([]);
  });

  it("GET /api/drive/versions lists exactly what isDriveable allows for the signed-in person, with the same kind", async () => {
    const mismatches: string[] = [];
    for (const [who, p] of Object.entries(people)) {
      const res = await call(h, "get", "/api/drive/versions", p.cookie);
      expect(res.status).toBe(200);
      const body = driveVersionsResponseSchema.parse(res.body);
      const listed = new Map(body.versions.filter((v) => ours(v.id)).map((v) => [v.id, v.kind]));
      for (const v of versions) {
        const d = decide(v, p.user);
        const want = d.isDriveable ? d.kind : undefined;
        if (listed.get(v.id) !== want) mismatches.push(`${describeCase(who, v)}: ${listed.get(v.id)} vs ${want}`);
      }
    }
    expect(mismatches).toEqual([]);
  });

  it("an approved version flagged above the ceilings is listed to an engineer as a test drive, never as approved", async () => {
    const flagged = versions.find((v) => v.state === "approved" && v.flagged)!;
    const res = await call(h, "get", "/api/drive/versions", people.engineer!.cookie);
    expect(res.body.versions.find((v: { id: number }) => v.id === flagged.id)).toMatchObject({ state: "approved", exceedsCeilings: true, kind: "test-drive" });
    await expect(loadVersionForDriving(h.db, people.engineer!.user, flagged.id)).resolves.toMatchObject({ kind: "test-drive" });
  });

  it("another operator's version is refused without naming that operator: 404 to an operator, 403 to one who also reviews", async () => {
    const v = versions.find((x) => x.state === "approved" && !x.flagged && x.ownerId === people.ownerOperator!.user.id)!;
    const owner = people.ownerOperator!.user;
    for (const [who, status] of [["otherOperator", 404], ["operatorAdmin", 404], ["operatorOfficer", 403]] as const) {
      const error = await loadVersionForDriving(h.db, people[who]!.user, v.id).then(
        () => null,
        (e: unknown) => e as AppError,
      );
      expect(error?.status, who).toBe(status);
      expect(error!.message).not.toContain(owner.displayName);
      expect(error!.message).not.toContain(owner.username);
      // Nor the profile's name, which may well carry the operator's.
      expect(error!.message).not.toMatch(/rule approved/);
    }
    // The 404 is the one a missing version gets.
    const refusal = (id: number) => loadVersionForDriving(h.db, people.otherOperator!.user, id).then(() => new AppError(200, "internal", "allowed"), (e: AppError) => e);
    const missing = await refusal(2_000_000_000);
    const foreign = await refusal(v.id);
    expect({ status: foreign.status, code: foreign.code, message: foreign.message }).toEqual({ status: missing.status, code: missing.code, message: missing.message });
  });

});

describe("the driving rule on the jog socket", () => {
  it("an engineer's drive of an approved version flagged above the ceilings is marked unapproved in the session and the live list", async () => {
    const net = await listenHarness(h);
    try {
      const flagged = versions.find((v) => v.state === "approved" && v.flagged)!;
      const c = await JogTestClient.connect(net.wsUrl, { Cookie: people.engineer!.cookie, Origin: net.baseUrl });
      c.send({ type: "start", versionId: flagged.id });
      const m = await c.next((x) => x.type === "session" || x.type === "error");
      expect(m).toMatchObject({ type: "session", session: { versionState: "approved", isUnapproved: true } });
      const live = await call(h, "get", "/api/jog/live", people.engineer!.cookie);
      expect(live.body.sessions.find((s: { versionId: number }) => s.versionId === flagged.id)).toMatchObject({ isUnapproved: true });
      await c.close();
    } finally {
      await net.close();
    }
  });

  it("an operator starting another operator's version gets the same not_found as for a missing version", async () => {
    const net = await listenHarness(h);
    try {
      const foreign = versions.find((v) => v.state === "approved" && !v.flagged && v.ownerId === people.ownerOperator!.user.id)!;
      const c = await JogTestClient.connect(net.wsUrl, { Cookie: people.otherOperator!.cookie, Origin: net.baseUrl });
      c.send({ type: "start", versionId: foreign.id });
      const refused = await c.next((x) => x.type === "error" || x.type === "session");
      c.send({ type: "start", versionId: 2_000_000_000 });
      const missing = await c.next((x) => x.type === "error" || x.type === "session");
      expect(refused).toEqual(missing);
      expect(refused).toMatchObject({ type: "error", code: "not_found" });
      await c.close();
    } finally {
      await net.close();
    }
  });
});
