import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import {
  CEILING_EVENT_KINDS,
  profileParamsSchema,
  VERSION_STATES,
  type CeilingEvent,
  type ProfileParams,
  type ProfileVersion,
  type VersionState,
} from "@jogwright/shared";

type CeilingEventKind = (typeof CEILING_EVENT_KINDS)[number];

/**
 * Profile versions (`profile_versions`: immutable once written, locked by their approval — triggers of
 * migrations 0003 and 0014) and their lifecycle (`version_status`, one row per version, guarded by the
 * triggers of 0008 and 0014). The classes give the types; `defineVersionModels` binds a copy of each to
 * one Sequelize instance (db/models.ts). Nothing here ever updates or deletes a profile_versions row.
 */
export class VersionModel extends Model<
  InferAttributes<VersionModel, { omit: "status" | "author" | "profile" }>,
  InferCreationAttributes<VersionModel, { omit: "status" | "author" | "profile" }>
> {
  declare id: CreationOptional<number>;
  declare profileId: number;
  declare number: number;
  declare parentVersionId: number | null;
  declare params: ProfileParams;
  declare paramsSha256: string;
  declare note: string;
  declare authorId: string;
  declare createdAt: CreationOptional<Date>;
  /** Set by the approval (the approvals row's trigger), never by the app. */
  declare lockedAt: CreationOptional<Date | null>;
  declare status?: NonAttribute<VersionStatusModel>;
  /** Included through the association declared in db/models.ts. */
  declare author?: NonAttribute<{ displayName: string }>;
  /** Included through the association declared in db/models.ts (the driving listing). */
  declare profile?: NonAttribute<{ id: number; name: string; operatorId: string; armId: number; operator?: { displayName: string }; arm?: { name: string } }>;

  /** The API shape (`profileVersionSchema`); load it with the `withStatus` scope. */
  toApi(): ProfileVersion {
    const status = this.status;
    if (!status || !this.author) throw new Error("VersionModel.toApi needs its status and author: load it with the withStatus scope");
    return {
      id: this.id,
      profileId: this.profileId,
      number: this.number,
      parentVersionId: this.parentVersionId,
      state: status.state,
      params: this.params,
      paramsSha256: this.paramsSha256,
      note: this.note,
      authorId: this.authorId,
      authorName: this.author.displayName,
      createdAt: this.createdAt.toISOString(),
      submittedAt: status.submittedAt?.toISOString() ?? null,
      decidedById: status.decidedBy,
      decidedByName: status.decider?.displayName ?? null,
      decidedAt: status.decidedAt?.toISOString() ?? null,
      decisionComment: status.decisionComment,
      exceedsCeilings: status.exceedsCeilings,
    };
  }
}

export class VersionStatusModel extends Model<
  InferAttributes<VersionStatusModel, { omit: "decider" }>,
  InferCreationAttributes<VersionStatusModel, { omit: "decider" }>
> {
  declare versionId: number;
  declare state: CreationOptional<VersionState>;
  declare submittedAt: CreationOptional<Date | null>;
  declare decidedBy: CreationOptional<string | null>;
  declare decidedAt: CreationOptional<Date | null>;
  declare decisionComment: CreationOptional<string | null>;
  declare exceedsCeilings: CreationOptional<boolean>;
  /** The re-confirmation that cleared the flag last; set only by its row's trigger (migration 0016). */
  declare reconfirmationId: CreationOptional<number | null>;
  declare updatedAt: CreationOptional<Date>;
  /** Included through the association declared in db/models.ts. */
  declare decider?: NonAttribute<{ displayName: string } | null>;
}

/**
 * A version's flag history (`version_ceiling_events`, migration 0016): append-only. Inserting a
 * `reconfirm` row *is* the re-confirmation: its trigger clears the version's flag in that statement.
 */
export class VersionCeilingEventModel extends Model<
  InferAttributes<VersionCeilingEventModel, { omit: "actor" }>,
  InferCreationAttributes<VersionCeilingEventModel, { omit: "actor" }>
> {
  declare id: CreationOptional<number>;
  declare versionId: number;
  declare kind: CeilingEventKind;
  declare ceilingsRevision: number;
  declare actorId: string | null;
  declare comment: string;
  /** Stamped by the BEFORE INSERT trigger. */
  declare at: CreationOptional<Date>;
  /** Included through the association declared in db/models.ts. */
  declare actor?: NonAttribute<{ displayName: string } | null>;

  toApi(): CeilingEvent {
    return {
      id: this.id,
      versionId: this.versionId,
      kind: this.kind,
      ceilingsRevision: this.ceilingsRevision,
      actorId: this.actorId,
      actorName: this.actor?.displayName ?? null,
      comment: this.comment,
      at: this.at.toISOString(),
    };
  }
}

export function defineVersionModels(sequelize: Sequelize) {
  const Version = class extends VersionModel {};
  Version.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      profileId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      number: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      parentVersionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      params: {
        type: DataTypes.JSON,
        allowNull: false,
        get() {
          const raw = this.getDataValue("params") as unknown;
          return profileParamsSchema.parse(typeof raw === "string" ? JSON.parse(raw) : raw);
        },
      },
      paramsSha256: { type: DataTypes.CHAR(64), allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: false },
      authorId: { type: DataTypes.STRING(40), allowNull: false },
      createdAt: DataTypes.DATE(3),
      lockedAt: { type: DataTypes.DATE(3), allowNull: true },
    },
    { sequelize, modelName: "ProfileVersion", tableName: "profile_versions", underscored: true, timestamps: true, updatedAt: false },
  );
  const VersionStatus = class extends VersionStatusModel {};
  VersionStatus.init(
    {
      versionId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      state: { type: DataTypes.ENUM(...VERSION_STATES), allowNull: false, defaultValue: "draft" },
      submittedAt: { type: DataTypes.DATE(3), allowNull: true },
      decidedBy: { type: DataTypes.STRING(40), allowNull: true },
      decidedAt: { type: DataTypes.DATE(3), allowNull: true },
      decisionComment: { type: DataTypes.TEXT, allowNull: true },
      exceedsCeilings: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      reconfirmationId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      updatedAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "VersionStatus", tableName: "version_status", underscored: true, timestamps: true, createdAt: false },
  );
  const CeilingEvent = class extends VersionCeilingEventModel {};
  CeilingEvent.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      versionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      kind: { type: DataTypes.ENUM(...CEILING_EVENT_KINDS), allowNull: false },
      ceilingsRevision: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      actorId: { type: DataTypes.STRING(40), allowNull: true },
      comment: { type: DataTypes.TEXT, allowNull: false },
      at: { type: DataTypes.DATE(3) },
    },
    { sequelize, modelName: "VersionCeilingEvent", tableName: "version_ceiling_events", underscored: true, timestamps: false },
  );
  return { Version, VersionStatus, CeilingEvent };
}

type VersionModels = ReturnType<typeof defineVersionModels>;

/** Version–Status (one each). The scopes that include people are added in db/models.ts. */
export function associateVersionModels({ Version, VersionStatus, CeilingEvent }: VersionModels): void {
  Version.hasMany(CeilingEvent, { as: "ceilingEvents", foreignKey: "versionId" });
  Version.hasOne(VersionStatus, { as: "status", foreignKey: "versionId" });
  VersionStatus.belongsTo(Version, { as: "version", foreignKey: "versionId" });
  Version.belongsTo(Version, { as: "parent", foreignKey: "parentVersionId" });
}
