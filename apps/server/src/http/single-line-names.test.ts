import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { SINGLE_LINE_MESSAGE, type Arm } from "@jogwright/shared";
import { call, createHarness, DEMO_BY_ROLE, freshUser, signIn, type Harness } from "../test/harness.ts";
import { closeWithTeam, compliantParams, withTeam, type Team } from "../test/profiles-fixture.ts";

/**
 * Names are shown on one line in lists, the audit log and mail subjects: a CR/LF (or any control
 * character) in one is refused at the API with a message naming the field, and nothing is written.
 */
let h: Harness;
let team: Team;
let arm: Arm;
let admin: string;
beforeAll(async () => {
  ({ h, team, arm } = await withTeam(createHarness({ SIGN_IN_MAX_FAILURES: "1000" })));
  admin = await signIn(h, DEMO_BY_ROLE.admin);
});
afterAll(() => closeWithTeam(h, team));

const countRows = async (sql: string, replacements: unknown[]) =>
  ((await h.db.query<{ n: number }>(sql, { replacements, type: QueryTypes.SELECT }))[0]!.n as number);

describe("names with line breaks or control characters", () => {
  it("a profile name with CR/LF is refused on the name field, and no profile is created", async () => {
    const name = `Night shift ${Date.now().toString(36)}\r\nBcc: someone@example.com`;
    const res = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ name, operatorId: team.operator.id, armId: arm.id, params: compliantParams(arm) });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(res.body.error.issues).toEqual([{ path: "name", message: SINGLE_LINE_MESSAGE }]);
    expect(res.body.error.message).toContain("line breaks");
    expect(await countRows("SELECT COUNT(*) AS n FROM profiles WHERE name LIKE ?", [`${name.split("\r")[0]}%`])).toBe(0);
  });

  it("a display name with a line feed is refused when a user is created and when one is renamed", async () => {
    const username = `ctl${Date.now().toString(36)}`;
    const created = await call(h, "post", "/api/users", admin).send({ username, displayName: "Nadia\nKowal", email: `${username}@x.example`, password: "a-good-long-password", roles: ["operator"] });
    expect(created.status).toBe(400);
    expect(created.body.error.issues).toEqual([{ path: "displayName", message: SINGLE_LINE_MESSAGE }]);
    expect(await countRows("SELECT COUNT(*) AS n FROM users WHERE username = ?", [username])).toBe(0);

    const { user } = await freshUser(h, ["operator"]);
    const renamed = await call(h, "patch", `/api/users/${user.id}`, admin).send({ displayName: "Tab\there" });
    expect(renamed.status).toBe(400);
    expect(renamed.body.error.issues).toEqual([{ path: "displayName", message: SINGLE_LINE_MESSAGE }]);
    expect(await countRows("SELECT COUNT(*) AS n FROM users WHERE id = ? AND display_name = ?", [user.id, user.displayName])).toBe(1);
  });
});
