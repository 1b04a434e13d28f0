import { Op, type Sequelize, type WhereOptions } from "sequelize";
import {
  DRIVING_RULE,
  drivingRefusalMessage,
  isDriveable,
  type DriveableVersion,
  type DrivingKind,
  type DrivingUser,
  type ProfileSummary,
  type ProfileVersion,
  type User,
} from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { modelsOf } from "../../db/models.ts";
import { findProfile, versionLabel } from "../profiles/service.ts";
import type { ArmOfVersion } from "../arms/service.ts";
import { armForVersion, findVersion } from "../versions/service.ts";

/**
 * The drive permission: what a person may drive (GET /api/drive/versions, the console's picker) and
 * whether they may drive one version (the jog socket asks `loadVersionForDriving` at the start and at
 * every re-check). Every answer comes from the shared isDriveable (packages/shared/src/driving.ts); the
 * listing's query is the same rule as a Sequelize `where`, built from the same DRIVING_RULE
 * (`driveableWhere`), and driving.test.ts checks the two agree on every combination.
 */

/** The facts isDriveable needs, for a version of a profile. */
export const drivingFacts = (version: Pick<ProfileVersion, "state" | "exceedsCeilings">, profile: Pick<ProfileSummary, "operatorId">) => ({
  state: version.state,
  exceedsCeilings: version.exceedsCeilings,
  operatorId: profile.operatorId,
});

/**
 * `isDriveable(version, user).isDriveable` as a `where` over a version query that includes its
 * `status` and its `profile`; null when `user` drives nothing.
 */
export function driveableWhere(user: DrivingUser): WhereOptions | null {
  const parts: WhereOptions[] = [];
  if (user.roles.includes("engineer")) parts.push({ "$status.state$": { [Op.in]: [...DRIVING_RULE.engineerStates] } });
  if (user.roles.includes("operator")) {
    parts.push({
      "$profile.operator_id$": user.id,
      "$status.state$": { [Op.in]: [...DRIVING_RULE.operatorStates] },
      "$status.exceeds_ceilings$": false,
    });
  }
  return parts.length ? { [Op.or]: parts } : null;
}

/** Every version `user` may drive by `driveableWhere`, with its profile's names: by profile name, newest version first. */
export async function listDriveableVersions(db: Sequelize, user: DrivingUser): Promise<(ProfileVersion & Omit<DriveableVersion, "kind" | keyof ProfileVersion>)[]> {
  const where = driveableWhere(user);
  if (!where) return [];
  const { Version, Profile, User: Person } = modelsOf(db);
  const rows = await Version.scope("withStatus").findAll({
    where,
    include: [
      {
        model: Profile,
        as: "profile",
        required: true,
        include: [
          { model: Person, as: "operator", attributes: ["displayName"] },
          { association: "arm", attributes: ["name"] },
        ],
      },
    ],
    order: [
      [{ model: Profile, as: "profile" }, "name", "ASC"],
      [{ model: Profile, as: "profile" }, "id", "ASC"],
      ["number", "DESC"],
    ],
  });
  return rows.map((v) => {
    const p = v.profile!;
    return { ...v.toApi(), profileName: p.name, operatorId: p.operatorId, operatorName: p.operator!.displayName, armId: p.armId, armName: p.arm!.name };
  });
}

/**
 * What `user` may drive: the versions `driveableWhere` selects, each with the kind isDriveable gives it.
 * A row the function refuses is left out (and logged), never shown as driveable.
 */
export async function driveableVersionsFor(db: Sequelize, user: User): Promise<DriveableVersion[]> {
  const out: DriveableVersion[] = [];
  for (const row of await listDriveableVersions(db, user)) {
    const decision = isDriveable(drivingFacts(row, row), user);
    if (!decision.isDriveable) {
      console.error(`[jogwright] the driving rule's query and isDriveable disagree on version ${row.id} for user ${user.id}`);
      continue;
    }
    out.push({ ...row, kind: decision.kind });
  }
  return out;
}

/**
 * The version, its profile and arm, and how it is driven, if `user` may drive it; otherwise the AppError
 * of the driving rule: 404 for a missing version (and, to an operator, for another operator's version),
 * 403 with the reason otherwise.
 */
export async function loadVersionForDriving(
  db: Sequelize,
  user: User,
  versionId: number,
): Promise<{ version: ProfileVersion; profile: ProfileSummary; arm: ArmOfVersion; kind: DrivingKind }> {
  const version = await findVersion(db, versionId);
  if (!version) throw new AppError(404, "not_found", "No such version.");
  const profile = (await findProfile(db, version.profileId))!;
  const decision = isDriveable(drivingFacts(version, profile), user);
  if (!decision.isDriveable) throw new AppError(decision.status, decision.code, drivingRefusalMessage(decision, versionLabel(profile, version)));
  const arm = await armForVersion(db, version, profile.armId);
  return { version, profile, arm, kind: decision.kind };
}
