import { Op, type CreationOptional, type InferAttributes, type Sequelize, type WhereOptions } from "sequelize";
import { AUDIT_ENTITIES, type AuditEntry } from "@jogwright/shared";
import { bigSerialId, enumOf, NULLABLE, sha256, string, text, userRef } from "../../db/columns.ts";
import { bindModel, stampedByDatabase, TableModel, type IncludedUser, type Stamp } from "../../db/model-parts.ts";

/**
 * The append-only audit trail (`audit_log`, migration 0006; its triggers refuse UPDATE and DELETE). The
 * class gives the types; `defineAuditModels` binds a copy of it to one Sequelize instance (db/models.ts).
 * `actor` (the user who acted, for the display name) is associated in db/models.ts, without a foreign key:
 * the trail outlives whatever it mentions.
 */
export type AuditEntity = AuditEntry["entity"];
/** An entry as stored (the list route adds `entityLabel`, entity-labels.ts). */
export type AuditRecord = Omit<AuditEntry, "entityLabel">;

export interface AuditFilter {
  entity?: AuditEntity;
  actorId?: string;
  action?: string;
  from?: string;
  to?: string;
}

export class AuditEntryModel extends TableModel<AuditEntryModel, "actor"> {
  /** BIGINT: the driver hands it back as a bigint. */
  declare id: CreationOptional<number | bigint>;
  /** Stamped by the database (DEFAULT CURRENT_TIMESTAMP(3)). */
  declare at: Stamp;
  declare actorId: string | null;
  declare entity: AuditEntity;
  declare entityId: string;
  declare action: string;
  declare summary: string;
  declare sha256Before: string | null;
  declare sha256After: string | null;
  /** Included by the `withActorName` scope. */
  declare actor?: IncludedUser;
}

/**
 * An entry as the API shows it, from a row read with `withActorName` (an instance or, as the listing
 * reads them, `raw: true, nest: true` attributes).
 */
export function toAuditEntry(row: InferAttributes<AuditEntryModel, { omit: "actor" }> & { actor?: { displayName: string | null } | null }): AuditRecord {
  return {
    id: Number(row.id),
    at: row.at.toISOString(),
    actorId: row.actorId,
    actorName: row.actor?.displayName ?? null,
    entity: row.entity,
    entityId: row.entityId,
    action: row.action,
    summary: row.summary,
    sha256Before: row.sha256Before,
    sha256After: row.sha256After,
  };
}

export function defineAuditModels(sequelize: Sequelize) {
  const AuditEntry = bindModel(sequelize, AuditEntryModel, { modelName: "AuditEntry", tableName: "audit_log" }, { timestamps: false }, {
    id: bigSerialId(),
    at: stampedByDatabase(),
    actorId: userRef(NULLABLE),
    entity: enumOf(AUDIT_ENTITIES),
    entityId: string(64),
    action: string(60),
    summary: text(),
    sha256Before: sha256(NULLABLE),
    sha256After: sha256(NULLABLE),
  });
  return { AuditEntry };
}

/** The WHERE of a filter (the routes validated it with `auditQuerySchema`). */
export function auditWhere(filter: AuditFilter): WhereOptions<AuditEntryModel> {
  const at: Record<symbol, Date> = {};
  if (filter.from) at[Op.gte] = new Date(filter.from);
  if (filter.to) at[Op.lte] = new Date(filter.to);
  return {
    ...(filter.entity ? { entity: filter.entity } : {}),
    ...(filter.actorId ? { actorId: filter.actorId } : {}),
    ...(filter.action ? { action: filter.action } : {}),
    ...(filter.from || filter.to ? { at } : {}),
  };
}
