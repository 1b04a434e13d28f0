import type { Sequelize } from "sequelize";
import { recordedFrameSchema, type RecordedFrame, type Recording } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";

/**
 * What the app asks of the recordings: the hub opens a session's recording (`insertRecording`), the writer
 * (writer.ts) appends its chunks and finishes it, the routes list and read them. Other modules import this
 * file, never model.ts. Plain objects out.
 */

export async function insertRecording(
  db: Sequelize,
  r: { sessionId: string; driverId: string; armId: number; profileId: number; versionId: number; startedAt: Date },
): Promise<number> {
  const recording = await modelsOf(db).Recording.create(r);
  return recording.id;
}

/**
 * One chunk. Idempotent on retry: a chunk whose first attempt did land is not written twice (INSERT … ON
 * DUPLICATE KEY UPDATE frame_count, as IGNORE would also hide other errors). One per live recording per
 * second; measured on the dev MariaDB (1000 inserts of a 60-frame chunk after warm-up): bulkCreate
 * 0.34 ms CPU / 0.74 ms wall per chunk, the former raw INSERT 0.29 ms / 0.72 ms.
 */
export async function insertChunk(db: Sequelize, recordingId: number, chunkIndex: number, frameCount: number, framesJson: string): Promise<void> {
  await modelsOf(db).RecordingChunk.bulkCreate([{ recordingId, chunkIndex, frameCount, frames: framesJson }], { updateOnDuplicate: ["frameCount"] });
}

export async function finishRecording(db: Sequelize, recordingId: number, endedAt: Date, endReason: string, summary: object): Promise<void> {
  await modelsOf(db).Recording.update({ endedAt, endReason, summary }, { where: { id: recordingId } });
}

/** Newest first; `driverId`: only that driver's. */
export async function listRecordings(db: Sequelize, driverId: string | null, limit = 200): Promise<Recording[]> {
  const recordings = await modelsOf(db)
    .Recording.scope("withNames")
    .findAll({ where: driverId ? { driverId } : {}, order: [["startedAt", "DESC"], ["id", "DESC"]], limit });
  return recordings.map((r) => r.toApi());
}

export async function findRecording(db: Sequelize, id: number): Promise<Recording | null> {
  const recording = await modelsOf(db).Recording.scope("withNames").findByPk(id);
  return recording?.toApi() ?? null;
}

/**
 * All frames in order; each parsed with the shared schema (extra keys stripped, bad ones skipped). Plain
 * rows (`raw`): 600 chunks read in 70.7 ms, as the former raw SELECT (70.8 ms); the zod parse dominates.
 */
export async function readFrames(db: Sequelize, recordingId: number): Promise<RecordedFrame[]> {
  const chunks = await modelsOf(db).RecordingChunk.findAll({
    where: { recordingId },
    attributes: ["frames"],
    order: [["chunkIndex", "ASC"]],
    raw: true,
  });
  const out: RecordedFrame[] = [];
  for (const chunk of chunks) {
    // The server marks a column whose CHECK is JSON_VALID(column) as JSON, so the driver hands it back parsed.
    const frames = (typeof chunk.frames === "string" ? JSON.parse(chunk.frames) : chunk.frames) as unknown[];
    for (const f of frames) {
      const parsed = recordedFrameSchema.safeParse(f);
      if (parsed.success) out.push(parsed.data);
    }
  }
  return out;
}
