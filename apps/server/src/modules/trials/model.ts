import { DataTypes, type Sequelize } from "sequelize";
import { profileParamsSchema, trialDefinitionSchema, trialMetricsSchema, type CustomTrial, type TrialRun } from "@jogwright/shared";
import { json, longBlob, NULLABLE, primaryKey, serialId, sha256, string, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, hasManyBothWays, profileRefOf, readJson, TableModel, USER_NAME, type IncludedUser, type Named, type SerialId, type Stamp } from "../../db/model-parts.ts";

/**
 * The tuning bench's tables (migration 0015): engineers' custom trials (`trials`), stored offline runs
 * (`trial_runs`, never updated: a trigger refuses it) and the runs a version was submitted with
 * (`version_evidence`). The people, profile and version a run names are associated in db/models.ts
 * (`withNames`). The queries are in service.ts.
 */
export class TrialModel extends TableModel<TrialModel, "creator"> {
  declare id: SerialId;
  declare armId: number;
  declare name: string;
  declare definition: unknown;
  declare createdBy: string;
  declare createdAt: Stamp;
  declare updatedAt: Stamp;
  declare creator?: IncludedUser;

  toApi(): CustomTrial {
    return {
      id: this.id,
      armId: this.armId,
      name: this.name,
      definition: trialDefinitionSchema.parse(readJson(this.definition)),
      createdBy: this.createdBy,
      createdByName: this.creator?.displayName ?? "",
      createdAt: this.createdAt.toISOString(),
      updatedAt: this.updatedAt.toISOString(),
    };
  }
}

export class TrialRunModel extends TableModel<TrialRunModel, "creator" | "profile" | "version"> {
  declare id: SerialId;
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
  declare createdAt: Stamp;
  declare creator?: IncludedUser;
  declare profile?: Named<"name", string>;
  declare version?: Named<"number", number>;

  /** The run as the API shows it, without its series; load it with `withNames` for the names. */
  toApi(): TrialRun {
    return {
      id: this.id,
      armId: this.armId,
      ...profileRefOf(this),
      versionId: this.versionId,
      versionNumber: this.version?.number ?? null,
      params: profileParamsSchema.parse(readJson(this.params)),
      trialKind: this.trialKind as TrialRun["trialKind"],
      trialId: this.trialId,
      recordingId: this.recordingId,
      trialName: this.trialName,
      metrics: trialMetricsSchema.parse(readJson(this.metrics)),
      seriesHash: this.seriesHash,
      durationMs: this.durationMs,
      createdBy: this.createdBy,
      createdByName: this.creator?.displayName ?? "",
      createdAt: this.createdAt.toISOString(),
    };
  }
}

export class VersionEvidenceModel extends TableModel<VersionEvidenceModel> {
  declare versionId: number;
  declare runId: number;
  declare attachedBy: string;
  declare attachedAt: Stamp;
}

export function defineTrialModels(sequelize: Sequelize) {
  const Trial = bindModel(sequelize, TrialModel, { modelName: "Trial", tableName: "trials" }, { timestamps: true }, {
    id: serialId(),
    armId: unsigned(),
    name: string(120),
    definition: json(),
    createdBy: userRef(),
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  });
  const runOptions = {
    timestamps: true,
    updatedAt: false,
    // The series (up to a few MB for a long run) only where one run is read: scope("withNames") alone.
    defaultScope: { attributes: { exclude: ["series"] } },
    scopes: {
      /** With the names the API shows (the associations are declared in db/models.ts). */
      withNames: {
        include: [
          { association: "creator", attributes: USER_NAME },
          { association: "profile", attributes: ["name"] },
          { association: "version", attributes: ["number"] },
        ],
      },
    },
  };
  const TrialRun = bindModel(sequelize, TrialRunModel, { modelName: "TrialRun", tableName: "trial_runs" }, runOptions, {
    id: serialId(),
    armId: unsigned(),
    profileId: unsigned(),
    versionId: unsigned(NULLABLE),
    params: json(),
    trialKind: string(40),
    trialId: unsigned(NULLABLE),
    recordingId: unsigned(NULLABLE),
    trialName: string(160),
    trialDefinition: json(NULLABLE),
    metrics: json(),
    series: longBlob(),
    seriesHash: sha256(),
    durationMs: unsigned(),
    createdBy: userRef(),
    createdAt: DataTypes.DATE(3),
  });
  const evidenceOptions = { timestamps: true, createdAt: "attachedAt", updatedAt: false };
  const VersionEvidence = bindModel(sequelize, VersionEvidenceModel, { modelName: "VersionEvidence", tableName: "version_evidence" }, evidenceOptions, {
    versionId: primaryKey(unsigned()),
    runId: primaryKey(unsigned()),
    attachedBy: userRef(),
    attachedAt: DataTypes.DATE(3),
  });
  // A custom trial's runs; the run a piece of evidence is.
  hasManyBothWays(Trial, TrialRun, { foreignKey: "trialId", as: "runs", inverseAs: "trial" });
  VersionEvidence.belongsTo(TrialRun, { as: "run", foreignKey: "runId" });
  return { Trial, TrialRun, VersionEvidence };
}
