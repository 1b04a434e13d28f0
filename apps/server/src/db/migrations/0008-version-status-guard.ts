import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/**
 * The body of this migration's `version_status_before_update`. 0016 replaces the trigger, and its down()
 * restores this one from this text (as it stood then: after 0014's guard, so PRECEDES it).
 */
export const VERSION_STATUS_BEFORE_UPDATE_BODY = `
    BEGIN
      IF OLD.state = 'approved' AND NEW.state NOT IN ('approved', 'superseded', 'retired') THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'an approved version can only be superseded or retired';
      END IF;
      IF OLD.state = 'retired' AND NEW.state <> 'retired' THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a retired version stays retired';
      END IF;
      IF OLD.state IN ('superseded', 'rejected') AND NEW.state NOT IN (OLD.state, 'retired') THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a superseded or rejected version can only be retired';
      END IF;
      IF OLD.exceeds_ceilings = 1 AND NEW.exceeds_ceilings = 0 THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a ceiling flag stays until a compliant version is approved';
      END IF;
    END`;

/**
 * The lifecycle of a version, guarded in the database too: an approved version may only become
 * superseded or retired, nothing comes back from retired, superseded or rejected (except to retired),
 * a ceiling flag once set stays set (the version needs a compliant successor), and status rows are
 * never deleted. The service enforces the same rules with clear API errors; this catches raw SQL.
 * Triggers are SQL: queryInterface's createTrigger and dropTrigger exist for PostgreSQL only.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TRIGGER version_status_before_update BEFORE UPDATE ON version_status FOR EACH ROW${VERSION_STATUS_BEFORE_UPDATE_BODY}`);
  await db.query(`
    CREATE TRIGGER version_status_before_delete BEFORE DELETE ON version_status FOR EACH ROW
    BEGIN
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'version status rows are never deleted';
    END`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TRIGGER IF EXISTS version_status_before_delete");
  await db.query("DROP TRIGGER IF EXISTS version_status_before_update");
};
