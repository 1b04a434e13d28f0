import type { Sequelize } from "sequelize";
import {
  CEILING_LABELS,
  VERSION_FILE_FORMAT,
  VERSION_FILE_SCHEMA_VERSION,
  type ProfileVersion,
  type User,
  type VersionFile,
} from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { findArmAtRevision, findArmForVersion, resolveArmChoice } from "../arms/service.ts";
import { violationsNow } from "../ceilings/service.ts";
import { versionLabel, visibleProfile } from "../profiles/service.ts";
import { checkParamsFitArm, findVersion, paramsSha256, saveVersion, type WorkflowContext } from "../versions/service.ts";

/**
 * A profile version as a file and back (issue 12, "Export and import"). The file names the arm, its
 * revision and tool by id, carries the parameters and their SHA-256 (hashing.ts: canonical JSON), so a
 * changed file is found, not silently accepted. Its own module: importing checks the site ceilings, and
 * the ceilings module already imports versions (a cycle otherwise).
 */

/** `GET /api/versions/:id/export`: anyone who may read the version (an operator: own profiles only). */
export async function exportVersion(db: Sequelize, user: User, versionId: number): Promise<VersionFile> {
  const version = await findVersion(db, versionId);
  if (!version) throw new AppError(404, "not_found", "No such version.");
  const profile = await visibleProfile(db, user, version.profileId);
  const arm = await findArmForVersion(db, version.id, profile.armId);
  if (!arm) throw new AppError(404, "not_found", "No such arm.");
  return {
    format: VERSION_FILE_FORMAT,
    schemaVersion: VERSION_FILE_SCHEMA_VERSION,
    profile: { id: profile.id, name: profile.name },
    version: { id: version.id, number: version.number, note: version.note },
    arm: { id: arm.id, name: arm.name, revisionId: arm.armRevisionId, revision: arm.revision },
    tool: arm.tool ? { id: arm.tool.id, name: arm.tool.name } : null,
    params: version.params,
    paramsSha256: version.paramsSha256,
    exportedAt: new Date().toISOString(),
  };
}

/**
 * `POST /api/profiles/:id/import`: the file as a new draft on top of the profile's latest version, on the
 * file's arm revision and tool. Refused, with nothing saved: a hash that does not match the parameters
 * (422, path paramsSha256), another arm (422, path arm.id), a revision or tool not of this arm (400),
 * parameters that do not fit the arm (400) or exceed the site ceilings in force (422 ceiling_exceeded).
 */
export async function importVersion(ctx: WorkflowContext, actor: User, profileId: number, file: VersionFile): Promise<ProfileVersion> {
  const { db } = ctx;
  const computed = paramsSha256(file.params);
  if (computed !== file.paramsSha256) {
    throw new AppError(422, "validation_failed", "The file's parameters do not match its SHA-256: the file was changed after it was exported. Nothing was saved; export the version again.", [
      { path: "paramsSha256", message: `the parameters hash to ${computed.slice(0, 12)}…, the file says ${file.paramsSha256.slice(0, 12)}…` },
    ]);
  }
  const profile = await visibleProfile(db, actor, profileId);
  if (file.arm.id !== profile.armId) {
    throw new AppError(422, "validation_failed", `The file was exported for the arm "${file.arm.name}", and "${profile.name}" is on "${profile.armName}": nothing was saved.`, [
      { path: "arm.id", message: "another arm than the profile's" },
    ]);
  }
  const choice = await resolveArmChoice(db, profile.armId, { armRevisionId: file.arm.revisionId, toolId: file.tool?.id ?? null });
  const arm = (await findArmAtRevision(db, choice))!;
  checkParamsFitArm(file.params, arm);
  const violations = await violationsNow(db, undefined, file.params, arm);
  if (violations.length) {
    throw new AppError(
      422,
      "ceiling_exceeded",
      `The imported parameters exceed the site ceilings in force: ${violations[0]!.message}. Nothing was saved.`,
      violations.map((v) => ({ path: `params.${v.field}`, message: `${v.message} (ceiling: ${CEILING_LABELS[v.ceiling]})` })),
    );
  }
  const note = `Imported from ${versionLabel(file.profile, file.version)}${file.version.note ? `: ${file.version.note}` : ""}`.slice(0, 2000);
  return saveVersion(ctx, actor, profileId, {
    parentVersionId: profile.latestVersion.id,
    params: file.params,
    note,
    armRevisionId: choice.armRevisionId,
    toolId: choice.toolId,
  });
}
