import { serialId, sha256, text, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, refuseEveryRow, schemaStep, timeNow } from "./columns.ts";

/**
 * The record of each approval: who, when, the comment and the hash approved. Append-only (triggers; SQL,
 * since queryInterface's createTrigger exists for PostgreSQL only).
 */
export const up = schemaStep(async (qi) => {
  await qi.createTable("approvals", {
    id: serialId(),
    version_id: unsigned(),
    approver_id: userRef(),
    approved_at: timeNow(),
    comment: text(),
    params_sha256: sha256(),
  });
  await qi.addConstraint("approvals", { type: "unique", name: "approvals_version_unique", fields: ["version_id"] });
  await addForeignKeys(qi, "approvals", { version_id: "profile_versions", approver_id: "users" });
  await refuseEveryRow(qi, "approvals_before_update", "BEFORE UPDATE", "approvals", "approvals are append-only: they cannot be changed");
  await refuseEveryRow(qi, "approvals_before_delete", "BEFORE DELETE", "approvals", "approvals are append-only: they cannot be deleted");
});

export const down = schemaStep((qi) => qi.dropTable("approvals"));
