import { enumOf, json, longBlob, NULLABLE, primaryKey, serialId, sha256, string, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, createTrigger, refusal, refuseEveryRow, refuseRowsWhen, schemaStep, timeNow, timeNowOnUpdate, triggerBody } from "./columns.ts";

/**
 * The tuning bench (issue 10):
 * - `trials`: engineers' custom trials of an arm (the built-in ones are generated from the arm, not stored);
 * - `trial_runs`: one offline run of a trial (built-in, custom, or a recorded session's operator input) with
 *   a profile version's parameters — or unsaved edits, then version_id is NULL and `params` says what ran.
 *   Its metrics (JSON), its time series (compressed binary, modules/trials/series-codec.ts) and the SHA-256
 *   of the series (a run is deterministic: the same version and trial give the same hash). Runs are never
 *   changed: a trigger refuses UPDATE; DELETE stays possible for drafts' runs (the runtime account has no
 *   DELETE grant on this table, so in practice nobody deletes them).
 * - `version_evidence`: the runs a version was submitted with. Fixed once the version leaves draft: a
 *   trigger refuses INSERT and DELETE unless the version is a draft (the service attaches the runs and
 *   submits in one transaction, attaching first).
 * - `audit_log.entity` gains "trial" (an engineer's custom trial is created and changed on the record).
 * Triggers are SQL: queryInterface's createTrigger exists for PostgreSQL only.
 */
const ENTITIES = ["user", "arm", "profile", "version", "ceilings", "approval", "session"];

export const up = schemaStep(async (qi) => {
  // Custom trials are audited: the trail names a new entity.
  await qi.changeColumn("audit_log", "entity", enumOf([...ENTITIES, "trial"]));
  await qi.createTable("trials", {
    id: serialId(),
    arm_id: unsigned(),
    name: string(120),
    definition: json(),
    created_by: userRef(),
    created_at: timeNow(),
    updated_at: timeNowOnUpdate(),
  });
  await qi.addConstraint("trials", { type: "unique", name: "trials_arm_name_unique", fields: ["arm_id", "name"] });
  await addForeignKeys(qi, "trials", { arm_id: "arms", created_by: "users" });

  await qi.createTable("trial_runs", {
    id: serialId(),
    // What ran (the foreign keys below): the arm, the profile, and its version (none for unsaved edits).
    arm_id: unsigned(), profile_id: unsigned(), version_id: unsigned(NULLABLE),
    params: json(),
    /** A built-in kind, "custom" or "replay". */
    trial_kind: string(40),
    trial_id: unsigned(NULLABLE),
    recording_id: unsigned(NULLABLE),
    trial_name: string(160),
    trial_definition: json(NULLABLE),
    metrics: json(),
    series: longBlob(),
    series_hash: sha256(),
    duration_ms: unsigned(),
    created_by: userRef(),
    created_at: timeNow(),
  });
  await qi.addIndex("trial_runs", ["version_id", "created_at"], { name: "trial_runs_version" });
  await qi.addIndex("trial_runs", ["profile_id", "created_at"], { name: "trial_runs_profile" });
  await addForeignKeys(qi, "trial_runs", {
    arm_id: "arms",
    profile_id: "profiles",
    version_id: "profile_versions",
    trial_id: "trials",
    recording_id: "jog_recordings",
    created_by: "users",
  });

  await qi.createTable("version_evidence", {
    version_id: primaryKey(unsigned()),
    run_id: primaryKey(unsigned()),
    attached_by: userRef(),
    attached_at: timeNow(),
  });
  await addForeignKeys(qi, "version_evidence", { version_id: "profile_versions", run_id: "trial_runs", attached_by: "users" });

  await refuseEveryRow(qi, "trial_runs_before_update", "BEFORE UPDATE", "trial_runs", "a trial run is never changed");
  await createTrigger(qi, "version_evidence_before_insert", "BEFORE INSERT", "version_evidence", triggerBody(
    refusal("(SELECT state FROM version_status WHERE version_id = NEW.version_id) <> 'draft'", "evidence is attached to a draft only"),
    refusal(
      [
        "(SELECT version_id FROM trial_runs WHERE id = NEW.run_id) IS NULL",
        "   OR (SELECT version_id FROM trial_runs WHERE id = NEW.run_id) <> NEW.version_id",
      ],
      "evidence must be a run of the same version",
    ),
  ));
  await refuseRowsWhen(
    qi,
    "version_evidence_before_delete",
    "BEFORE DELETE",
    "version_evidence",
    "(SELECT state FROM version_status WHERE version_id = OLD.version_id) <> 'draft'",
    "the evidence of a submitted version never changes",
  );
  await refuseEveryRow(qi, "version_evidence_before_update", "BEFORE UPDATE", "version_evidence", "evidence rows are never changed");
});

export const down = schemaStep(async (qi, db) => {
  for (const t of ["version_evidence_before_update", "version_evidence_before_delete", "version_evidence_before_insert", "trial_runs_before_update"]) {
    await db.query(`DROP TRIGGER IF EXISTS ${t}`);
  }
  await qi.dropTable("version_evidence");
  await qi.dropTable("trial_runs");
  await qi.dropTable("trials");
  await qi.changeColumn("audit_log", "entity", enumOf(ENTITIES));
});
