import { enumOf, flag, json, NULLABLE, primaryKey, serialId, sha256, string, text, time, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, createTrigger, refusal, refuseRowsWhen, schemaStep, timeNow, timeNowOnUpdate, triggerBody } from "./columns.ts";

/**
 * Rate profiles and their versions. A version's content is immutable from the moment it is written:
 * the BEFORE UPDATE trigger allows exactly one change, setting locked_at from NULL (the approval), and
 * refuses everything once locked_at is set; the BEFORE DELETE trigger refuses deleting a locked row.
 * The lifecycle state lives in version_status, so moving a version through its states never touches
 * the locked row. No ON DELETE CASCADE here: MariaDB does not fire triggers for cascaded deletes.
 * The triggers are SQL: queryInterface's createTrigger exists for PostgreSQL only.
 */
export const up = schemaStep(async (qi) => {
  await qi.createTable("profiles", {
    id: serialId(),
    name: string(120),
    operator_id: userRef(),
    arm_id: unsigned(),
    created_by: userRef(),
    created_at: timeNow(),
  });
  await qi.addIndex("profiles", ["operator_id"], { name: "profiles_operator" });
  await addForeignKeys(qi, "profiles", { operator_id: "users", arm_id: "arms", created_by: "users" });

  await qi.createTable("profile_versions", {
    id: serialId(),
    profile_id: unsigned(),
    number: unsigned(),
    parent_version_id: unsigned(NULLABLE),
    params: json(),
    params_sha256: sha256(),
    note: text(),
    author_id: userRef(),
    created_at: timeNow(),
    locked_at: time(NULLABLE),
  });
  await qi.addConstraint("profile_versions", { type: "unique", name: "profile_versions_number_unique", fields: ["profile_id", "number"] });
  await addForeignKeys(qi, "profile_versions", { profile_id: "profiles", parent_version_id: ["profile_versions", "parent"], author_id: "users" });
  await createTrigger(qi, "profile_versions_before_update", "BEFORE UPDATE", "profile_versions", triggerBody(
    refusal("OLD.locked_at IS NOT NULL", "profile version is locked (approved): it cannot be changed"),
    refusal(
      [
        "NOT (NEW.id <=> OLD.id AND NEW.profile_id <=> OLD.profile_id AND NEW.number <=> OLD.number",
        "        AND NEW.parent_version_id <=> OLD.parent_version_id AND NEW.params <=> OLD.params",
        "        AND NEW.params_sha256 <=> OLD.params_sha256 AND NEW.note <=> OLD.note",
        "        AND NEW.author_id <=> OLD.author_id AND NEW.created_at <=> OLD.created_at)",
      ],
      "profile versions are immutable: save a new version instead",
    ),
  ));
  await refuseRowsWhen(qi, "profile_versions_before_delete", "BEFORE DELETE", "profile_versions", "OLD.locked_at IS NOT NULL", "profile version is locked (approved): it cannot be deleted");

  await qi.createTable("version_status", {
    version_id: primaryKey(unsigned()),
    state: enumOf(["draft", "submitted", "approved", "rejected", "superseded", "retired"], "draft"),
    submitted_at: time(NULLABLE),
    decided_by: userRef(NULLABLE),
    decided_at: time(NULLABLE),
    decision_comment: text(NULLABLE),
    exceeds_ceilings: flag(false),
    updated_at: timeNowOnUpdate(),
  });
  await qi.addIndex("version_status", ["state"], { name: "version_status_state" });
  await addForeignKeys(qi, "version_status", { version_id: "profile_versions", decided_by: "users" });
});

export const down = schemaStep(async (qi) => {
  await qi.dropTable("version_status");
  await qi.dropTable("profile_versions");
  await qi.dropTable("profiles");
});
