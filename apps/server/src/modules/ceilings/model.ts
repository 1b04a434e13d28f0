import { DataTypes, type ForeignKey, type Sequelize } from "sequelize";
import { ceilingsSchema, type Ceilings, type CeilingsRecord } from "@jogwright/shared";
import { NULLABLE, primaryKey, text, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, jsonParsedBy, TableModel, type IncludedUser, type Stamp } from "../../db/model-parts.ts";

/** Site ceilings (`site_ceilings`): one row per revision, never changed; the highest revision is in force. */
export class CeilingsModel extends TableModel<CeilingsModel, "updatedByUser"> {
  declare revision: number;
  declare ceilings: Ceilings;
  declare note: string;
  declare updatedBy: ForeignKey<string> | null;
  /** When this revision was written. */
  declare updatedAt: Stamp;
  /** Included through the association declared in db/models.ts. */
  declare updatedByUser?: IncludedUser;

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
  const SiteCeilings = bindModel(sequelize, CeilingsModel, { modelName: "SiteCeilings", tableName: "site_ceilings" }, { timestamps: true, createdAt: false }, {
    revision: primaryKey(unsigned()),
    // Older revisions lack later ceilings: they parse with their defaults (ceilingsSchema).
    ceilings: jsonParsedBy("ceilings", ceilingsSchema),
    note: text(),
    updatedBy: userRef(NULLABLE),
    updatedAt: DataTypes.DATE(3),
  });
  return { SiteCeilings };
}
