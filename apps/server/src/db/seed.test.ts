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
});
