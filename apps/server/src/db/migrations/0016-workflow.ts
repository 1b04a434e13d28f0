import { QueryTypes } from "sequelize";
import { enumOf, NULLABLE, serialId, text, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, createTrigger, readNewVersion, refusal, refuseEveryRow, refuseRowsWhen, schemaStep, timeNow, triggerBody, when } from "./columns.ts";
import { APPROVED_MOVES_ON_ONLY, RETIRED_IS_FINAL, VERSION_STATUS_BEFORE_UPDATE_BODY } from "./0008-version-status-guard.ts";

/**
 * The workflow pass (issue 13, items 3 and 4):
 *
 * - `version_status.state` gains `withdrawn`: a submission taken back by its author, or withdrawn when a
 *   newer version of the same profile is submitted. Like rejected it is final except for retiring; the
 *   withdrawal's who, when and note are the status row's decision fields (immutable once set, 0014).
 * - `version_ceiling_events`: the flag history of a version, append-only — a `flag` row when a ceiling
 *   change puts an approved version above the ceilings, a `reconfirm` row when a safety officer confirms a
 *   flagged version that complies with the ceilings now in force. The version's current flag stays
 *   `version_status.exceeds_ceilings`, so the driving rule is unchanged.
 * - The flag is still never cleared by an UPDATE (0008's rule, tightened rather than loosened): it is
 *   cleared only by inserting a `reconfirm` row, whose AFTER INSERT trigger clears it and records the
 *   row's id in `version_status.reconfirmation_id` in that same statement. The status guard lets
 *   exceeds_ceilings go 1 → 0 only together with a *new* reconfirmation_id that names a `reconfirm` row of
 *   that version; since every such INSERT consumes its row at once, a bare UPDATE can only name a row that
 *   was already used, and is refused. The BEFORE INSERT trigger accepts a `reconfirm` row only for an
 *   approved, flagged version, with a comment, by someone other than the version's author. Whether the
 *   version complies with the ceilings in force is the server's check (modules/ceilings), in the same
 *   transaction as the insert, under a shared lock on the ceilings.
 * - 0008's `version_status_before_update` is recreated with `withdrawn` among the final states and its
 *   flag clause moved into `version_status_flag_guard`; everything it refused is still refused.
 * - Versions flagged before this migration get a `flag` row each (their flagging is in the audit trail),
 *   so every flagged version has a history.
 *
 * Triggers are SQL: queryInterface's createTrigger exists for PostgreSQL only.
 */
const STATES_BEFORE = ["draft", "submitted", "approved", "rejected", "superseded", "retired"];

export const up = schemaStep(async (qi, db) => {
  await qi.changeColumn("version_status", "state", enumOf([...STATES_BEFORE, "withdrawn"], "draft"));

  await qi.createTable("version_ceiling_events", {
    id: serialId(),
    version_id: unsigned(),
    kind: enumOf(["flag", "reconfirm"]),
    /** The site-ceilings revision the version was found above (flag) or checked against (reconfirm). */
    ceilings_revision: unsigned(),
    /** Who changed the ceilings (flag) or re-confirmed (reconfirm); NULL for a flag set by a migration. */
    actor_id: userRef(NULLABLE),
    /** A flag: which ceilings the version exceeds; a re-confirmation: the safety officer's comment. */
    comment: text(),
    at: timeNow(),
  });
  await qi.addIndex("version_ceiling_events", ["version_id", "id"], { name: "version_ceiling_events_version" });
  await addForeignKeys(qi, "version_ceiling_events", { version_id: "profile_versions", actor_id: "users" });

  await qi.addColumn("version_status", "reconfirmation_id", unsigned(NULLABLE));
  await addForeignKeys(qi, "version_status", { reconfirmation_id: "version_ceiling_events" });

  // The history of versions flagged before this migration: one flag row each, against the ceilings in force.
  // The read is SQL: queryInterface's select has no MAX or join (and a migration never uses the app's models).
  const [latest] = await db.query<{ revision: number | null }>("SELECT MAX(revision) AS revision FROM site_ceilings", { type: QueryTypes.SELECT });
  const flagged = await db.query<{ version_id: number; updated_at: Date }>("SELECT version_id, updated_at FROM version_status WHERE exceeds_ceilings = 1", {
    type: QueryTypes.SELECT,
  });
  if (flagged.length) {
    await qi.bulkInsert(
      "version_ceiling_events",
      flagged.map((s) => ({
        version_id: s.version_id,
        kind: "flag",
        ceilings_revision: latest?.revision ?? 0,
        actor_id: null,
        comment: "flagged above the site ceilings before the flag history was kept (see the audit trail)",
        at: s.updated_at,
      })),
    );
  }

  await refuseEveryRow(qi, "version_ceiling_events_before_update", "BEFORE UPDATE", "version_ceiling_events", "the flag history is never changed");
  await refuseEveryRow(qi, "version_ceiling_events_before_delete", "BEFORE DELETE", "version_ceiling_events", "the flag history is never deleted");
  await createTrigger(qi, "version_ceiling_events_before_insert", "BEFORE INSERT", "version_ceiling_events", triggerBody(
    ...readNewVersion({ v_state: ["VARCHAR(20)", "s.state"], v_flagged: ["TINYINT", "s.exceeds_ceilings"], v_author: ["VARCHAR(40)", "v.author_id"] }),
    when(
      "NEW.kind = 'reconfirm'",
      refusal("v_state IS NULL OR v_state <> 'approved' OR v_flagged <> 1", "only an approved version flagged above the ceilings can be re-confirmed"),
      refusal("NEW.actor_id IS NULL OR NEW.actor_id <=> v_author", "a re-confirmation names its safety officer, who is not the author of the version"),
      refusal("CHAR_LENGTH(TRIM(NEW.comment)) < 3", "a re-confirmation needs a comment"),
    ),
    "SET NEW.at = CURRENT_TIMESTAMP(3);",
  ));
  await createTrigger(qi, "version_ceiling_events_after_insert", "AFTER INSERT", "version_ceiling_events", triggerBody(
    when("NEW.kind = 'reconfirm'", "UPDATE version_status SET exceeds_ceilings = 0, reconfirmation_id = NEW.id WHERE version_id = NEW.version_id;"),
  ));

  // Recreated where it stood: first of the BEFORE UPDATE triggers (PRECEDES 0014's guard), so a change both
  // refuse keeps the lifecycle's message (e.g. "a retired version stays retired").
  await db.query("DROP TRIGGER version_status_before_update");
  await createTrigger(qi, "version_status_before_update", "BEFORE UPDATE", "version_status", triggerBody(
    APPROVED_MOVES_ON_ONLY,
    RETIRED_IS_FINAL,
    refusal(
      "OLD.state IN ('superseded', 'rejected', 'withdrawn') AND NEW.state NOT IN (OLD.state, 'retired')",
      "a superseded, rejected or withdrawn version can only be retired",
    ),
  ), { precedes: "version_status_approval_guard" });
  await createTrigger(qi, "version_status_flag_guard", "BEFORE UPDATE", "version_status", triggerBody(
    when(
      "NOT (NEW.reconfirmation_id <=> OLD.reconfirmation_id)",
      refusal(
        [
          "NOT (OLD.exceeds_ceilings = 1 AND NEW.exceeds_ceilings = 0) OR NEW.reconfirmation_id IS NULL",
          "   OR (OLD.reconfirmation_id IS NOT NULL AND NEW.reconfirmation_id <= OLD.reconfirmation_id)",
          "   OR NOT EXISTS (SELECT 1 FROM version_ceiling_events e",
          "                  WHERE e.id = NEW.reconfirmation_id AND e.version_id = NEW.version_id AND e.kind = 'reconfirm')",
        ],
        "a re-confirmation is recorded only by inserting its version_ceiling_events row",
      ),
    ),
    refusal(
      "OLD.exceeds_ceilings = 1 AND NEW.exceeds_ceilings = 0 AND NEW.reconfirmation_id <=> OLD.reconfirmation_id",
      "a ceiling flag stays until a compliant version is approved or a safety officer re-confirms it (INSERT INTO version_ceiling_events)",
    ),
  ));
  await refuseRowsWhen(qi, "version_status_reconfirmation_insert_guard", "BEFORE INSERT", "version_status", "NEW.reconfirmation_id IS NOT NULL", "a version starts as a draft without a decision");
});

export const down = schemaStep(async (qi, db) => {
  await db.query("DROP TRIGGER IF EXISTS version_status_reconfirmation_insert_guard");
  await db.query("DROP TRIGGER IF EXISTS version_status_flag_guard");
  await db.query("DROP TRIGGER IF EXISTS version_status_before_update");
  // 0008's trigger as it was.
  await createTrigger(qi, "version_status_before_update", "BEFORE UPDATE", "version_status", VERSION_STATUS_BEFORE_UPDATE_BODY, {
    precedes: "version_status_approval_guard",
  });
  await db.query("DROP TRIGGER IF EXISTS version_ceiling_events_after_insert");
  await db.query("DROP TRIGGER IF EXISTS version_ceiling_events_before_insert");
  await db.query("DROP TRIGGER IF EXISTS version_ceiling_events_before_delete");
  await db.query("DROP TRIGGER IF EXISTS version_ceiling_events_before_update");
  // SQL: queryInterface's removeConstraint and removeColumn first read the keys with an untyped query, which
  // the unpatched Sequelize cannot return from the mariadb driver (DEVELOPERS.md, "Known pins and patches").
  await db.query("ALTER TABLE version_status DROP FOREIGN KEY version_status_reconfirmation_fk", { type: QueryTypes.RAW });
  await db.query("ALTER TABLE version_status DROP COLUMN reconfirmation_id", { type: QueryTypes.RAW });
  await qi.dropTable("version_ceiling_events");
  await qi.changeColumn("version_status", "state", enumOf(STATES_BEFORE, "draft"));
});
