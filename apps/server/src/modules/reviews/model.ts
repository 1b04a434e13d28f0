import type { NonAttribute, Sequelize } from "sequelize";
import { serialId, sha256, text, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, stampedByDatabase, TableModel, type SerialId, type Stamp } from "../../db/model-parts.ts";

/**
 * Approvals (`approvals`): append-only (triggers of migration 0004). Inserting a row *is* the approval:
 * its triggers (migration 0014) check the version is submitted, the approver is not its author and the
 * hash is the version's, stamp `approved_at`, lock the version row and move its status to approved —
 * in that one INSERT. The app never updates or deletes a row.
 */
export class ApprovalModel extends TableModel<ApprovalModel, "approver"> {
  declare id: SerialId;
  declare versionId: number;
  declare approverId: string;
  /** Stamped by the BEFORE INSERT trigger. */
  declare approvedAt: Stamp;
  declare comment: string;
  declare paramsSha256: string;
  /** Included through the association declared in db/models.ts. */
  declare approver?: NonAttribute<{ displayName: string }>;
}

export function defineReviewModels(sequelize: Sequelize) {
  const Approval = bindModel(sequelize, ApprovalModel, { modelName: "Approval", tableName: "approvals" }, { timestamps: false }, {
    id: serialId(),
    versionId: { ...unsigned(), unique: "approvals_version_unique" },
    approverId: userRef(),
    approvedAt: stampedByDatabase(),
    comment: text(),
    paramsSha256: sha256(),
  });
  return { Approval };
}
