/**
 * The model registry: every Sequelize model of the app, bound to one Sequelize instance, and every
 * association. Services get the set for their `db` with `modelsOf(db)`.
 *
 * HOW TO ADD A MODEL
 * 1. In your module's model.ts, declare the class for its types (TableModel and the field types: db/model-parts.ts) —
 *      export class FooModel extends TableModel<FooModel> {
 *        declare id: SerialId; declare name: string; …   // `declare`, never class fields
 *      }
 *    — and a function that binds a copy of it to an instance, with its columns (db/columns.ts, the column
 *    types the migrations use too):
 *      export function defineFooModels(sequelize: Sequelize) {
 *        const Foo = bindModel(sequelize, FooModel, { modelName: "Foo", tableName: "foos" }, { timestamps: … }, { id: serialId(), … });
 *        return { Foo };
 *      }
 *    The table itself comes from a migration (db/migrations): never `sync()`. Match its columns, and set
 *    `timestamps`/`createdAt`/`updatedAt` to the columns the table really has.
 * 2. Spread `defineFooModels(sequelize)` into `defineAll` below.
 * 3. Associations inside your module: in `defineFooModels`, once its models are bound (`hasManyBothWays`,
 *    `hasOneBothWays` for both directions of one foreign key); associations between modules' models: in
 *    `associateAll` here.
 *
 * Why per instance: Model.init binds a class to one Sequelize instance, and the last init wins. One
 * process may hold several instances (the app's, an outage test's relay, the migration account's in
 * tests), so each instance gets its own subclasses, made once and kept in a WeakMap.
 *
 * The boundary (DEVELOPERS.md, "Server architecture"): a module imports only its own model.ts; it may
 * read another module's table only by including that model through an association declared here, and
 * it changes another module's data only through that module's service.
 */
import type { Sequelize } from "sequelize";
import { hasManyBothWays, hasOneBothWays, USER_NAME } from "./model-parts.ts";
import { defineSessionModels } from "../auth/session-model.ts";
import { defineArmModels } from "../modules/arms/model.ts";
import { defineAuditModels } from "../modules/audit/model.ts";
import { defineGamepadModels } from "../modules/gamepad/model.ts";
import { defineStationLatchModels } from "../modules/jog/model.ts";
import { defineMailModels } from "../modules/mail/model.ts";
import { defineRecordingModels } from "../modules/recordings/model.ts";
import { defineCeilingsModels } from "../modules/ceilings/model.ts";
import { defineProfileModels } from "../modules/profiles/model.ts";
import { defineReviewModels } from "../modules/reviews/model.ts";
import { defineUserModels } from "../modules/users/model.ts";
import { defineVersionModels } from "../modules/versions/model.ts";
import { defineTrialModels } from "../modules/trials/model.ts";

function defineAll(sequelize: Sequelize) {
  return {
    ...defineUserModels(sequelize), // User, UserRole
    ...defineCeilingsModels(sequelize), // SiteCeilings
    ...defineProfileModels(sequelize), // Profile
    ...defineVersionModels(sequelize), // Version, VersionStatus, CeilingEvent
    ...defineReviewModels(sequelize), // Approval
    ...defineSessionModels(sequelize), // Session
    ...defineArmModels(sequelize), // Arm, ArmRevision, ArmTool, VersionArm
    ...defineAuditModels(sequelize), // AuditEntry
    ...defineMailModels(sequelize), // OutboxMail
    ...defineGamepadModels(sequelize), // GamepadMapping
    ...defineRecordingModels(sequelize), // Recording, RecordingChunk
    ...defineStationLatchModels(sequelize), // StationLatch
    ...defineTrialModels(sequelize), // Trial, TrialRun, VersionEvidence
  };
}

export type Models = ReturnType<typeof defineAll>;

function associateAll(models: Models): void {
  const { User, SiteCeilings, Profile, Version, VersionStatus, Approval } = models;
  SiteCeilings.belongsTo(User, { as: "updatedByUser", foreignKey: "updatedBy" });

  // Profile–operator, creator, arm; Profile–Version–Status–Approval.
  Profile.belongsTo(User, { as: "operator", foreignKey: "operatorId" });
  Profile.belongsTo(User, { as: "creator", foreignKey: "createdBy" });
  Profile.belongsTo(models.Arm, { as: "arm", foreignKey: "armId" });
  hasManyBothWays(Profile, Version, { foreignKey: "profileId", as: "versions", inverseAs: "profile" });
  Version.belongsTo(User, { as: "author", foreignKey: "authorId" });
  VersionStatus.belongsTo(User, { as: "decider", foreignKey: "decidedBy" });
  hasOneBothWays(Version, Approval, { foreignKey: "versionId", as: "approval", inverseAs: "version" });
  Approval.belongsTo(User, { as: "approver", foreignKey: "approverId" });

  // Session–User (lucia's adapter keeps only sessions of existing users); the audit entry's actor (no
  // foreign key: the trail outlives whom it names); what a recording names (its `withNames` scope).
  models.Session.belongsTo(User, { as: "user", foreignKey: "userId" });
  models.AuditEntry.belongsTo(User, { as: "actor", foreignKey: "actorId", constraints: false });
  models.AuditEntry.addScope("withActorName", { include: [{ model: User, as: "actor", attributes: USER_NAME }] });
  models.Recording.belongsTo(User, { as: "driver", foreignKey: "driverId" });
  models.Recording.belongsTo(models.Arm, { as: "arm", foreignKey: "armId" });
  models.Recording.belongsTo(Profile, { as: "profile", foreignKey: "profileId" });
  models.Recording.belongsTo(Version, { as: "version", foreignKey: "versionId" });
  // The bench runs that replay a recording: retention keeps a referenced recording (recordings/retention.ts).
  models.Recording.hasMany(models.TrialRun, { as: "replayRuns", foreignKey: "recordingId" });

  // The tuning bench: who made a trial or run, the profile and version a run ran with.
  models.Trial.belongsTo(User, { as: "creator", foreignKey: "createdBy" });
  models.Trial.addScope("withCreator", { include: [{ model: User, as: "creator", attributes: USER_NAME }] });
  models.TrialRun.belongsTo(User, { as: "creator", foreignKey: "createdBy" });
  models.TrialRun.belongsTo(Profile, { as: "profile", foreignKey: "profileId" });
  models.TrialRun.belongsTo(Version, { as: "version", foreignKey: "versionId" });
  models.VersionEvidence.belongsTo(Version, { as: "version", foreignKey: "versionId" });

  // Scopes that include another module's model (the names a response shows).
  Profile.addScope("withNames", {
    include: [
      { model: User, as: "operator", attributes: USER_NAME },
      { model: models.Arm, as: "arm", attributes: ["name"] },
    ],
  });
  Version.addScope("withStatus", {
    include: [
      { model: VersionStatus, as: "status", required: true, include: [{ model: User, as: "decider", attributes: USER_NAME }] },
      { model: User, as: "author", attributes: USER_NAME },
    ],
  });
  models.CeilingEvent.belongsTo(User, { as: "actor", foreignKey: "actorId" });
  models.CeilingEvent.addScope("withActorName", { include: [{ model: User, as: "actor", attributes: USER_NAME }] });
  SiteCeilings.addScope("withName", { include: [{ model: User, as: "updatedByUser", attributes: USER_NAME }] });
  Approval.addScope("withName", { include: [{ model: User, as: "approver", attributes: USER_NAME }] });
}

const registry = new WeakMap<Sequelize, Models>();

/** The models bound to `sequelize`, defined and associated on first use (the same set every call). */
export function modelsOf(sequelize: Sequelize): Models {
  let models = registry.get(sequelize);
  if (!models) {
    models = defineAll(sequelize);
    associateAll(models);
    registry.set(sequelize, models);
  }
  return models;
}

/** Define the models for `sequelize` up front (where the instance is created), so a mistake shows at start. */
export const initModels = modelsOf;
