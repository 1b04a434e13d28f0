import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import { profileParamsSchema, trialDefinitionSchema, trialMetricsSchema, type CustomTrial, type TrialRun } from "@jogwright/shared";

/**
 * The tuning bench's tables (migration 0015): engineers' custom trials (`trials`), stored offline runs
 * (`trial_runs`, never updated: a trigger refuses it) and the runs a version was submitted with
 * (`version_evidence`). The people, profile and version a run names are associated in db/models.ts
 * (`withNames`). The queries are in service.ts.
 */
type Named<K extends string, V> = NonAttribute<{ [key in K]: V } | null>;

/** JSON columns: MariaDB's JSON is LONGTEXT with a JSON_VALID check, which the driver hands back parsed or as text. */
const json = (raw: unknown): unknown => (typeof raw === "string" ? JSON.parse(raw) : raw);

export class TrialModel extends Model<InferAttributes<TrialModel, { omit: "creator" }>, InferCreationAttributes<TrialModel, { omit: "creator" }>> {
  declare id: CreationOptional<number>;
  declare armId: number;
  declare name: string;
  declare definition: unknown;
  declare createdBy: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare creator?: Named<"displayName", string>;

  toApi(): CustomTrial {
    return {
      id: this.id,
      armId: this.armId,
      name: this.name,
      definition: trialDefinitionSchema.parse(json(this.definition)),
      createdBy: this.createdBy,
      createdByName: this.creator?.displayName ?? "",
      createdAt: this.createdAt.toISOString(),
      updatedAt: this.updatedAt.toISOString(),
    };
  }
}

export class TrialRunModel extends Model<
  InferAttributes<TrialRunModel, { omit: "creator" | "profile" | "version" }>,
  InferCreationAttributes<TrialRunModel, { omit: "creator" | "profile" | "version" }>
> {
  declare id: CreationOptional<number>;
  declare armId: number;
  declare profileId: number;
  declare versionId: number | null;
  declare params: unknown;
  declare trialKind: string;
  declare trialId: number | null;
  declare recordingId: number | null;
  declare trialName: string;
  declare trialDefinition: unknown;
  declare metrics: unknown;
  declare series: Buffer;
  declare seriesHash: string;
  declare durationMs: number;
  declare createdBy: string;
  declare createdAt: CreationOptional<Date>;
  declare creator?: Named<"displayName", string>;
  declare profile?: Named<"name", string>;
  declare version?: Named<"number", number>;

  /** The run as the API shows it, without its series; load it with `withNames` for the names. */
  toApi(): TrialRun {
    return {
      id: this.id,
      armId: this.armId,
      profileId: this.profileId,
      profileName: this.profile?.name ?? "",
      versionId: this.versionId,
      versionNumber: this.version?.number ?? null,
      params: profileParamsSchema.parse(json(this.params)),
      trialKind: this.trialKind as TrialRun["trialKind"],
      trialId: this.trialId,
      recordingId: this.recordingId,
      trialName: this.trialName,
      metrics: trialMetricsSchema.parse(json(this.metrics)),
      seriesHash: this.seriesHash,
      durationMs: this.durationMs,
      createdBy: this.createdBy,
      createdByName: this.creator?.displayName ?? "",
      createdAt: this.createdAt.toISOString(),
    };
  }
}

export class VersionEvidenceModel extends Model<InferAttributes<VersionEvidenceModel>, InferCreationAttributes<VersionEvidenceModel>> {
  declare versionId: number;
  declare runId: number;
  declare attachedBy: string;
  declare attachedAt: CreationOptional<Date>;
}

export function defineTrialModels(sequelize: Sequelize) {
  const Trial = class extends TrialModel {};
  Trial.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      armId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      name: { type: DataTypes.STRING(120), allowNull: false },
      definition: { type: DataTypes.JSON, allowNull: false },
      createdBy: { type: DataTypes.STRING(40), allowNull: false },
      createdAt: DataTypes.DATE(3),
      updatedAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "Trial", tableName: "trials", underscored: true, timestamps: true },
  );
  const TrialRun = class extends TrialRunModel {};
  TrialRun.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      armId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      profileId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      versionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      params: { type: DataTypes.JSON, allowNull: false },
      trialKind: { type: DataTypes.STRING(40), allowNull: false },
      trialId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      recordingId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      trialName: { type: DataTypes.STRING(160), allowNull: false },
      trialDefinition: { type: DataTypes.JSON, allowNull: true },
      metrics: { type: DataTypes.JSON, allowNull: false },
      series: { type: DataTypes.BLOB("long"), allowNull: false },
      seriesHash: { type: DataTypes.CHAR(64), allowNull: false },
      durationMs: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      createdBy: { type: DataTypes.STRING(40), allowNull: false },
      createdAt: DataTypes.DATE(3),
    },
    {
      sequelize,
      modelName: "TrialRun",
      tableName: "trial_runs",
      underscored: true,
      timestamps: true,
      updatedAt: false,
      // The series (up to a few MB for a long run) only where one run is read: scope("withNames") alone.
      defaultScope: { attributes: { exclude: ["series"] } },
      scopes: {
        /** With the names the API shows (the associations are declared in db/models.ts). */
        withNames: {
          include: [
            { association: "creator", attributes: ["displayName"] },
            { association: "profile", attributes: ["name"] },
            { association: "version", attributes: ["number"] },
          ],
        },
      },
    },
  );
  const VersionEvidence = class extends VersionEvidenceModel {};
  VersionEvidence.init(
    {
      versionId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      runId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      attachedBy: { type: DataTypes.STRING(40), allowNull: false },
      attachedAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "VersionEvidence", tableName: "version_evidence", underscored: true, timestamps: true, createdAt: "attachedAt", updatedAt: false },
  );
  return { Trial, TrialRun, VersionEvidence };
}

type TrialModels = ReturnType<typeof defineTrialModels>;

/** Trial–Run (a custom trial's runs) and Version–Evidence–Run. */
export function associateTrialModels({ Trial, TrialRun, VersionEvidence }: TrialModels): void {
  Trial.hasMany(TrialRun, { as: "runs", foreignKey: "trialId" });
  TrialRun.belongsTo(Trial, { as: "trial", foreignKey: "trialId" });
  VersionEvidence.belongsTo(TrialRun, { as: "run", foreignKey: "runId" });
}
