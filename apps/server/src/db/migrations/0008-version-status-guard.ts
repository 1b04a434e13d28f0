import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";
import { createTrigger, refusal, schemaStep, signal, triggerBody } from "./columns.ts";

/** 0008's lifecycle rules that 0016 keeps as they are. */
export const APPROVED_MOVES_ON_ONLY = refusal(
  "OLD.state = 'approved' AND NEW.state NOT IN ('approved', 'superseded', 'retired')",
  "an approved version can only be superseded or retired",
);
export const RETIRED_IS_FINAL = refusal("OLD.state = 'retired' AND NEW.state <> 'retired'", "a retired version stays retired");

/**
 * The body of this migration's `version_status_before_update`. 0016 replaces the trigger, and its down()
 * restores this one from this text (as it stood then: after 0014's guard, so PRECEDES it).
 */
export const VERSION_STATUS_BEFORE_UPDATE_BODY = triggerBody(
  APPROVED_MOVES_ON_ONLY,
  RETIRED_IS_FINAL,
  refusal("OLD.state IN ('superseded', 'rejected') AND NEW.state NOT IN (OLD.state, 'retired')", "a superseded or rejected version can only be retired"),
  refusal("OLD.exceeds_ceilings = 1 AND NEW.exceeds_ceilings = 0", "a ceiling flag stays until a compliant version is approved"),
);

/**
 * The lifecycle of a version, guarded in the database too: an approved version may only become
 * superseded or retired, nothing comes back from retired, superseded or rejected (except to retired),
 * a ceiling flag once set stays set (the version needs a compliant successor), and status rows are
 * never deleted. The service enforces the same rules with clear API errors; this catches raw SQL.
 * Triggers are SQL: queryInterface's createTrigger and dropTrigger exist for PostgreSQL only.
 */
export const up = schemaStep(async (qi) => {
  await createTrigger(qi, "version_status_before_update", "BEFORE UPDATE", "version_status", VERSION_STATUS_BEFORE_UPDATE_BODY);
  await createTrigger(qi, "version_status_before_delete", "BEFORE DELETE", "version_status", triggerBody(signal("version status rows are never deleted")));
});

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TRIGGER IF EXISTS version_status_before_delete");
  await db.query("DROP TRIGGER IF EXISTS version_status_before_update");
};
