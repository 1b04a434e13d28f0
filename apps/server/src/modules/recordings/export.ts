import { Readable } from "node:stream";
import type { Sequelize } from "sequelize";
import { stringify } from "csv-stringify";
import { Op } from "sequelize";
import { recordedFrameSchema, toolPoseOf, type RecordedFrame, type Recording } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";
import { findArmForVersion } from "../arms/service.ts";
import { decodeChunk } from "./chunk-codec.ts";

/**
 * Recordings out as CSV and JSON, streamed (issue 12): chunks are read a few at a time (by chunk index,
 * keyset) and decoded with chunk-codec.ts's `decodeChunk`, whatever their encoding, so memory holds a few
 * seconds of frames, not the recording. Frames are checked with the shared schema as readFrames does.
 * Units: SI, stated in every CSV column name; σ_min and λ are in the Jacobian's metre-and-radian units.
 */

/** Chunks read per query: ~1 s of frames each (writer.ts), so 20 is ~20 s of a session. */
const CHUNKS_PER_READ = 20;

/** The recording's frames in order, chunk by chunk. */
export async function* recordingFrames(db: Sequelize, recordingId: number, chunksPerRead = CHUNKS_PER_READ): AsyncGenerator<RecordedFrame> {
  let after = -1;
  for (;;) {
    const chunks = await modelsOf(db).RecordingChunk.findAll({
      where: { recordingId, chunkIndex: { [Op.gt]: after } },
      attributes: ["chunkIndex", "encoding", "frames", "data"],
      order: [["chunkIndex", "ASC"]],
      limit: chunksPerRead,
      raw: true,
    });
    for (const c of chunks) {
      for (const f of await decodeChunk(c.encoding, c.frames ?? null, c.data ?? null)) {
        const parsed = recordedFrameSchema.safeParse(f);
        if (parsed.success) yield parsed.data;
      }
    }
    if (chunks.length < chunksPerRead) return;
    after = chunks[chunks.length - 1]!.chunkIndex;
  }
}

/** Joint position and rate units by joint type (a prismatic joint moves in metres). */
async function jointUnits(db: Sequelize, recording: Recording): Promise<("rad" | "m")[]> {
  const arm = await findArmForVersion(db, recording.versionId, recording.armId);
  return (arm?.model.joints ?? []).map((j) => (j.type === "prismatic" ? "m" : "rad"));
}

export async function recordingCsvHeader(db: Sequelize, recording: Recording): Promise<string[]> {
  const units = await jointUnits(db, recording);
  return [
    "t_s",
    ...units.map((u, i) => `q${i + 1}_${u}`),
    ...units.map((u, i) => `qdot${i + 1}_${u}_s`),
    "tcp_x_m", "tcp_y_m", "tcp_z_m", "tcp_roll_rad", "tcp_pitch_rad", "tcp_yaw_rad",
    "sigma_min_m", "lambda_m", "binding_limit", "binding_joint",
  ];
}

function csvRow(f: RecordedFrame, n: number): (string | number)[] {
  // TCP orientation as roll-pitch-yaw, R = Rz·Ry·Rx (packages/shared arm-library.ts).
  const { positionM, rpyRad } = toolPoseOf(f.pose);
  const pad = (v: number[]) => Array.from({ length: n }, (_, i) => v[i] ?? "");
  return [f.t, ...pad(f.q), ...pad(f.qdot), ...positionM, ...rpyRad, f.sigmaMin, f.lambda, f.binding, f.bindingJoint >= 0 ? f.bindingJoint + 1 : ""];
}

/** The recording as CSV (csv-stringify, CRLF), header with units, one row per recorded frame. */
export async function streamRecordingCsv(db: Sequelize, recording: Recording): Promise<Readable> {
  const header = await recordingCsvHeader(db, recording);
  const joints = (header.length - 11) / 2; // t, then q and qdot per joint, then 10 columns
  async function* rows() {
    yield header;
    for await (const f of recordingFrames(db, recording.id)) yield csvRow(f, joints);
  }
  return Readable.from(rows()).pipe(stringify({ record_delimiter: "\r\n" }));
}

/** The recording as JSON: `{ recording, units, frames: [...] }`, the frames as the shared schema has them. */
export function streamRecordingJson(db: Sequelize, recording: Recording): Readable {
  async function* parts() {
    const units = { t: "s", q: "rad (m for a prismatic joint)", qdot: "rad/s (m/s)", pose: "4x4 row-major, m", sigmaMin: "m/rad (Jacobian units)", lambda: "m/rad" };
    yield `{"recording":${JSON.stringify(recording)},"units":${JSON.stringify(units)},"frames":[`;
    let first = true;
    for await (const f of recordingFrames(db, recording.id)) {
      yield `${first ? "" : ","}\n${JSON.stringify(f)}`;
      first = false;
    }
    yield "\n]}\n";
  }
  return Readable.from(parts());
}
