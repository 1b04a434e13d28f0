import { DataTypes, type CreationOptional, type NonAttribute, type Sequelize } from "sequelize";
import { recordingSummarySchema, type Recording } from "@jogwright/shared";
import { CHUNK_ENCODINGS, type ChunkEncoding } from "./chunk-codec.ts";
import { enumOf, json, longBlob, NULLABLE, primaryKey, serialId, string, time, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, hasManyBothWays, profileRefOf, readJson, TableModel, USER_NAME, type IncludedUser, type Named, type SerialId } from "../../db/model-parts.ts";

/**
 * Recordings of live jog sessions (`jog_recordings` and `jog_recording_chunks`, migrations 0010 and 0017):
 * one row per session and its frames in chunks of about one second (Recording–Chunk), stored compactly
 * (chunk-codec.ts). The classes give the types;
 * `defineRecordingModels` binds a copy of each to one Sequelize instance (db/models.ts). The driver, arm,
 * profile and version a recording names are associated in db/models.ts (`withNames`). The queries are in
 * service.ts.
 */
export class RecordingModel extends TableModel<RecordingModel, "driver" | "arm" | "profile" | "version" | "chunks"> {
  declare id: SerialId;
  declare sessionId: string;
  declare driverId: string;
  declare armId: number;
  declare profileId: number;
  declare versionId: number;
  declare startedAt: Date;
  declare endedAt: CreationOptional<Date | null>;
  declare endReason: CreationOptional<string | null>;
  /** As stored; `toApi` parses it with the shared schema. */
  declare summary: CreationOptional<unknown>;
  /** Included by the `withNames` scope. */
  declare driver?: IncludedUser;
  declare arm?: Named<"name", string>;
  declare profile?: Named<"name", string>;
  declare version?: Named<"number", number>;
  declare chunks?: NonAttribute<RecordingChunkModel[]>;

  /** The recording as the API shows it (`Recording`); load it with `withNames` for the names. */
  toApi(): Recording {
    const summary = this.summary === null || this.summary === undefined ? null : recordingSummarySchema.safeParse(this.summary);
    return {
      id: this.id,
      sessionId: this.sessionId,
      driverId: this.driverId,
      driverName: this.driver?.displayName ?? "",
      armId: this.armId,
      armName: this.arm?.name ?? "",
      ...profileRefOf(this),
      versionId: this.versionId,
      versionNumber: this.version?.number ?? 0,
      startedAt: this.startedAt.toISOString(),
      endedAt: this.endedAt ? this.endedAt.toISOString() : null,
      endReason: this.endReason,
      summary: summary && summary.success ? summary.data : null,
    };
  }
}

export class RecordingChunkModel extends TableModel<RecordingChunkModel> {
  declare recordingId: number;
  declare chunkIndex: number;
  declare frameCount: number;
  /** How the frames are stored (chunk-codec.ts): `json` in `frames` (chunks before migration 0017), else in `data`. */
  declare encoding: CreationOptional<ChunkEncoding>;
  /**
   * A `json` chunk's frames: JSON array text (LONGTEXT checked as JSON), read back parsed by the driver.
   * NULL for the other encodings.
   */
  declare frames: CreationOptional<string | unknown[] | null>;
  /** The compressed frames of a `columns-v1` or `json-deflate` chunk (LONGBLOB); NULL for `json`. */
  declare data: CreationOptional<Buffer | null>;
  /** Bytes of the payload as stored (`data` or `frames`), for retention by size. */
  declare storedBytes: number;
}

export function defineRecordingModels(sequelize: Sequelize) {
  const scopes = {
    /** With the names the API shows (the associations are declared in db/models.ts). */
    withNames: {
      include: [
        { association: "driver", attributes: USER_NAME },
        { association: "arm", attributes: ["name"] },
        { association: "profile", attributes: ["name"] },
        { association: "version", attributes: ["number"] },
      ],
    },
  };
  const Recording = bindModel(sequelize, RecordingModel, { modelName: "Recording", tableName: "jog_recordings" }, { timestamps: false, scopes }, {
    id: serialId(),
    sessionId: { ...string(64), unique: "jog_recordings_session_unique" },
    driverId: userRef(),
    armId: unsigned(),
    profileId: unsigned(),
    versionId: unsigned(),
    startedAt: time(),
    endedAt: time(NULLABLE),
    endReason: string(60, NULLABLE),
    summary: {
      ...json(NULLABLE),
      // Its CHECK is "NULL or valid JSON", not MariaDB's own JSON check, so the server does not mark the
      // column as JSON and the driver hands back text.
      get() {
        return readJson(this.getDataValue("summary"));
      },
    },
  });
  const RecordingChunk = bindModel(sequelize, RecordingChunkModel, { modelName: "RecordingChunk", tableName: "jog_recording_chunks" }, { timestamps: false }, {
    recordingId: primaryKey(unsigned()),
    chunkIndex: primaryKey(unsigned()),
    frameCount: unsigned(),
    encoding: enumOf(CHUNK_ENCODINGS, "json"),
    frames: { type: DataTypes.TEXT("long"), allowNull: true },
    data: longBlob(NULLABLE),
    storedBytes: unsigned(),
  });
  // The chunks go with their recording: ON DELETE CASCADE in the schema.
  hasManyBothWays(Recording, RecordingChunk, { foreignKey: "recordingId", as: "chunks", inverseAs: "recording", onDelete: "CASCADE" });
  return { Recording, RecordingChunk };
}
