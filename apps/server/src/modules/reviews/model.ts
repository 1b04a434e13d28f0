import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";

/**
 * Approvals (`approvals`): append-only (triggers of migration 0004). Inserting a row *is* the approval:
 * its triggers (migration 0014) check the version is submitted, the approver is not its author and the
 * hash is the version's, stamp `approved_at`, lock the version row and move its status to approved —
 * in that one INSERT. The app never updates or deletes a row.
 */
export class ApprovalModel extends Model<InferAttributes<ApprovalModel, { omit: "approver" }>, InferCreationAttributes<ApprovalModel, { omit: "approver" }>> {
  declare id: CreationOptional<number>;
  declare versionId: number;
  declare approverId: string;
  /** Stamped by the BEFORE INSERT trigger. */
  declare approvedAt: CreationOptional<Date>;
  declare comment: string;
  declare paramsSha256: string;
  /** Included through the association declared in db/models.ts. */
  declare approver?: NonAttribute<{ displayName: string }>;
}

export function defineReviewModels(sequelize: Sequelize) {
  const Approval = class extends ApprovalModel {};
  Approval.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      versionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, unique: "approvals_version_unique" },
      approverId: { type: DataTypes.STRING(40), allowNull: false },
      approvedAt: { type: DataTypes.DATE(3) },
      comment: { type: DataTypes.TEXT, allowNull: false },
      paramsSha256: { type: DataTypes.CHAR(64), allowNull: false },
    },
    { sequelize, modelName: "Approval", tableName: "approvals", underscored: true, timestamps: false },
  );
  return { Approval };
}
