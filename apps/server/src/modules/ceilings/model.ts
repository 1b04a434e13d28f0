import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import { ceilingsSchema, type Ceilings, type CeilingsRecord } from "@jogwright/shared";

/** Site ceilings (`site_ceilings`): one row per revision, never changed; the highest revision is in force. */
export class CeilingsModel extends Model<InferAttributes<CeilingsModel, { omit: "updatedByUser" }>, InferCreationAttributes<CeilingsModel, { omit: "updatedByUser" }>> {
  declare revision: number;
  declare ceilings: Ceilings;
  declare note: string;
  declare updatedBy: ForeignKey<string> | null;
  /** When this revision was written. */
  declare updatedAt: CreationOptional<Date>;
  /** Included through the association declared in db/models.ts. */
  declare updatedByUser?: NonAttribute<{ displayName: string } | null>;

  /** The API shape (`ceilingsRecordSchema`); include `updatedByUser` for the name. */
  toApi(): CeilingsRecord {
    return {
      revision: this.revision,
      ceilings: this.ceilings,
      updatedById: this.updatedBy ?? null,
      updatedByName: this.updatedByUser?.displayName ?? null,
      updatedAt: this.updatedAt.toISOString(),
    };
  }
}

export function defineCeilingsModels(sequelize: Sequelize) {
  const SiteCeilings = class extends CeilingsModel {};
  SiteCeilings.init(
    {
      revision: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      ceilings: {
        type: DataTypes.JSON,
        allowNull: false,
        // Older revisions lack later ceilings: they parse with their defaults (ceilingsSchema).
        get() {
          const raw = this.getDataValue("ceilings") as unknown;
          return ceilingsSchema.parse(typeof raw === "string" ? JSON.parse(raw) : raw);
        },
      },
      note: { type: DataTypes.TEXT, allowNull: false },
      updatedBy: { type: DataTypes.STRING(40), allowNull: true },
      updatedAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "SiteCeilings", tableName: "site_ceilings", underscored: true, timestamps: true, createdAt: false },
  );
  return { SiteCeilings };
}
