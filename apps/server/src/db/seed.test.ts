import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { call, createHarness, signIn, type Harness } from "../test/harness.ts";
import { seedDemo } from "./seed.ts";

let h: Harness;
beforeAll(() => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
});
afterAll(() => h.close());

describe("the demo seed", () => {
  it("runs again without error, without touching locked rows and without duplicating anything", async () => {
    const count = async () =>
      (await h.db.query<{ n: number | bigint }>("SELECT COUNT(*) AS n FROM profiles WHERE name IN ('Olena — pack opening', 'Tomás — cover plates')", { type: QueryTypes.SELECT }))[0]!.n;
    const before = Number(await count());
    await seedDemo(h.db);
    await seedDemo(h.db);
    expect(Number(await count())).toBe(before);
    expect(before).toBe(2);
  });

  it("lets Olena drive version 1 of her profile, approved by Sigrid and written by Emeka, with version 2 awaiting review", async () => {
    const olena = await signIn(h, "olena");
    const list = await call(h, "get", "/api/profiles", olena);
    const profile = list.body.profiles.find((p: { name: string }) => p.name === "Olena — pack opening");
    expect(profile).toBeDefined();
    const detail = await call(h, "get", `/api/profiles/${profile.id}`, olena);
    const [v2, v1] = detail.body.versions;
    expect(v1).toMatchObject({ number: 1, authorName: "Emeka Obi" });
    expect(v2).toMatchObject({ number: 2, parentVersionId: v1.id });
    // Other tests may move the demo versions on; when untouched they are as seeded.
    if (v1.state === "approved" && !v1.exceedsCeilings) {
      expect(v1.decidedByName).toBe("Sigrid Hale");
      expect(detail.body.profile.driveableVersionId).toBe(v1.id);
    }
    const review = await call(h, "get", `/api/versions/${v1.id}`, olena);
    expect(review.body.approval).toMatchObject({ approverName: "Sigrid Hale", paramsSha256: v1.paramsSha256 });
    expect(review.body.violations).toEqual([]);
  });

  it("seeds every demo profile with the stop-before guard, and the seven-axis one with the null-space term on", async () => {
    const sigrid = await signIn(h, "sigrid");
    const profiles = (await call(h, "get", "/api/profiles", sigrid)).body.profiles as { id: number; name: string }[];
    const demo = profiles.filter((p) => p.name === "Olena — pack opening" || p.name === "Tomás — cover plates");
    expect(demo).toHaveLength(2);
    for (const p of demo) {
      const versions = (await call(h, "get", `/api/profiles/${p.id}`, sigrid)).body.versions as { number: number; params: { guard: { policy: string }; nullSpace: { enabled: boolean } } }[];
      // Version numbers 1 and 2 are the seed's own; later ones are other tests'.
      for (const v of versions.filter((x) => x.number <= 2)) expect(v.params.guard.policy, `${p.name} v${v.number}`).toBe("stop-before");
      if (p.name === "Tomás — cover plates") expect(versions.find((v) => v.number === 1)!.params.nullSpace.enabled).toBe(true);
    }
    // The site's default ceilings still leave the choice to the safety officer.
    const ceilings = (await call(h, "get", "/api/ceilings", sigrid)).body.ceilings;
    expect(ceilings.allowedGuardPolicies).toEqual(expect.arrayContaining(["damp-through", "stop-before"]));
  });

  it("the seeded approval is consistent with the lifecycle triggers: locked row, approved state, approval hash equal to the version's", async () => {
    const rows = await h.db.query<{ locked_at: Date | null; state: string; params_sha256: string; approval_sha: string | null; exceeds_ceilings: number }>(
      `SELECT v.locked_at, s.state, v.params_sha256, ap.params_sha256 AS approval_sha, s.exceeds_ceilings
       FROM profiles p JOIN profile_versions v ON v.profile_id = p.id AND v.number = 1
       JOIN version_status s ON s.version_id = v.id LEFT JOIN approvals ap ON ap.version_id = v.id
       WHERE p.name = 'Olena — pack opening'`,
      { type: QueryTypes.SELECT },
    );
    const v1 = rows[0]!;
    expect(v1.locked_at).not.toBeNull();
    expect(["approved", "superseded", "retired"]).toContain(v1.state);
    expect(v1.approval_sha).toBe(v1.params_sha256);
    // The seed's defaults are within the default ceilings, new stop ceilings included: not flagged.
    if (v1.state === "approved") expect(v1.exceeds_ceilings).toBe(0);
  });
});
