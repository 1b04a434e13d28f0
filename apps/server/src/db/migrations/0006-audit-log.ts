import { bigSerialId, enumOf, NULLABLE, sha256, string, text, userRef } from "../columns.ts";
import { refuseEveryRow, schemaStep, timeNow } from "./columns.ts";

/**
 * The append-only audit trail: who changed what and when, with the SHA-256 of the record's canonical
 * JSON before and after. Triggers refuse UPDATE and DELETE (SQL: queryInterface's createTrigger exists for
 * PostgreSQL only). actor_id has no foreign key on purpose: the trail must outlive whatever it mentions.
 */
export const up = schemaStep(async (qi) => {
  await qi.createTable("audit_log", {
    id: bigSerialId(),
    at: timeNow(),
    actor_id: userRef(NULLABLE),
    entity: enumOf(["user", "arm", "profile", "version", "ceilings", "approval", "session"]),
    entity_id: string(64),
    action: string(60),
    summary: text(),
    sha256_before: sha256(NULLABLE),
    sha256_after: sha256(NULLABLE),
  });
  await qi.addIndex("audit_log", ["at"], { name: "audit_log_at" });
  await qi.addIndex("audit_log", ["entity", "entity_id"], { name: "audit_log_entity" });
  await qi.addIndex("audit_log", ["actor_id", "at"], { name: "audit_log_actor" });
  await refuseEveryRow(qi, "audit_log_before_update", "BEFORE UPDATE", "audit_log", "the audit log is append-only: entries cannot be changed");
  await refuseEveryRow(qi, "audit_log_before_delete", "BEFORE DELETE", "audit_log", "the audit log is append-only: entries cannot be deleted");
});

export const down = schemaStep((qi) => qi.dropTable("audit_log"));
