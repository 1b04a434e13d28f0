import { QueryTypes } from "sequelize";
import { double, json, NULLABLE, primaryKey, serialId, string, text, time, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, refuseEveryRow, schemaStep, timeNow, timeNowOnUpdate } from "./columns.ts";

/**
 * The arm library (issue 12):
 * - `arm_revisions`: every kinematic definition an arm has had (DH model JSON in SI, ready pose), numbered
 *   1, 2, … per arm. Written once, never changed or removed (triggers): editing an arm adds a revision.
 *   `arms.model`/`arms.ready_pose` stay as the latest revision's copy, so what read them keeps working.
 * - `arm_tools`: tools attached to one revision (name, TCP position [m] and roll-pitch-yaw [rad] in the
 *   flange frame, mass [kg], note). A tool is retired (`retired_at`), never deleted: versions name it.
 * - `version_arms`: the arm revision and tool a profile version was saved on. Written with the version,
 *   never changed or removed (triggers), like the version row itself (0003).
 * Existing data: every arm becomes its revision 1, with its model's tool transform as a tool record (the
 * demo arms' tools are pure translations along the flange z axis; rpy is read from the rotation block);
 * every existing version is bound to revision 1 of its profile's arm and that tool. Migrations do not use
 * the app's models (they change with the code): the reads are typed SELECTs, the writes bulkInsert.
 */
export const up = schemaStep(async (qi, db) => {
  await qi.createTable("arm_revisions", {
    id: serialId(),
    arm_id: unsigned(),
    revision: unsigned(),
    model: json(),
    ready_pose: json(),
    note: text(),
    created_by: userRef(NULLABLE),
    created_at: timeNow(),
  });
  await qi.addConstraint("arm_revisions", { type: "unique", name: "arm_revisions_arm_revision_unique", fields: ["arm_id", "revision"] });
  await addForeignKeys(qi, "arm_revisions", { arm_id: "arms", created_by: "users" });

  await qi.createTable("arm_tools", {
    id: serialId(),
    arm_revision_id: unsigned(),
    name: string(120),
    position_m: json(),
    rpy_rad: json(),
    mass_kg: double(),
    note: text(),
    created_by: userRef(NULLABLE),
    retired_at: time(NULLABLE),
    created_at: timeNow(),
    updated_at: timeNowOnUpdate(),
  });
  await qi.addConstraint("arm_tools", { type: "unique", name: "arm_tools_revision_name_unique", fields: ["arm_revision_id", "name"] });
  await addForeignKeys(qi, "arm_tools", { arm_revision_id: ["arm_revisions", "revision"], created_by: "users" });

  await qi.createTable("version_arms", {
    version_id: primaryKey(unsigned()),
    arm_revision_id: unsigned(),
    tool_id: unsigned(NULLABLE),
    created_at: timeNow(),
  });
  await addForeignKeys(qi, "version_arms", { version_id: "profile_versions", arm_revision_id: ["arm_revisions", "revision"], tool_id: "arm_tools" });

  await refuseEveryRow(qi, "arm_revisions_before_update", "BEFORE UPDATE", "arm_revisions", "an arm revision is never changed: edit the arm to add a revision");
  await refuseEveryRow(qi, "arm_revisions_before_delete", "BEFORE DELETE", "arm_revisions", "an arm revision is never removed");
  await refuseEveryRow(qi, "version_arms_before_update", "BEFORE UPDATE", "version_arms", "the arm revision of a version is never changed: save a new version");
  await refuseEveryRow(qi, "version_arms_before_delete", "BEFORE DELETE", "version_arms", "the arm revision of a version is never removed");

  // Existing arms → revision 1 (+ its tool); existing versions → that revision.
  const arms = await db.query<{ id: number; model: string | object; ready_pose: string | object }>(
    "SELECT id, model, ready_pose FROM arms ORDER BY id",
    { type: QueryTypes.SELECT },
  );
  for (const arm of arms) {
    const model = typeof arm.model === "string" ? (JSON.parse(arm.model) as { tool?: number[] }) : (arm.model as { tool?: number[] });
    const readyPose = typeof arm.ready_pose === "string" ? JSON.parse(arm.ready_pose) : arm.ready_pose;
    await qi.bulkInsert("arm_revisions", [
      { arm_id: arm.id, revision: 1, model: JSON.stringify(model), ready_pose: JSON.stringify(readyPose), note: "Revision 1: the arm as it was before arm revisions (migration 0018)." },
    ]);
    const [revision] = await db.query<{ id: number }>("SELECT id FROM arm_revisions WHERE arm_id = ? AND revision = 1", {
      type: QueryTypes.SELECT,
      replacements: [arm.id],
    });
    let toolId: number | null = null;
    if (model.tool && model.tool.length === 16) {
      const m = model.tool;
      // R = Rz(yaw)·Ry(pitch)·Rx(roll): roll = atan2(r21, r22), pitch = atan2(−r20, √(r00² + r10²)), yaw = atan2(r10, r00).
      const rpy = [Math.atan2(m[9]!, m[10]!), Math.atan2(-m[8]!, Math.hypot(m[0]!, m[4]!)), Math.atan2(m[4]!, m[0]!)];
      await qi.bulkInsert("arm_tools", [
        {
          arm_revision_id: revision!.id,
          name: "Flange tool",
          position_m: JSON.stringify([m[3], m[7], m[11]]),
          rpy_rad: JSON.stringify(rpy),
          mass_kg: 0,
          note: "The arm's tool transform before tools were records (migration 0018); mass not known.",
        },
      ]);
      const [tool] = await db.query<{ id: number }>("SELECT id FROM arm_tools WHERE arm_revision_id = ?", { type: QueryTypes.SELECT, replacements: [revision!.id] });
      toolId = tool!.id;
    }
    const versions = await db.query<{ id: number }>(
      "SELECT v.id FROM profile_versions v JOIN profiles p ON p.id = v.profile_id WHERE p.arm_id = ?",
      { type: QueryTypes.SELECT, replacements: [arm.id] },
    );
    if (versions.length) {
      await qi.bulkInsert("version_arms", versions.map((v) => ({ version_id: v.id, arm_revision_id: revision!.id, tool_id: toolId })));
    }
  }
});

export const down = schemaStep(async (qi) => {
  await qi.dropTable("version_arms");
  await qi.dropTable("arm_tools");
  await qi.dropTable("arm_revisions");
});
