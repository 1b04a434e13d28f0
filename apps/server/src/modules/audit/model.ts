import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import type { AuditEntry } from "@jogwright/shared";

/** Data access for the append-only audit trail (the table's triggers refuse UPDATE and DELETE). */
export type AuditEntity = AuditEntry["entity"];

export interface AuditFilter {
  entity?: AuditEntity;
  actorId?: string;
  action?: string;
  from?: string;
  to?: string;
}

type AuditRow = {
  id: number | bigint;
  at: Date;
  actor_id: string | null;
  actor_name: string | null;
  entity: AuditEntity;
  entity_id: string;
  action: string;
  summary: string;
  sha256_before: string | null;
  sha256_after: string | null;
};

function toEntry(row: AuditRow): AuditEntry {
  return {
    id: Number(row.id),
    at: new Date(row.at).toISOString(),
    actorId: row.actor_id,
    actorName: row.actor_name,
    entity: row.entity,
    entityId: row.entity_id,
    action: row.action,
    summary: row.summary,
    sha256Before: row.sha256_before,
    sha256After: row.sha256_after,
  };
}

export async function insertAuditRow(
  db: Sequelize,
  row: {
    actorId: string | null;
    entity: AuditEntity;
    entityId: string;
    action: string;
    summary: string;
    sha256Before: string | null;
    sha256After: string | null;
  },
  transaction?: Transaction,
): Promise<void> {
  await db.query(
    `INSERT INTO audit_log (actor_id, entity, entity_id, action, summary, sha256_before, sha256_after)
     VALUES (?, ?, ?, ?, ?, ?, ?)`,
    {
      replacements: [row.actorId, row.entity, row.entityId, row.action, row.summary.slice(0, 4000), row.sha256Before, row.sha256After],
      transaction,
    },
  );
}

function whereOf(filter: AuditFilter): { sql: string; values: unknown[] } {
  const parts: string[] = [];
  const values: unknown[] = [];
  if (filter.entity) (parts.push("a.entity = ?"), values.push(filter.entity));
  if (filter.actorId) (parts.push("a.actor_id = ?"), values.push(filter.actorId));
  if (filter.action) (parts.push("a.action = ?"), values.push(filter.action));
  if (filter.from) (parts.push("a.at >= ?"), values.push(new Date(filter.from)));
  if (filter.to) (parts.push("a.at <= ?"), values.push(new Date(filter.to)));
  return { sql: parts.length ? `WHERE ${parts.join(" AND ")}` : "", values };
}

const SELECT_ENTRIES = `
  SELECT a.id, a.at, a.actor_id, u.display_name AS actor_name, a.entity, a.entity_id, a.action, a.summary,
         a.sha256_before, a.sha256_after
  FROM audit_log a LEFT JOIN users u ON u.id = a.actor_id`;

/** Newest first; `limit`/`offset` page through them. */
export async function listAuditEntries(db: Sequelize, filter: AuditFilter, limit: number, offset: number): Promise<AuditEntry[]> {
  const where = whereOf(filter);
  const rows = await db.query<AuditRow>(`${SELECT_ENTRIES} ${where.sql} ORDER BY a.id DESC LIMIT ? OFFSET ?`, {
    replacements: [...where.values, limit, offset],
    type: QueryTypes.SELECT,
  });
  return rows.map(toEntry);
}

export async function countAuditEntries(db: Sequelize, filter: AuditFilter): Promise<number> {
  const where = whereOf(filter);
  const rows = await db.query<{ n: number | bigint }>(`SELECT COUNT(*) AS n FROM audit_log a ${where.sql}`, {
    replacements: where.values,
    type: QueryTypes.SELECT,
  });
  return Number(rows[0]?.n ?? 0);
}
