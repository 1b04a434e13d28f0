import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";
import { refuseRowsWhen } from "./columns.ts";

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
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await db.query(`
    CREATE TRIGGER approvals_before_insert BEFORE INSERT ON approvals FOR EACH ROW
    BEGIN
      DECLARE v_state VARCHAR(20);
      DECLARE v_author VARCHAR(40);
      DECLARE v_sha CHAR(64);
      SELECT s.state, v.author_id, v.params_sha256 INTO v_state, v_author, v_sha
        FROM profile_versions v JOIN version_status s ON s.version_id = v.id
        WHERE v.id = NEW.version_id;
      IF v_state IS NULL OR v_state <> 'submitted' THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'only a submitted version can be approved';
      END IF;
      IF NEW.approver_id = v_author THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'the author of a version cannot approve it';
      END IF;
      IF NOT (NEW.params_sha256 <=> v_sha) THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'an approval must name the SHA-256 of the version''s parameters';
      END IF;
      SET NEW.approved_at = CURRENT_TIMESTAMP(3);
    END`);
  await db.query(`
    CREATE TRIGGER approvals_after_insert AFTER INSERT ON approvals FOR EACH ROW
    BEGIN
      UPDATE profile_versions SET locked_at = NEW.approved_at WHERE id = NEW.version_id AND locked_at IS NULL;
      UPDATE version_status
        SET state = 'approved', decided_by = NEW.approver_id, decided_at = NEW.approved_at, decision_comment = NEW.comment
        WHERE version_id = NEW.version_id;
    END`);
  await refuseRowsWhen(
    qi,
    "version_status_before_insert",
    "BEFORE INSERT",
    "version_status",
    `NEW.state <> 'draft' OR NEW.submitted_at IS NOT NULL OR NEW.decided_by IS NOT NULL
         OR NEW.decided_at IS NOT NULL OR NEW.decision_comment IS NOT NULL OR NEW.exceeds_ceilings <> 0`,
    "a version starts as a draft without a decision",
  );
  await db.query(`
    CREATE TRIGGER version_status_approval_guard BEFORE UPDATE ON version_status FOR EACH ROW
    BEGIN
      IF NOT (NEW.version_id <=> OLD.version_id) THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a status row belongs to its version for good';
      END IF;
      IF (OLD.decided_by IS NOT NULL AND NOT (NEW.decided_by <=> OLD.decided_by))
         OR (OLD.decided_at IS NOT NULL AND NOT (NEW.decided_at <=> OLD.decided_at))
         OR (OLD.decision_comment IS NOT NULL AND NOT (NEW.decision_comment <=> OLD.decision_comment)) THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a decision (decided_by, decided_at, decision_comment) cannot be changed once made';
      END IF;
      IF NEW.state = 'approved' AND OLD.state <> 'approved' THEN
        IF OLD.state <> 'submitted' THEN
          SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'only a submitted version can be approved';
        END IF;
        IF NOT EXISTS (
          SELECT 1 FROM approvals a JOIN profile_versions v ON v.id = a.version_id
          WHERE a.version_id = NEW.version_id AND a.approver_id <> v.author_id AND v.locked_at IS NOT NULL
            AND a.approver_id <=> NEW.decided_by AND a.approved_at <=> NEW.decided_at AND a.comment <=> NEW.decision_comment
        ) THEN
          SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a version is approved only by inserting its approvals row (by a user other than the author), which approves it in the same statement';
        END IF;
      END IF;
    END`);
  await refuseRowsWhen(
    qi,
    "profile_versions_lock_guard",
    "BEFORE UPDATE",
    "profile_versions",
    `OLD.locked_at IS NULL AND NEW.locked_at IS NOT NULL
         AND NOT EXISTS (SELECT 1 FROM approvals WHERE version_id = NEW.id)`,
    "a version is locked only by its approval (INSERT INTO approvals)",
  );
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TRIGGER IF EXISTS profile_versions_lock_guard");
  await db.query("DROP TRIGGER IF EXISTS version_status_approval_guard");
  await db.query("DROP TRIGGER IF EXISTS version_status_before_insert");
  await db.query("DROP TRIGGER IF EXISTS approvals_after_insert");
  await db.query("DROP TRIGGER IF EXISTS approvals_before_insert");
};
