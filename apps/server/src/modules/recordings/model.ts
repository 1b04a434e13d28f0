import { QueryTypes, type Sequelize } from "sequelize";
import { recordedFrameSchema, recordingSummarySchema, type RecordedFrame, type Recording } from "@jogwright/shared";

/** Data access for jog recordings (tables of migration 0010). Plain objects out. */
type RecordingRow = {
  id: number;
  session_id: string;
  driver_id: string;
  driver_name: string | null;
  arm_id: number;
  arm_name: string | null;
  profile_id: number;
  profile_name: string | null;
  version_id: number;
  version_number: number | null;
  started_at: Date;
  ended_at: Date | null;
  end_reason: string | null;
  summary: string | object | null;
};

const SELECT_RECORDINGS = `
  SELECT r.id, r.session_id, r.driver_id, u.display_name AS driver_name, r.arm_id, a.name AS arm_name,
         r.profile_id, p.name AS profile_name, r.version_id, v.number AS version_number,
         r.started_at, r.ended_at, r.end_reason, r.summary
  FROM jog_recordings r
  LEFT JOIN users u ON u.id = r.driver_id
  LEFT JOIN arms a ON a.id = r.arm_id
  LEFT JOIN profiles p ON p.id = r.profile_id
  LEFT JOIN profile_versions v ON v.id = r.version_id`;

function toRecording(row: RecordingRow): Recording {
  const raw = typeof row.summary === "string" ? JSON.parse(row.summary) : row.summary;
  const summary = raw === null ? null : recordingSummarySchema.safeParse(raw);
  return {
    id: row.id,
    sessionId: row.session_id,
    driverId: row.driver_id,
    driverName: row.driver_name ?? "",
    armId: row.arm_id,
    armName: row.arm_name ?? "",
    profileId: row.profile_id,
    profileName: row.profile_name ?? "",
    versionId: row.version_id,
    versionNumber: row.version_number ?? 0,
    startedAt: new Date(row.started_at).toISOString(),
    endedAt: row.ended_at ? new Date(row.ended_at).toISOString() : null,
    endReason: row.end_reason,
    summary: summary && summary.success ? summary.data : null,
  };
}

export async function insertRecording(
  db: Sequelize,
  r: { sessionId: string; driverId: string; armId: number; profileId: number; versionId: number; startedAt: Date },
): Promise<number> {
  const [id] = await db.query(
    `INSERT INTO jog_recordings (session_id, driver_id, arm_id, profile_id, version_id, started_at) VALUES (?, ?, ?, ?, ?, ?)`,
    { replacements: [r.sessionId, r.driverId, r.armId, r.profileId, r.versionId, r.startedAt], type: QueryTypes.INSERT },
  );
  return Number(id);
}

export async function insertChunk(db: Sequelize, recordingId: number, chunkIndex: number, frameCount: number, framesJson: string): Promise<void> {
  // Idempotent on retry: a chunk whose first attempt did land is not written twice.
  await db.query(
    `INSERT INTO jog_recording_chunks (recording_id, chunk_index, frame_count, frames) VALUES (?, ?, ?, ?)
     ON DUPLICATE KEY UPDATE frame_count = VALUES(frame_count)`,
    { replacements: [recordingId, chunkIndex, frameCount, framesJson] },
  );
}

export async function finishRecording(db: Sequelize, recordingId: number, endedAt: Date, endReason: string, summary: object): Promise<void> {
  await db.query(`UPDATE jog_recordings SET ended_at = ?, end_reason = ?, summary = ? WHERE id = ?`, {
    replacements: [endedAt, endReason, JSON.stringify(summary), recordingId],
  });
}

export async function listRecordings(db: Sequelize, driverId: string | null, limit = 200): Promise<Recording[]> {
  const rows = await db.query<RecordingRow>(
    `${SELECT_RECORDINGS} ${driverId ? "WHERE r.driver_id = ?" : ""} ORDER BY r.started_at DESC, r.id DESC LIMIT ${Number(limit)}`,
    { replacements: driverId ? [driverId] : [], type: QueryTypes.SELECT },
  );
  return rows.map(toRecording);
}

export async function findRecording(db: Sequelize, id: number): Promise<Recording | null> {
  const rows = await db.query<RecordingRow>(`${SELECT_RECORDINGS} WHERE r.id = ?`, { replacements: [id], type: QueryTypes.SELECT });
  return rows[0] ? toRecording(rows[0]) : null;
}

/** All frames in order; each parsed with the shared schema (extra keys stripped, bad ones skipped). */
export async function readFrames(db: Sequelize, recordingId: number): Promise<RecordedFrame[]> {
  const rows = await db.query<{ frames: string | unknown[] }>(
    "SELECT frames FROM jog_recording_chunks WHERE recording_id = ? ORDER BY chunk_index",
    { replacements: [recordingId], type: QueryTypes.SELECT },
  );
  const out: RecordedFrame[] = [];
  for (const row of rows) {
    // The driver hands a JSON-checked column back already parsed.
    const list = (typeof row.frames === "string" ? JSON.parse(row.frames) : row.frames) as unknown[];
    for (const f of list) {
      const parsed = recordedFrameSchema.safeParse(f);
      if (parsed.success) out.push(parsed.data);
    }
  }
  return out;
}
