import { QueryTypes } from "sequelize";
import type { Harness } from "./harness.ts";

/** Who made a test recording, of which arm, with which profile version (insertRecording's subject fields). */
export interface RecordingSubject {
  driverId: string;
  armId: number;
  profileId: number;
  versionId: number;
}

/**
 * A seeded version as a test recording's subject, driven by its profile's operator: the first version of
 * the demo seed (the test set-up seeds it: global-setup.ts), or the first on the arm with `armSlug`.
 */
export async function seededRecordingSubject(h: Harness, armSlug?: string): Promise<RecordingSubject> {
  const onArm = armSlug === undefined ? "" : " JOIN arms a ON a.id = p.arm_id WHERE a.slug = ?";
  const [row] = await h.db.query<{ profile_id: number; version_id: number; arm_id: number; operator_id: string }>(
    `SELECT v.profile_id, v.id AS version_id, p.arm_id, p.operator_id FROM profile_versions v JOIN profiles p ON p.id = v.profile_id${onArm} ORDER BY v.id LIMIT 1`,
    { replacements: armSlug === undefined ? [] : [armSlug], type: QueryTypes.SELECT },
  );
  if (!row) throw new Error(`no seeded profile version${armSlug === undefined ? "" : ` on ${armSlug}`}`);
  return { driverId: row.operator_id, armId: row.arm_id, profileId: row.profile_id, versionId: row.version_id };
}
