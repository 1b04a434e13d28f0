import { QueryTypes, type Sequelize } from "sequelize";
import type { AuditEntry } from "@jogwright/shared";

/**
 * What an audit entry is about, named as everyone else names it (issue 13, item 9): a version is
 * `"Pack opening" v6` (never its row id, which once showed as "version #7"), an account its user name, a
 * profile, arm or trial its name, a ceilings entry its revision, an approval the version it approved, a
 * station latch the driver and arm. Read-only lookups in one batch per entity over the page of entries
 * (the trail outlives what it mentions, so a missing row falls back to the entity and its id). Plain typed
 * SELECTs: the audit module records changes for every other module (they import its service), so it
 * cannot import theirs back without a cycle; nothing here writes.
 */
type Row = { id: number | string; label: string };

const numericIds = (ids: Iterable<string>) => [...new Set([...ids].map(Number).filter((n) => Number.isInteger(n) && n > 0))];

async function lookup(db: Sequelize, sql: string, ids: readonly (number | string)[]): Promise<Map<string, string>> {
  if (ids.length === 0) return new Map();
  const rows = await db.query<Row>(sql, { type: QueryTypes.SELECT, replacements: { ids } });
  return new Map(rows.map((r) => [String(r.id), r.label]));
}

const VERSION_SQL = `SELECT v.id AS id, CONCAT('"', p.name, '" v', v.number) AS label
  FROM profile_versions v JOIN profiles p ON p.id = v.profile_id WHERE v.id IN (:ids)`;

/** The labels of the entities `entries` mention, keyed "entity:id". */
export async function entityLabelsOf(db: Sequelize, entries: readonly Pick<AuditEntry, "entity" | "entityId">[]): Promise<Map<string, string>> {
  const idsOf = (entity: AuditEntry["entity"]) => entries.filter((e) => e.entity === entity).map((e) => e.entityId);
  const stations = idsOf("session")
    .map((id) => /^station:([^:]+):(\d+)$/.exec(id))
    .filter((m): m is RegExpExecArray => m !== null);
  const [versions, approvals, users, profiles, arms, trials] = await Promise.all([
    lookup(db, VERSION_SQL, numericIds(idsOf("version"))),
    lookup(
      db,
      `SELECT a.id AS id, CONCAT('"', p.name, '" v', v.number) AS label
         FROM approvals a JOIN profile_versions v ON v.id = a.version_id JOIN profiles p ON p.id = v.profile_id WHERE a.id IN (:ids)`,
      numericIds(idsOf("approval")),
    ),
    lookup(db, "SELECT id, username AS label FROM users WHERE id IN (:ids)", [...new Set([...idsOf("user"), ...stations.map((m) => m[1]!)])]),
    lookup(db, `SELECT id, CONCAT('"', name, '"') AS label FROM profiles WHERE id IN (:ids)`, numericIds(idsOf("profile"))),
    lookup(db, "SELECT id, name AS label FROM arms WHERE id IN (:ids)", [...new Set([...numericIds(idsOf("arm")), ...stations.map((m) => Number(m[2]))])]),
    lookup(db, `SELECT id, CONCAT('"', name, '"') AS label FROM trials WHERE id IN (:ids)`, numericIds(idsOf("trial"))),
  ]);
  const out = new Map<string, string>();
  for (const { entity, entityId } of entries) {
    const key = `${entity}:${entityId}`;
    if (out.has(key)) continue;
    let text: string | undefined;
    if (entity === "version") text = versions.get(entityId);
    else if (entity === "approval") text = approvals.get(entityId);
    else if (entity === "user") text = users.get(entityId);
    else if (entity === "profile") text = profiles.get(entityId);
    else if (entity === "arm") text = arms.get(entityId);
    else if (entity === "trial") text = trials.get(entityId);
    else if (entity === "ceilings") text = `revision ${entityId}`;
    else if (entity === "session") {
      const m = /^station:([^:]+):(\d+)$/.exec(entityId);
      if (m) text = `${users.get(m[1]!) ?? "an operator"}'s station on ${arms.get(m[2]!) ?? `arm ${m[2]}`}`;
    }
    out.set(key, text ?? `#${entityId}`);
  }
  return out;
}
