import { col, fn, Op, type Sequelize, type Transaction, type WhereOptions } from "sequelize";
import { DRIVING_RULE, hasAnyRole, isDriveable, type ProfileSummary, type ProfileVersion, type User } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { modelsOf } from "../../db/models.ts";
import { listVersionArmRefs } from "../arms/service.ts";
import type { ProfileModel } from "./model.ts";

/**
 * Rate profiles as people see them: who may see which (the visibility rule), the summaries (with the
 * latest version and the version the profile's operator may drive), one profile with its versions.
 * Saving a profile or a version is the versions module's; this module reads the versions' rows through
 * the Profile–Version association (db/models.ts) and never writes them.
 */

const isStaff = (user: Pick<User, "roles">) => hasAnyRole(user.roles, ["engineer", "safety_officer"]);

/** The visibility rule: engineers and safety officers see every profile; an operator only their own. */
export function canSee(user: Pick<User, "id" | "roles">, profile: { operatorId: string }): boolean {
  return isStaff(user) || (user.roles.includes("operator") && profile.operatorId === user.id);
}

/** The profile if `user` may see it; otherwise 404, the answer a missing profile gets. */
export async function visibleProfile(db: Sequelize, user: User, id: number, transaction?: Transaction): Promise<ProfileSummary> {
  const profile = await findProfile(db, id, transaction);
  if (!profile || !canSee(user, profile)) throw new AppError(404, "not_found", "No such profile.");
  return profile;
}

/** The version label every message uses: "Name" vN. */
export const versionLabel = (profile: { name: string }, version: { number: number }) => `"${profile.name}" v${version.number}`;

export async function findProfile(db: Sequelize, id: number, transaction?: Transaction): Promise<ProfileSummary | null> {
  return (await summaries(db, { id }, transaction))[0] ?? null;
}

export async function findProfileByName(db: Sequelize, name: string, operatorId: string): Promise<ProfileSummary | null> {
  return (await summaries(db, { name, operatorId }))[0] ?? null;
}

export async function listProfilesFor(db: Sequelize, user: User): Promise<ProfileSummary[]> {
  return summaries(db, isStaff(user) ? {} : { operatorId: user.id });
}

/** GET /api/profiles/:id: the profile and its versions, newest first, each naming the arm revision and tool it drives. */
export async function getProfile(db: Sequelize, user: User, id: number): Promise<{ profile: ProfileSummary; versions: ProfileVersion[] }> {
  const profile = await visibleProfile(db, user, id);
  const versions = await modelsOf(db).Version.scope("withStatus").findAll({ where: { profileId: id }, order: [["number", "DESC"]] });
  const arms = await listVersionArmRefs(db, versions.map((v) => v.id));
  return { profile, versions: versions.map((v) => ({ ...v.toApi(), ...arms.get(v.id) })) };
}

/** Lock the profile row until `transaction` ends: every change to a profile's versions goes through it. */
export async function lockProfile(db: Sequelize, id: number, transaction: Transaction): Promise<boolean> {
  const row = await modelsOf(db).Profile.findByPk(id, { attributes: ["id"], lock: transaction.LOCK.UPDATE, transaction });
  return row !== null;
}

/** A new profile row (no version yet: the versions module writes version 1 in the same transaction). */
export async function insertProfile(db: Sequelize, transaction: Transaction, p: { name: string; operatorId: string; armId: number; createdBy: string }): Promise<number> {
  const profile = await modelsOf(db).Profile.create(p, { transaction });
  return profile.id;
}

/** Who created each of these profiles (the ceilings module mails them with the versions' authors). */
export async function profileCreatorIds(db: Sequelize, profileIds: readonly number[], transaction?: Transaction): Promise<string[]> {
  if (profileIds.length === 0) return [];
  const rows = await modelsOf(db).Profile.findAll({ where: { id: { [Op.in]: [...profileIds] } }, attributes: ["createdBy"], transaction });
  return [...new Set(rows.map((r) => r.createdBy))];
}

/**
 * Summaries of the profiles matching `where`, by name: each with its latest version and the version its
 * own operator may drive. Three queries however many profiles: the profiles with their names, the latest
 * version of each (a grouped MAX, then the rows), and the candidates for the driveable version.
 */
async function summaries(db: Sequelize, where: WhereOptions<ProfileModel>, transaction?: Transaction): Promise<ProfileSummary[]> {
  const { Profile, Version } = modelsOf(db);
  const profiles = await Profile.scope("withNames").findAll({ where, order: [["name", "ASC"], ["id", "ASC"]], transaction });
  if (profiles.length === 0) return [];
  const ids = profiles.map((p) => p.id);
  const maxima = (await Version.findAll({
    attributes: ["profileId", [fn("MAX", col("number")), "latestNumber"]],
    where: { profileId: { [Op.in]: ids } },
    group: ["profileId"],
    raw: true,
    transaction,
  })) as unknown as { profileId: number; latestNumber: number }[];
  const latestRows = maxima.length
    ? await Version.scope("withStatus").findAll({
        where: { [Op.or]: maxima.map((m) => ({ profileId: m.profileId, number: Number(m.latestNumber) })) },
        transaction,
      })
    : [];
  const latest = new Map(latestRows.map((v) => [v.profileId, v.toApi()]));
  const driveable = await operatorDriveableVersionIds(db, profiles, transaction);
  return profiles
    .filter((p) => latest.has(p.id))
    .map((p) => ({
      id: p.id,
      name: p.name,
      operatorId: p.operatorId,
      operatorName: p.operator!.displayName,
      armId: p.armId,
      armName: p.arm!.name,
      createdAt: p.createdAt.toISOString(),
      latestVersion: latest.get(p.id)!,
      driveableVersionId: driveable.get(p.id) ?? null,
    }));
}

/**
 * For each profile, the newest version its own operator may drive, by the shared isDriveable (the one
 * driving rule, packages/shared/src/driving.ts): the query only narrows to the states an operator ever
 * drives (DRIVING_RULE.operatorStates); the rule decides.
 */
async function operatorDriveableVersionIds(db: Sequelize, profiles: readonly ProfileModel[], transaction?: Transaction): Promise<Map<number, number>> {
  const { Version, VersionStatus } = modelsOf(db);
  const candidates = await Version.findAll({
    attributes: ["id", "profileId", "number"],
    where: { profileId: { [Op.in]: profiles.map((p) => p.id) } },
    include: [{ model: VersionStatus, as: "status", required: true, where: { state: { [Op.in]: [...DRIVING_RULE.operatorStates] } } }],
    order: [["number", "DESC"]],
    transaction,
  });
  const operatorOf = new Map(profiles.map((p) => [p.id, p.operatorId]));
  const out = new Map<number, number>();
  for (const v of candidates) {
    if (out.has(v.profileId)) continue;
    const operatorId = operatorOf.get(v.profileId)!;
    const decision = isDriveable({ state: v.status!.state, exceedsCeilings: v.status!.exceedsCeilings, operatorId }, { id: operatorId, roles: ["operator"] });
    if (decision.isDriveable) out.set(v.profileId, v.id);
  }
  return out;
}
