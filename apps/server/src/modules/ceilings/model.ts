import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import { ceilingsSchema, DEFAULT_CEILINGS, type Ceilings, type CeilingsRecord } from "@jogwright/shared";

/** Data access for site ceilings: one row per revision, the highest revision is in force. */
type CeilingsRow = {
  revision: number;
  ceilings: string | object;
  updated_by: string | null;
  updated_by_name: string | null;
  updated_at: Date;
};

function toRecord(row: CeilingsRow): CeilingsRecord {
  return {
    revision: row.revision,
    ceilings: ceilingsSchema.parse(typeof row.ceilings === "string" ? JSON.parse(row.ceilings) : row.ceilings),
    updatedById: row.updated_by,
    updatedByName: row.updated_by_name,
    updatedAt: new Date(row.updated_at).toISOString(),
  };
}

/**
 * The ceilings in force. `lock: "update"` holds the latest row until the transaction ends, so two safety
 * officers cannot both write the next revision; `lock: "share"` lets a submit or approval read the
 * ceilings while a change to them waits (and the other way round).
 */
export async function findLatestCeilings(db: Sequelize, transaction?: Transaction, lock?: "share" | "update"): Promise<CeilingsRecord> {
  const rows = await db.query<CeilingsRow>(
    `SELECT c.revision, c.ceilings, c.updated_by, u.display_name AS updated_by_name, c.updated_at
     FROM site_ceilings c LEFT JOIN users u ON u.id = c.updated_by
     ORDER BY c.revision DESC LIMIT 1 ${lock === "update" ? "FOR UPDATE" : lock === "share" ? "LOCK IN SHARE MODE" : ""}`,
    { type: QueryTypes.SELECT, transaction },
  );
  // The migration writes revision 1; an empty table only happens if someone emptied it by hand.
  return rows[0] ? toRecord(rows[0]) : { revision: 0, ceilings: DEFAULT_CEILINGS, updatedById: null, updatedByName: null, updatedAt: new Date(0).toISOString() };
}

export async function insertCeilings(
  db: Sequelize,
  row: { revision: number; ceilings: Ceilings; note: string; updatedBy: string | null },
  transaction: Transaction,
): Promise<void> {
  await db.query("INSERT INTO site_ceilings (revision, ceilings, note, updated_by) VALUES (?, ?, ?, ?)", {
    replacements: [row.revision, JSON.stringify(row.ceilings), row.note, row.updatedBy],
    transaction,
  });
}
