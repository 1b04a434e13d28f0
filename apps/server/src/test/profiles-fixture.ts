import type { Sequelize } from "sequelize";
import { afterAll, beforeAll } from "vitest";
import { defaultProfileParams, type Arm, type ProfileParams, type Role } from "@jogwright/shared";
import { modelsOf } from "../db/models.ts";
import { call, demoArmId, freshUser, signIn, type Harness } from "./harness.ts";
import { createOwnerDb } from "./owner-db.ts";

/** Fresh people for one test: two engineers, two safety officers, an operator; each signed in. */
export async function freshTeam(h: Harness) {
  const make = async (roles: Role[]) => {
    const u = await freshUser(h, roles);
    return { ...u.user, cookie: await signIn(h, u.username, u.password) };
  };
  return {
    engineer: await make(["engineer"]),
    engineer2: await make(["engineer"]),
    officer: await make(["safety_officer"]),
    officer2: await make(["safety_officer"]),
    operator: await make(["operator"]),
  };
}
export type Team = Awaited<ReturnType<typeof freshTeam>>;

/**
 * Deactivate a test's people when it is done with them, so "all active safety officers" (the submit
 * mail) stays what the file's later tests expect (each file has its own database: fresh-database.ts).
 * Through the model, not the users service: this is test cleanup, not an audited change.
 */
export async function retireTeam(h: Harness, team: Team | undefined): Promise<void> {
  if (!team) return;
  const ids = Object.values(team).map((p) => p.id);
  await modelsOf(h.db).User.update({ isActive: false }, { where: { id: ids } });
}

export async function sixAxisArm(h: Harness): Promise<Arm> {
  const id = await demoArmId(h, "cell-arm-6");
  const res = await call(h, "get", `/api/arms/${id}`, (await adminlessCookie(h)));
  return res.body.arm as Arm;
}

/** A demo operator's sign-in per harness (test files that share a worker each have their own database and harness). */
const cachedCookies = new WeakMap<Harness, Promise<string>>();
function adminlessCookie(h: Harness): Promise<string> {
  let cookie = cachedCookies.get(h);
  if (!cookie) {
    cookie = signIn(h, "olena");
    cachedCookies.set(h, cookie);
  }
  return cookie;
}

/**
 * The cast most API test files start with, on the harness they made (createHarness, createMailHarness):
 * a fresh team and the demo six-axis arm. `closeWithTeam` ends such a file.
 */
export async function withTeam<H extends Harness>(h: H): Promise<{ h: H; team: Team; arm: Arm }> {
  const team = await freshTeam(h);
  return { h, team, arm: await sixAxisArm(h) };
}

/** The end of a file set up by `withTeam`: its team retired, then the owner connection (if it opened one) and the harness closed. */
export async function closeWithTeam(h: Harness | undefined, team: Team | undefined, owner?: Sequelize): Promise<void> {
  if (h) await retireTeam(h, team);
  await owner?.close();
  await h?.close();
}

/** A test file's cast from `teamForFile`, set before its tests run; `owner` only when asked for. */
export interface TeamCast<H extends Harness> {
  h: H;
  team: Team;
  arm: Arm;
  owner: Sequelize | undefined;
}

/**
 * The usual cast for a whole test file, as hooks: before its tests the harness (`makeHarness`:
 * createHarness, createMailHarness), a fresh team and the six-axis arm (withTeam) and, with `owner`, the
 * schema owner's connection; after them `beforeClose` (e.g. closeTrialPool), then closeWithTeam. Call it
 * at the top of the file (its own hooks then run after this set-up and before this end).
 */
export function teamForFile<H extends Harness>(
  makeHarness: () => H | Promise<H>,
  options: { owner?: boolean; beforeClose?: () => Promise<void> } = {},
): TeamCast<H> {
  const cast = { owner: undefined } as TeamCast<H>;
  beforeAll(async () => {
    if (options.owner) cast.owner = createOwnerDb();
    Object.assign(cast, await withTeam(await makeHarness()));
  });
  afterAll(async () => {
    await options.beforeClose?.();
    await closeWithTeam(cast.h, cast.team, cast.owner);
  });
  return cast;
}

/** Parameters within the default ceilings (half of each rated joint speed, 250 mm/s TCP). */
export const compliantParams = (arm: Arm): ProfileParams => defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));

let n = 0;
export const uniqueName = (what: string) => `${what} ${Date.now().toString(36)}-${++n}`;

/** Create a profile (version 1 draft) through the API; returns the profile summary. */
export async function createProfile(h: Harness, team: Team, arm: Arm, params = compliantParams(arm), name = uniqueName("Test profile")) {
  const res = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ name, operatorId: team.operator.id, armId: arm.id, params, note: "v1" });
  if (res.status !== 201) throw new Error(`create profile: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.profile as { id: number; name: string; latestVersion: { id: number; number: number; paramsSha256: string } };
}

/** Create, submit and approve version 1; returns the profile and the approved version. */
export async function approvedProfile(h: Harness, team: Team, arm: Arm, params = compliantParams(arm)) {
  const profile = await createProfile(h, team, arm, params);
  const v = profile.latestVersion;
  const s = await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie);
  if (s.status !== 200) throw new Error(`submit: ${s.status} ${JSON.stringify(s.body)}`);
  const a = await call(h, "post", `/api/versions/${v.id}/approve`, team.officer.cookie).send({ comment: "looks right", paramsSha256: v.paramsSha256 });
  if (a.status !== 200) throw new Error(`approve: ${a.status} ${JSON.stringify(a.body)}`);
  return { profile, version: a.body.version as { id: number; number: number; paramsSha256: string } };
}

/**
 * Approve a version through the models, past the workflow service, as the database allows it (migration
 * 0014): submit it if it is a draft, then insert its approvals row, whose triggers lock it and set it
 * approved. For tests that need versions in a given state quickly; `approverId` must not be the author.
 */
export async function approveInDatabase(h: Harness, versionId: number, approverId: string, comment = "approved for a test"): Promise<void> {
  const { Version, VersionStatus, Approval } = modelsOf(h.db);
  await VersionStatus.update({ state: "submitted", submittedAt: new Date() }, { where: { versionId, state: "draft" } });
  const version = await Version.findByPk(versionId, { attributes: ["paramsSha256"] });
  await Approval.create({ versionId, approverId, comment, paramsSha256: version!.paramsSha256 });
}
