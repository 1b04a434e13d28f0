import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, DEMO_BY_ROLE, freshUser, harnessSignedInAs, signIn, type Harness } from "../../test/harness.ts";

let h: Harness;
let admin: string;
beforeAll(async () => ({ h, cookie: admin } = await harnessSignedInAs(DEMO_BY_ROLE.admin)));
afterAll(() => h.close());

const newUser = (username: string) => ({
  username,
  displayName: "Nadia Kowal",
  email: `${username}@cell-b.example`,
  password: "a-good-long-password",
  roles: ["operator", "engineer"],
});

describe("user administration", () => {
  it("an admin creates a user with several roles, who can then sign in", async () => {
    const username = `nadia${Date.now().toString(36)}`;
    const res = await call(h, "post", "/api/users", admin).send(newUser(username));
    expect(res.status).toBe(201);
    expect(res.body.user).toMatchObject({ username, roles: ["operator", "engineer"], isActive: true });
    const cookie = await signIn(h, username, "a-good-long-password");
    const me = await call(h, "get", "/api/auth/me", cookie);
    expect(me.body.user.roles).toEqual(["operator", "engineer"]);
  });

  it("a taken user name is a 409 on the username field, and nothing is half-written", async () => {
    const username = `dup${Date.now().toString(36)}`;
    await call(h, "post", "/api/users", admin).send(newUser(username)).expect(201);
    const res = await call(h, "post", "/api/users", admin).send({ ...newUser(username), displayName: "Other" });
    expect(res.status).toBe(409);
    expect(res.body.error.issues).toEqual([{ path: "username", message: "this user name is taken" }]);
    const list = await call(h, "get", "/api/users", admin);
    expect(list.body.users.filter((u: { username: string }) => u.username === username)).toHaveLength(1);
  });

  it("editing roles replaces them; deactivating ends the user's sessions at once", async () => {
    const { user, username, password } = await freshUser(h, ["operator"]);
    const theirs = await signIn(h, username, password);
    const edited = await call(h, "patch", `/api/users/${user.id}`, admin).send({ roles: ["safety_officer"], displayName: "Renamed" });
    expect(edited.status).toBe(200);
    expect(edited.body.user).toMatchObject({ roles: ["safety_officer"], displayName: "Renamed" });
    const deactivated = await call(h, "patch", `/api/users/${user.id}`, admin).send({ isActive: false });
    expect(deactivated.body.user.isActive).toBe(false);
    expect((await call(h, "get", "/api/auth/me", theirs)).status).toBe(401);
    expect((await call(h, "post", "/api/auth/sign-in").send({ username, password })).status).toBe(403);
  });

  it("a new password works and the old one no longer does", async () => {
    const { user, username, password } = await freshUser(h, ["operator"]);
    await call(h, "patch", `/api/users/${user.id}`, admin).send({ password: "brand-new-password" }).expect(200);
    expect((await call(h, "post", "/api/auth/sign-in").send({ username, password })).status).toBe(401);
    expect((await call(h, "post", "/api/auth/sign-in").send({ username, password: "brand-new-password" })).status).toBe(200);
  });

  it("an admin cannot deactivate themselves or drop their own admin role", async () => {
    const me = (await call(h, "get", "/api/auth/me", admin)).body.user;
    const off = await call(h, "patch", `/api/users/${me.id}`, admin).send({ isActive: false });
    expect(off.status).toBe(409);
    const demote = await call(h, "patch", `/api/users/${me.id}`, admin).send({ roles: ["operator"] });
    expect(demote.status).toBe(409);
    expect((await call(h, "get", "/api/auth/me", admin)).body.user.roles).toContain("admin");
  });

  it("editing an unknown user is a 404", async () => {
    const res = await call(h, "patch", "/api/users/zzzzzzzzzzzzzzzz", admin).send({ displayName: "Ghost" });
    expect(res.status).toBe(404);
  });

  it("an empty edit is refused", async () => {
    const { user } = await freshUser(h, ["operator"]);
    const res = await call(h, "patch", `/api/users/${user.id}`, admin).send({});
    expect(res.status).toBe(400);
  });
});
