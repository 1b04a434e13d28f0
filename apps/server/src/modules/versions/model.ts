import { DataTypes, type CreationOptional, type NonAttribute, type Sequelize } from "sequelize";
import {
  CEILING_EVENT_KINDS,
  profileParamsSchema,
  VERSION_STATES,
  type CeilingEvent,
  type ProfileParams,
  type ProfileVersion,
  type VersionState,
} from "@jogwright/shared";
import { enumOf, flag, NULLABLE, primaryKey, serialId, sha256, text, time, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, hasOneBothWays, jsonParsedBy, stampedByDatabase, TableModel, type IncludedUser, type SerialId, type Stamp } from "../../db/model-parts.ts";

type CeilingEventKind = (typeof CEILING_EVENT_KINDS)[number];

/**
 * Profile versions (`profile_versions`: immutable once written, locked by their approval — triggers of
 * migrations 0003 and 0014) and their lifecycle (`version_status`, one row per version, guarded by the
 * triggers of 0008 and 0014). The classes give the types; `defineVersionModels` binds a copy of each to
 * one Sequelize instance (db/models.ts). Nothing here ever updates or deletes a profile_versions row.
 */
export class VersionModel extends TableModel<VersionModel, "status" | "author" | "profile"> {
  declare id: SerialId;
  declare profileId: number;
  declare number: number;
  declare parentVersionId: number | null;
  declare params: ProfileParams;
  declare paramsSha256: string;
  declare note: string;
  declare authorId: string;
  declare createdAt: Stamp;
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

export class VersionStatusModel extends TableModel<VersionStatusModel, "decider"> {
  declare versionId: number;
  declare state: CreationOptional<VersionState>;
  declare submittedAt: CreationOptional<Date | null>;
  declare decidedBy: CreationOptional<string | null>;
  declare decidedAt: CreationOptional<Date | null>;
  declare decisionComment: CreationOptional<string | null>;
  declare exceedsCeilings: CreationOptional<boolean>;
  /** The re-confirmation that cleared the flag last; set only by its row's trigger (migration 0016). */
  declare reconfirmationId: CreationOptional<number | null>;
  declare updatedAt: Stamp;
  /** Included through the association declared in db/models.ts. */
  declare decider?: IncludedUser;
}

/**
 * A version's flag history (`version_ceiling_events`, migration 0016): append-only. Inserting a
 * `reconfirm` row *is* the re-confirmation: its trigger clears the version's flag in that statement.
 */
export class VersionCeilingEventModel extends TableModel<VersionCeilingEventModel, "actor"> {
  declare id: SerialId;
  declare versionId: number;
  declare kind: CeilingEventKind;
  declare ceilingsRevision: number;
  declare actorId: string | null;
  declare comment: string;
  /** Stamped by the BEFORE INSERT trigger. */
  declare at: Stamp;
  /** Included through the association declared in db/models.ts. */
  declare actor?: IncludedUser;

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
  const Version = bindModel(sequelize, VersionModel, { modelName: "ProfileVersion", tableName: "profile_versions" }, { timestamps: true, updatedAt: false }, {
    id: serialId(),
    profileId: unsigned(),
    number: unsigned(),
    parentVersionId: unsigned(NULLABLE),
    params: jsonParsedBy("params", profileParamsSchema),
    paramsSha256: sha256(),
    note: text(),
    authorId: userRef(),
    createdAt: DataTypes.DATE(3),
    lockedAt: time(NULLABLE),
  });
  const VersionStatus = bindModel(sequelize, VersionStatusModel, { modelName: "VersionStatus", tableName: "version_status" }, { timestamps: true, createdAt: false }, {
    versionId: primaryKey(unsigned()),
    state: enumOf(VERSION_STATES, "draft"),
    submittedAt: time(NULLABLE),
    decidedBy: userRef(NULLABLE),
    decidedAt: time(NULLABLE),
    decisionComment: text(NULLABLE),
    exceedsCeilings: flag(false),
    reconfirmationId: unsigned(NULLABLE),
    updatedAt: DataTypes.DATE(3),
  });
  const CeilingEvent = bindModel(sequelize, VersionCeilingEventModel, { modelName: "VersionCeilingEvent", tableName: "version_ceiling_events" }, { timestamps: false }, {
    id: serialId(),
    versionId: unsigned(),
    kind: enumOf(CEILING_EVENT_KINDS),
    ceilingsRevision: unsigned(),
    actorId: userRef(NULLABLE),
    comment: text(),
    at: stampedByDatabase(),
  });
  // Version–Status (one each), the flag history, the parent version. The scopes that include people are
  // added in db/models.ts.
  Version.hasMany(CeilingEvent, { as: "ceilingEvents", foreignKey: "versionId" });
  hasOneBothWays(Version, VersionStatus, { foreignKey: "versionId", as: "status", inverseAs: "version" });
  Version.belongsTo(Version, { as: "parent", foreignKey: "parentVersionId" });
  return { Version, VersionStatus, CeilingEvent };
}
