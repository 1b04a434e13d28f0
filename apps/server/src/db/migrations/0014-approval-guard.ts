import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";
import { createTrigger, readNewVersion, refusal, refuseRowsWhen, schemaStep, triggerBody, when } from "./columns.ts";

/**
 * An approval cannot be forged with raw SQL (issue 11, item 3).
 *
 * MariaDB has no deferred constraints and no way for a trigger to learn the transaction it runs in
 * without the PROCESS privilege (information_schema.INNODB_TRX), so "the approval row is inserted in
 * the same transaction as the state change" is enforced by making them one statement:
 *
 * - Inserting the approvals row *is* the approval. Its BEFORE INSERT trigger checks that the version
 *   is submitted, that the approver is not the author and that the approved hash is the version's
 *   (and stamps approved_at with the time of the insert); its AFTER INSERT trigger locks the version
 *   row and moves version_status to approved with decided_by/decided_at/decision_comment taken from
 *   the approvals row. Any failure undoes the whole INSERT.
 * - version_status may become 'approved' only from 'submitted' and only when the version's approvals
 *   row exists, names an approver other than the author, matches decided_by, decided_at and
 *   decision_comment, and the version row is locked. Because every approvals INSERT moves its version
 *   out of 'submitted' in that same statement, and nothing returns to 'approved' (0008), an approvals
 *   row exists beside a submitted version only inside that INSERT: a bare
 *   `UPDATE version_status SET state = 'approved'` is always refused, and the row and the state change
 *   can never be split across transactions.
 * - profile_versions.locked_at may be set only when the version's approvals row exists (the lock is
 *   part of the approval, never on its own).
 * - A status row is created as a draft without a decision and always belongs to the same version.
 * - decided_by, decided_at and decision_comment are immutable once set (NULL → value is allowed once).
 *
 * The triggers run with their definer's privileges (the migration account), so they read and write
 * the tables they guard even when the runtime account could not. Triggers are SQL: queryInterface's
 * createTrigger and dropTrigger exist for PostgreSQL only.
 */
export const up = schemaStep(async (qi) => {
  await createTrigger(qi, "approvals_before_insert", "BEFORE INSERT", "approvals", triggerBody(
    ...readNewVersion({ v_state: ["VARCHAR(20)", "s.state"], v_author: ["VARCHAR(40)", "v.author_id"], v_sha: ["CHAR(64)", "v.params_sha256"] }),
    refusal("v_state IS NULL OR v_state <> 'submitted'", "only a submitted version can be approved"),
    refusal("NEW.approver_id = v_author", "the author of a version cannot approve it"),
    refusal("NOT (NEW.params_sha256 <=> v_sha)", "an approval must name the SHA-256 of the version's parameters"),
    "SET NEW.approved_at = CURRENT_TIMESTAMP(3);",
  ));
  await createTrigger(qi, "approvals_after_insert", "AFTER INSERT", "approvals", triggerBody(
    "UPDATE profile_versions SET locked_at = NEW.approved_at WHERE id = NEW.version_id AND locked_at IS NULL;",
    [
      "UPDATE version_status",
      "  SET state = 'approved', decided_by = NEW.approver_id, decided_at = NEW.approved_at, decision_comment = NEW.comment",
      "  WHERE version_id = NEW.version_id;",
    ],
  ));
  await refuseRowsWhen(
    qi,
    "version_status_before_insert",
    "BEFORE INSERT",
    "version_status",
    [
      "NEW.state <> 'draft' OR NEW.submitted_at IS NOT NULL OR NEW.decided_by IS NOT NULL",
      "   OR NEW.decided_at IS NOT NULL OR NEW.decision_comment IS NOT NULL OR NEW.exceeds_ceilings <> 0",
    ],
    "a version starts as a draft without a decision",
  );
  await createTrigger(qi, "version_status_approval_guard", "BEFORE UPDATE", "version_status", triggerBody(
    refusal("NOT (NEW.version_id <=> OLD.version_id)", "a status row belongs to its version for good"),
    refusal(
      [
        "(OLD.decided_by IS NOT NULL AND NOT (NEW.decided_by <=> OLD.decided_by))",
        "   OR (OLD.decided_at IS NOT NULL AND NOT (NEW.decided_at <=> OLD.decided_at))",
        "   OR (OLD.decision_comment IS NOT NULL AND NOT (NEW.decision_comment <=> OLD.decision_comment))",
      ],
      "a decision (decided_by, decided_at, decision_comment) cannot be changed once made",
    ),
    when(
      "NEW.state = 'approved' AND OLD.state <> 'approved'",
      refusal("OLD.state <> 'submitted'", "only a submitted version can be approved"),
      refusal(
        [
          "NOT EXISTS (",
          "  SELECT 1 FROM approvals a JOIN profile_versions v ON v.id = a.version_id",
          "  WHERE a.version_id = NEW.version_id AND a.approver_id <> v.author_id AND v.locked_at IS NOT NULL",
          "    AND a.approver_id <=> NEW.decided_by AND a.approved_at <=> NEW.decided_at AND a.comment <=> NEW.decision_comment",
          ")",
        ],
        "a version is approved only by inserting its approvals row (by a user other than the author), which approves it in the same statement",
      ),
    ),
  ));
  await refuseRowsWhen(
    qi,
    "profile_versions_lock_guard",
    "BEFORE UPDATE",
    "profile_versions",
    ["OLD.locked_at IS NULL AND NEW.locked_at IS NOT NULL", "   AND NOT EXISTS (SELECT 1 FROM approvals WHERE version_id = NEW.id)"],
    "a version is locked only by its approval (INSERT INTO approvals)",
  );
});

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TRIGGER IF EXISTS profile_versions_lock_guard");
  await db.query("DROP TRIGGER IF EXISTS version_status_approval_guard");
  await db.query("DROP TRIGGER IF EXISTS version_status_before_insert");
  await db.query("DROP TRIGGER IF EXISTS approvals_after_insert");
  await db.query("DROP TRIGGER IF EXISTS approvals_before_insert");
};
