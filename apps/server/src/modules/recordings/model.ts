import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import { recordingSummarySchema, type Recording } from "@jogwright/shared";
import { CHUNK_ENCODINGS, type ChunkEncoding } from "./chunk-codec.ts";

/**
 * Recordings of live jog sessions (`jog_recordings` and `jog_recording_chunks`, migrations 0010 and 0017):
 * one row per session and its frames in chunks of about one second (Recording–Chunk), stored compactly
 * (chunk-codec.ts). The classes give the types;
 * `defineRecordingModels` binds a copy of each to one Sequelize instance (db/models.ts). The driver, arm,
 * profile and version a recording names are associated in db/models.ts (`withNames`). The queries are in
 * service.ts.
 */
type Named<K extends string, V> = NonAttribute<{ [key in K]: V } | null>;

export class RecordingModel extends Model<
  InferAttributes<RecordingModel, { omit: "driver" | "arm" | "profile" | "version" | "chunks" }>,
  InferCreationAttributes<RecordingModel, { omit: "driver" | "arm" | "profile" | "version" | "chunks" }>
> {
  declare id: CreationOptional<number>;
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
  declare driver?: Named<"displayName", string>;
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
      profileId: this.profileId,
      profileName: this.profile?.name ?? "",
      versionId: this.versionId,
      versionNumber: this.version?.number ?? 0,
      startedAt: this.startedAt.toISOString(),
      endedAt: this.endedAt ? this.endedAt.toISOString() : null,
      endReason: this.endReason,
      summary: summary && summary.success ? summary.data : null,
    };
  }
}

export class RecordingChunkModel extends Model<InferAttributes<RecordingChunkModel>, InferCreationAttributes<RecordingChunkModel>> {
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
  const Recording = class extends RecordingModel {};
  Recording.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      sessionId: { type: DataTypes.STRING(64), allowNull: false, unique: "jog_recordings_session_unique" },
      driverId: { type: DataTypes.STRING(40), allowNull: false },
      armId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      profileId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      versionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      startedAt: { type: DataTypes.DATE(3), allowNull: false },
      endedAt: { type: DataTypes.DATE(3), allowNull: true },
      endReason: { type: DataTypes.STRING(60), allowNull: true },
      summary: {
        type: DataTypes.JSON,
        allowNull: true,
        // Its CHECK is "NULL or valid JSON", not MariaDB's own JSON check, so the server does not mark the
        // column as JSON and the driver hands back text.
        get() {
          const raw = this.getDataValue("summary");
          return typeof raw === "string" ? (JSON.parse(raw) as unknown) : raw;
        },
      },
    },
    {
      sequelize,
      modelName: "Recording",
      tableName: "jog_recordings",
      underscored: true,
      timestamps: false,
      scopes: {
        /** With the names the API shows (the associations are declared in db/models.ts). */
        withNames: {
          include: [
            { association: "driver", attributes: ["displayName"] },
            { association: "arm", attributes: ["name"] },
            { association: "profile", attributes: ["name"] },
            { association: "version", attributes: ["number"] },
          ],
        },
      },
    },
  );
  const RecordingChunk = class extends RecordingChunkModel {};
  RecordingChunk.init(
    {
      recordingId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      chunkIndex: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      frameCount: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      encoding: { type: DataTypes.ENUM(...CHUNK_ENCODINGS), allowNull: false, defaultValue: "json" },
      frames: { type: DataTypes.TEXT("long"), allowNull: true },
      data: { type: DataTypes.BLOB("long"), allowNull: true },
      storedBytes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    },
    { sequelize, modelName: "RecordingChunk", tableName: "jog_recording_chunks", underscored: true, timestamps: false },
  );
  return { Recording, RecordingChunk };
}

type RecordingModels = ReturnType<typeof defineRecordingModels>;

/** Recording–Chunk (the chunks go with their recording: ON DELETE CASCADE in the schema). */
export function associateRecordingModels({ Recording, RecordingChunk }: RecordingModels): void {
  Recording.hasMany(RecordingChunk, { as: "chunks", foreignKey: "recordingId", onDelete: "CASCADE" });
  RecordingChunk.belongsTo(Recording, { as: "recording", foreignKey: "recordingId" });
}
