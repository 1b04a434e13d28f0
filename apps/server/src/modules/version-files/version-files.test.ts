import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { versionFileSchema, type VersionFile } from "@jogwright/shared";
import { sha256OfCanonical } from "../../hashing.ts";
import { call, createHarness, type Harness } from "../../test/harness.ts";
import { closeWithTeam, compliantParams, createProfile, freshTeam, retireTeam, sixAxisArm, withTeam, type Team } from "../../test/profiles-fixture.ts";

let h: Harness;
let team: Team;
beforeAll(async () => ({ h, team } = await withTeam(createHarness({ SIGN_IN_MAX_FAILURES: "1000" }))));
afterAll(() => closeWithTeam(h, team));

const versionCount = async () =>
  Number((await h.db.query<{ n: number }>("SELECT COUNT(*) AS n FROM profile_versions", { type: QueryTypes.SELECT }))[0]!.n);

async function exported(versionId: number, cookie = team.engineer.cookie): Promise<VersionFile> {
  const res = await call(h, "get", `/api/versions/${versionId}/export`, cookie);
  expect(res.status).toBe(200);
  expect(res.headers["content-disposition"]).toMatch(/attachment; filename="?profile-\d+-v\d+\.json"?/);
  return versionFileSchema.parse(res.body);
}

describe("profile version files", () => {
  it("export → import gives a new draft with the same parameters and hash, on the same arm revision and tool", async () => {
    const arm = await sixAxisArm(h);
    const params = { ...compliantParams(arm), tcpLinearCapMPerS: 0.2 };
    const profile = await createProfile(h, team, arm, params);
    const file = await exported(profile.latestVersion.id);
    expect(file.paramsSha256).toBe(profile.latestVersion.paramsSha256);
    expect(file.paramsSha256).toBe(sha256OfCanonical(file.params)); // hashing.ts: SHA-256 of canonical JSON
    expect(file.arm).toMatchObject({ id: arm.id, revision: 1 });
    expect(file.tool?.name).toBe("Flange tool");

    // Through JSON text, as a person downloads and uploads it.
    const res = await call(h, "post", `/api/profiles/${profile.id}/import`, team.engineer.cookie).send(JSON.parse(JSON.stringify(file)));
    expect(res.status).toBe(201);
    expect(res.body.version).toMatchObject({ number: 2, state: "draft", paramsSha256: file.paramsSha256, params: file.params });
    const again = await exported(res.body.version.id);
    expect(again.params).toEqual(file.params);
    expect(again.paramsSha256).toBe(file.paramsSha256);
    expect({ arm: again.arm, tool: again.tool }).toEqual({ arm: file.arm, tool: file.tool });
  });

  it("a file whose parameters were changed after export is refused with 422 naming the hash, and nothing is saved", async () => {
    const arm = await sixAxisArm(h);
    const profile = await createProfile(h, team, arm);
    const file = await exported(profile.latestVersion.id);
    const before = await versionCount();
    const tampered = { ...file, params: { ...file.params, tcpLinearCapMPerS: file.params.tcpLinearCapMPerS * 0.9 } };
    const res = await call(h, "post", `/api/profiles/${profile.id}/import`, team.engineer.cookie).send(tampered);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/changed after it was exported/);
    expect(res.body.error.issues[0].path).toBe("paramsSha256");
    expect(await versionCount()).toBe(before);
  });

  it("a file for another arm, above the site ceilings, or not a version file at all is refused, and nothing is saved", async () => {
    const arm = await sixAxisArm(h);
    const profile = await createProfile(h, team, arm);
    const file = await exported(profile.latestVersion.id);
    const before = await versionCount();
    const otherArm = { ...file, arm: { ...file.arm, id: file.arm.id + 1000 } };
    const r1 = await call(h, "post", `/api/profiles/${profile.id}/import`, team.engineer.cookie).send(otherArm);
    expect(r1.status).toBe(422);
    expect(r1.body.error.issues[0].path).toBe("arm.id");
    // 300 mm/s is above the default TCP ceiling of 250 mm/s (ISO 10218-1:2011 manual reduced speed); the hash is made to match.
    const fast = { ...file.params, tcpLinearCapMPerS: 0.3 };
    const r2 = await call(h, "post", `/api/profiles/${profile.id}/import`, team.engineer.cookie).send({ ...file, params: fast, paramsSha256: sha256OfCanonical(fast) });
    expect(r2.status).toBe(422);
    expect(r2.body.error.code).toBe("ceiling_exceeded");
    const r3 = await call(h, "post", `/api/profiles/${profile.id}/import`, team.engineer.cookie).send({ ...file, schemaVersion: 2 });
    expect(r3.status).toBe(400);
    expect(r3.body.error.issues[0].path).toBe("schemaVersion");
    expect(await versionCount()).toBe(before);
  });

  it("an operator exports only versions of their own profiles", async () => {
    const arm = await sixAxisArm(h);
    const profile = await createProfile(h, team, arm);
    await exported(profile.latestVersion.id, team.operator.cookie);
    const other = await freshTeam(h);
    expect((await call(h, "get", `/api/versions/${profile.latestVersion.id}/export`, other.operator.cookie)).status).toBe(404);
    await retireTeam(h, other);
  });
});
