import type { MigrationFn } from "umzug";
import { literal, type QueryInterface, type Sequelize } from "sequelize";
import { time } from "../columns.ts";

/**
 * Pieces the migrations share (besides the column types of db/columns.ts, which the models share too): the
 * step wrapper, the write-time columns, named foreign keys and the triggers' SQL. They are part of every
 * migration that uses them: what they produce must never change (a fresh database would then differ from
 * one migrated earlier) — add a new piece instead. Not a migration itself: db/migrator.ts lists the
 * migrations by name.
 */

/**
 * A migration's `up` or `down` as a step on the schema: it gets the queryInterface, and the connection for
 * what queryInterface cannot say (SQL reads, transactions).
 */
export const schemaStep =
  (step: (qi: QueryInterface, db: Sequelize) => Promise<void>): MigrationFn<Sequelize> =>
  ({ context: db }) =>
    step(db.getQueryInterface(), db);

/** `DEFAULT CURRENT_TIMESTAMP(3)`: times are UTC DATETIME(3), stamped by the database. */
export const NOW = literal("CURRENT_TIMESTAMP(3)");

/**
 * `DEFAULT CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3)`. queryInterface has no column option for
 * MariaDB's ON UPDATE clause, so it rides on the default (Sequelize writes a literal default verbatim).
 */
const NOW_ON_UPDATE = literal("CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3)");

/** DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3): when the row was written. */
export const timeNow = () => ({ ...time(), defaultValue: NOW });

/** DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3): when the row last changed. */
export const timeNowOnUpdate = () => ({ ...time(), defaultValue: NOW_ON_UPDATE });

/**
 * A named foreign key on one column to `table.id`. Named, so errors and SHOW CREATE TABLE say what it is
 * (an inline `references` gets MariaDB's `<table>_ibfk_N`). When no index starts with the column, MariaDB
 * creates one under the constraint's name. No ON DELETE unless given: MariaDB fires no trigger for a
 * cascaded delete, so cascades stay off the guarded tables.
 */
async function addForeignKey(
  queryInterface: QueryInterface,
  table: string,
  name: string,
  column: string,
  references: string,
  options: { onDelete?: "CASCADE" } = {},
): Promise<void> {
  await queryInterface.addConstraint(table, {
    type: "foreign key",
    name,
    fields: [column],
    references: { table: references, field: "id" },
    // Sequelize writes ON DELETE / ON UPDATE only when given: empty strings leave MariaDB's RESTRICT.
    onDelete: options.onDelete ?? "",
    onUpdate: "",
  });
}

/**
 * The foreign keys of `table`, one per entry — a column and the table whose `id` it references — in the
 * order given, each named `<table>_<column without _id>_fk` (`trials.arm_id` → `trials_arm_fk`) unless the
 * entry gives the middle of its name: `parent_version_id: ["profile_versions", "parent"]` on
 * profile_versions is `profile_versions_parent_fk`.
 */
export async function addForeignKeys(
  queryInterface: QueryInterface,
  table: string,
  references: Record<string, string | [references: string, name: string]>,
  options: { onDelete?: "CASCADE" } = {},
): Promise<void> {
  for (const [column, target] of Object.entries(references)) {
    const [referenced, name] = typeof target === "string" ? [target, column.replace(/_id$/, "")] : target;
    await addForeignKey(queryInterface, table, `${table}_${name}_fk`, column, referenced, options);
  }
}

/** `text` as an SQL string literal. */
const sqlText = (text: string): string => `'${text.replaceAll("'", "''")}'`;

/**
 * A trigger that refuses every row of one event on a table (`BEFORE UPDATE`, `BEFORE DELETE`, …) with
 * SQLSTATE 45000 and `message`: for rows that are written once and never changed or removed. Raw SQL:
 * queryInterface cannot create triggers.
 */
export async function refuseEveryRow(
  queryInterface: QueryInterface,
  name: string,
  event: "BEFORE UPDATE" | "BEFORE DELETE",
  table: string,
  message: string,
): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TRIGGER ${name} ${event} ON ${table} FOR EACH ROW
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = ${sqlText(message)}`);
}

/** Indents every line of `text` by `spaces`. */
const indent = (text: string, spaces: number): string => text.replace(/^/gm, " ".repeat(spaces));

/** How a trigger refuses a row: SQLSTATE 45000 with `message`. */
export const signal = (message: string): string => `SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = ${sqlText(message)};`;

/**
 * A piece of trigger SQL: one line, or the lines of a longer one. Continuation lines carry the indentation
 * they are stored with beyond their statement's first line (for an IF's condition: beyond the `IF`).
 */
export type TriggerSql = string | readonly string[];

const lines = (sql: TriggerSql): string => (typeof sql === "string" ? sql : sql.join("\n"));

/** `IF condition THEN statements END IF;`, the statements two spaces deeper than the IF. */
export const when = (condition: TriggerSql, ...statements: TriggerSql[]): string =>
  `IF ${lines(condition)} THEN\n${indent(statements.map(lines).join("\n"), 2)}\nEND IF;`;

/** One rule of a trigger: refuse the row when `condition` holds. */
export const refusal = (condition: TriggerSql, message: string): string => when(condition, signal(message));

/** A trigger's `BEGIN … END` body of `statements`, indented as every trigger of the schema is stored. */
export const triggerBody = (...statements: TriggerSql[]): string => `\n    BEGIN\n${indent(statements.map(lines).join("\n"), 6)}\n    END`;

/**
 * `CREATE TRIGGER` with a body from `triggerBody` (`precedes`: the trigger of the same timing and event it
 * runs before). Raw SQL: queryInterface cannot create triggers. The server keeps the statement as written,
 * white space included (SHOW CREATE TRIGGER), so the layout these pieces write is part of the schema too.
 */
export async function createTrigger(
  queryInterface: QueryInterface,
  name: string,
  event: "BEFORE INSERT" | "BEFORE UPDATE" | "BEFORE DELETE" | "AFTER INSERT",
  table: string,
  body: string,
  options: { precedes?: string } = {},
): Promise<void> {
  const order = options.precedes ? ` PRECEDES ${options.precedes}` : "";
  await queryInterface.sequelize.query(`
    CREATE TRIGGER ${name} ${event} ON ${table} FOR EACH ROW${order}${body}`);
}

/**
 * A trigger that refuses a row of one event on a table when `condition` holds (SQLSTATE 45000 and
 * `message`): one IF in a BEGIN … END block, for a rule on one row that needs no variables. A trigger with
 * more rules is `createTrigger` with a `triggerBody` of `refusal`s.
 */
export async function refuseRowsWhen(
  queryInterface: QueryInterface,
  name: string,
  event: "BEFORE INSERT" | "BEFORE UPDATE" | "BEFORE DELETE",
  table: string,
  condition: TriggerSql,
  message: string,
): Promise<void> {
  await createTrigger(queryInterface, name, event, table, triggerBody(refusal(condition, message)));
}

/**
 * Statements that DECLARE one variable per entry (its SQL type and the column it reads) and read them
 * from the profile_versions (`v`) and version_status (`s`) rows of NEW.version_id: what a trigger on a
 * table that names a version checks the row against.
 */
export function readNewVersion(variables: Record<string, [type: string, column: string]>): TriggerSql[] {
  const entries = Object.entries(variables);
  return [
    ...entries.map(([name, [type]]) => `DECLARE ${name} ${type};`),
    [
      `SELECT ${entries.map(([, [, column]]) => column).join(", ")} INTO ${entries.map(([name]) => name).join(", ")}`,
      "  FROM profile_versions v JOIN version_status s ON s.version_id = v.id",
      "  WHERE v.id = NEW.version_id;",
    ],
  ];
}
