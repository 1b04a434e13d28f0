import { literal, type QueryInterface } from "sequelize";

/**
 * Pieces the migrations share. They are part of every migration that uses them: what they produce must
 * never change (a fresh database would then differ from one migrated earlier) — add a new piece instead.
 * Not a migration itself: db/migrator.ts lists the migrations by name.
 */

/** `DEFAULT CURRENT_TIMESTAMP(3)`: times are UTC DATETIME(3), stamped by the database. */
export const NOW = literal("CURRENT_TIMESTAMP(3)");

/**
 * `DEFAULT CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3)`. queryInterface has no column option for
 * MariaDB's ON UPDATE clause, so it rides on the default (Sequelize writes a literal default verbatim).
 */
export const NOW_ON_UPDATE = literal("CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3)");

/**
 * A named foreign key on one column to `table.id`. Named, so errors and SHOW CREATE TABLE say what it is
 * (an inline `references` gets MariaDB's `<table>_ibfk_N`). When no index starts with the column, MariaDB
 * creates one under the constraint's name. No ON DELETE unless given: MariaDB fires no trigger for a
 * cascaded delete, so cascades stay off the guarded tables.
 */
export async function addForeignKey(
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
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = '${message.replaceAll("'", "''")}'`);
}

/**
 * A trigger that refuses a row of one event on a table when `condition` holds (SQLSTATE 45000 and
 * `message`): one IF in a BEGIN … END block. For a rule on one row that needs no variables; a trigger
 * with more than one rule stays written out in its migration. A condition over several lines carries the
 * indentation its continuation lines are stored with. Raw SQL: queryInterface cannot create triggers.
 */
export async function refuseRowsWhen(
  queryInterface: QueryInterface,
  name: string,
  event: "BEFORE INSERT" | "BEFORE UPDATE" | "BEFORE DELETE",
  table: string,
  condition: string,
  message: string,
): Promise<void> {
  await queryInterface.sequelize.query(`
    CREATE TRIGGER ${name} ${event} ON ${table} FOR EACH ROW
    BEGIN
      IF ${condition} THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = '${message.replaceAll("'", "''")}';
      END IF;
    END`);
}
