import { literal, Op, QueryTypes, type Sequelize } from "sequelize";
import { counter, enumOf, longBlob, NULLABLE } from "../columns.ts";
import { schemaStep } from "./columns.ts";

/**
 * Compact recordings and their retention (issue 11, item 8: recordings grew 44 KB/s per session).
 *
 * - `jog_recording_chunks.encoding`: how the chunk is stored (modules/recordings/chunk-codec.ts). Every
 *   chunk written before this migration keeps its JSON text in `frames` and gets `json`; new chunks are
 *   `columns-v1` (or `json-deflate`) in the new `data` LONGBLOB, and their `frames` is NULL. A named
 *   CHECK keeps the two apart: a `json` chunk has `frames` and no `data`, any other has `data` and no
 *   `frames`. `frames` keeps its JSON check, now "NULL or valid JSON" (given as the column's type text, as
 *   in 0010: no queryInterface option writes a column CHECK; MODIFY replaces the column's own check).
 * - `stored_bytes`: the chunk's payload as stored (OCTET_LENGTH of `data` or `frames`), so retention sums a
 *   recording's size from an index (`jog_recording_chunks_size`) without reading the blobs. Filled in here
 *   for the existing chunks.
 * - `audit_log.entity` gains `recording`: each pruned recording is on the record. The list is read from
 *   the column itself, so an entity another migration added before this one stays.
 */
const ENCODINGS = ["json", "json-deflate", "columns-v1"];

async function auditEntities(db: Sequelize): Promise<string[]> {
  // The column's ENUM as the server has it; information_schema is the only place that says it.
  const [row] = await db.query<{ type: string }>(
    "SELECT COLUMN_TYPE AS type FROM information_schema.COLUMNS WHERE TABLE_SCHEMA = DATABASE() AND TABLE_NAME = 'audit_log' AND COLUMN_NAME = 'entity'",
    { type: QueryTypes.SELECT },
  );
  return [...(row?.type ?? "").matchAll(/'((?:[^']|'')*)'/g)].map((m) => m[1]!.replaceAll("''", "'"));
}

export const up = schemaStep(async (qi, db) => {
  await qi.addColumn("jog_recording_chunks", "encoding", enumOf(ENCODINGS, "json"));
  await qi.addColumn("jog_recording_chunks", "data", longBlob(NULLABLE));
  await qi.addColumn("jog_recording_chunks", "stored_bytes", counter());
  await qi.changeColumn("jog_recording_chunks", "frames", { type: "LONGTEXT CHECK (frames IS NULL OR JSON_VALID(frames))", allowNull: true });
  await qi.bulkUpdate("jog_recording_chunks", { stored_bytes: literal("OCTET_LENGTH(frames)") }, {});
  await qi.addConstraint("jog_recording_chunks", {
    type: "check",
    name: "jog_recording_chunks_payload",
    fields: ["encoding", "frames", "data"],
    where: {
      [Op.or]: [
        { encoding: "json", frames: { [Op.ne]: null }, data: null },
        { encoding: { [Op.ne]: "json" }, frames: null, data: { [Op.ne]: null } },
      ],
    },
  });
  await qi.addIndex("jog_recording_chunks", ["recording_id", "stored_bytes"], { name: "jog_recording_chunks_size" });

  const entities = await auditEntities(db);
  if (!entities.includes("recording")) {
    await qi.changeColumn("audit_log", "entity", enumOf([...entities, "recording"]));
  }
});

export const down = schemaStep(async (qi, db) => {
  const [compact] = await db.query<{ n: number }>("SELECT COUNT(*) AS n FROM jog_recording_chunks WHERE encoding <> 'json'", { type: QueryTypes.SELECT });
  if (Number(compact?.n ?? 0) > 0) throw new Error("0017 cannot be undone while compact recording chunks exist (their frames would be lost)");
  const entities = await auditEntities(db);
  await qi.changeColumn("audit_log", "entity", enumOf(entities.filter((e) => e !== "recording")));
  await qi.removeIndex("jog_recording_chunks", "jog_recording_chunks_size");
  // SQL: queryInterface's removeConstraint drops an index of that name on MariaDB, not a CHECK.
  await db.query("ALTER TABLE jog_recording_chunks DROP CONSTRAINT jog_recording_chunks_payload", { type: QueryTypes.RAW });
  await qi.changeColumn("jog_recording_chunks", "frames", { type: "LONGTEXT NOT NULL CHECK (JSON_VALID(frames))" });
  // SQL: queryInterface's removeColumn first reads the column's foreign keys with an untyped query, which
  // the unpatched Sequelize cannot return from the mariadb driver (DEVELOPERS.md, "Known pins and patches").
  await db.query("ALTER TABLE jog_recording_chunks DROP COLUMN stored_bytes, DROP COLUMN data, DROP COLUMN encoding", { type: QueryTypes.RAW });
});
