import type { Sequelize, Transaction } from "sequelize";
import { recordedFrameSchema, type RecordedFrame, type Recording } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";
import { listVersionArmRefs } from "../arms/service.ts";
import { decodeChunk, type EncodedChunk } from "./chunk-codec.ts";

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
 * One chunk, as chunk-codec.ts encoded it. Idempotent on retry: a chunk whose first attempt did land is
 * not written twice (INSERT … ON DUPLICATE KEY UPDATE frame_count, as IGNORE would also hide other
 * errors). One per live recording per second; measured on the dev MariaDB (1000 inserts of a 60-frame
 * JSON chunk after warm-up): bulkCreate 0.34 ms CPU / 0.74 ms wall per chunk, the former raw INSERT
 * 0.29 ms / 0.72 ms.
 */
export async function insertChunk(db: Sequelize, recordingId: number, chunkIndex: number, frameCount: number, chunk: EncodedChunk): Promise<void> {
  await modelsOf(db).RecordingChunk.bulkCreate(
    [{ recordingId, chunkIndex, frameCount, encoding: chunk.encoding, data: chunk.data, storedBytes: chunk.data.length }],
    { updateOnDuplicate: ["frameCount"] },
  );
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

/**
 * Of `ids`, the recordings that still exist, each held with a shared lock until `transaction` ends: a row
 * that refers to them (a bench run's replay) can then be written, and the retention pass, which locks a
 * recording before it deletes it and checks again for references, waits and then keeps them.
 */
export async function holdRecordings(db: Sequelize, transaction: Transaction, ids: readonly number[]): Promise<number[]> {
  if (ids.length === 0) return [];
  const rows = await modelsOf(db).Recording.findAll({ attributes: ["id"], where: { id: [...ids] }, lock: transaction.LOCK.SHARE, transaction });
  return rows.map((r) => r.id);
}

/** One recording, naming the arm revision and tool its version drove (the replay draws that revision). */
/** What writes a database's live recordings (the jog hub's RecordingWriter registers itself). */
interface PendingWrites {
  settle(recordingId: number): Promise<void>;
}
const writers = new WeakMap<Sequelize, PendingWrites>();

/** The live writer of `db`'s recordings on this server (jog/hub.ts registers its writer when it starts). */
export function registerRecordingWriter(db: Sequelize, writer: PendingWrites): void {
  writers.set(db, writer);
}

/**
 * Waits (bounded) until this server has written what it holds of the recording: a replay or an export
 * opened right after its session ended reads it whole and ended, not without its last chunk. A recording
 * written by another instance, or by nobody any more, is read as stored.
 */
export async function settleRecording(db: Sequelize, recordingId: number): Promise<void> {
  await writers.get(db)?.settle(recordingId);
}

export async function findRecording(db: Sequelize, id: number): Promise<Recording | null> {
  const recording = await modelsOf(db).Recording.scope("withNames").findByPk(id);
  if (!recording) return null;
  const arm = (await listVersionArmRefs(db, [recording.versionId])).get(recording.versionId);
  return { ...recording.toApi(), ...arm };
}

/**
 * All frames in order, whatever each chunk's encoding (chunk-codec.ts); each parsed with the shared
 * schema (extra keys stripped, bad ones skipped). Plain rows (`raw`): 600 JSON chunks read in 70.7 ms, as
 * the former raw SELECT (70.8 ms); the zod parse dominates.
 */
export async function readFrames(db: Sequelize, recordingId: number): Promise<RecordedFrame[]> {
  const out: RecordedFrame[] = [];
  for (const frames of await readChunks(db, recordingId)) {
    for (const f of frames) {
      const parsed = recordedFrameSchema.safeParse(f);
      if (parsed.success) out.push(parsed.data);
    }
  }
  return out;
}

/** Every chunk's frames as stored, decoded but not checked (readFrames checks them), in order. */
export async function readChunks(db: Sequelize, recordingId: number): Promise<unknown[][]> {
  const chunks = await modelsOf(db).RecordingChunk.findAll({
    where: { recordingId },
    attributes: ["encoding", "frames", "data"],
    order: [["chunkIndex", "ASC"]],
    raw: true,
  });
  return Promise.all(chunks.map((c) => decodeChunk(c.encoding, c.frames ?? null, c.data ?? null)));
}
