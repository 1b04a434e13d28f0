import { DataTypes } from "sequelize";

/**
 * Column types the schema uses again and again, for the migrations' `createTable` (db/migrations) and the
 * models' attributes (modules/X/model.ts) alike: one column definition each, NOT NULL unless given
 * `NULLABLE`.
 *
 * A migration is history: it must build the same tables whenever it runs, whatever the models later
 * become. So this module never imports a model, and what each builder returns never changes — a column of
 * another type gets a new builder, never an edit of an existing one (a fresh database would then differ
 * from one migrated earlier, and the models from the tables they read). That frozen meaning is what lets a
 * migration and a model share them; a model's own additions (a getter, a `unique` name, a shared enum
 * list) are spread over them in its model.ts. Each call returns a fresh object: Sequelize annotates the
 * attribute objects it is given.
 */

/** `allowNull: true`: the optional last argument of a builder. */
export const NULLABLE = true;

/** INT UNSIGNED NOT NULL AUTO_INCREMENT, the primary key: a table's own `id`. */
export const serialId = () => ({ type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true });

/** BIGINT UNSIGNED NOT NULL AUTO_INCREMENT, the primary key: the `id` of a table that may outgrow INT. */
export const bigSerialId = () => ({ type: DataTypes.BIGINT.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true });

/** INT UNSIGNED: a count, a number, or the `id` of another table's row. */
export const unsigned = (nullable = false) => ({ type: DataTypes.INTEGER.UNSIGNED, allowNull: nullable });

/** VARCHAR(40): a `users.id` (the users table's primary key is VARCHAR(40)). */
export const userRef = (nullable = false) => ({ type: DataTypes.STRING(40), allowNull: nullable });

/** VARCHAR(length). */
export const string = (length: number, nullable = false) => ({ type: DataTypes.STRING(length), allowNull: nullable });

/** TEXT. */
export const text = (nullable = false) => ({ type: DataTypes.TEXT, allowNull: nullable });

/** JSON: MariaDB's LONGTEXT (utf8mb4_bin) with the CHECK (json_valid(column)) it adds itself. */
export const json = (nullable = false) => ({ type: DataTypes.JSON, allowNull: nullable });

/** CHAR(64): a SHA-256 in hex. */
export const sha256 = (nullable = false) => ({ type: DataTypes.CHAR(64), allowNull: nullable });

/** DATETIME(3): a UTC time to the millisecond. */
export const time = (nullable = false) => ({ type: DataTypes.DATE(3), allowNull: nullable });

/** DOUBLE. */
export const double = () => ({ type: DataTypes.DOUBLE, allowNull: false });

/** LONGBLOB. */
export const longBlob = (nullable = false) => ({ type: DataTypes.BLOB("long"), allowNull: nullable });

/** BOOLEAN (TINYINT(1)) NOT NULL with its default. */
export const flag = (defaultValue: boolean) => ({ type: DataTypes.BOOLEAN, allowNull: false, defaultValue });

/** INT UNSIGNED NOT NULL DEFAULT 0: a count. */
export const counter = () => ({ type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 });

/** `column` as (part of) the table's primary key. */
export const primaryKey = <C extends object>(column: C) => ({ ...column, primaryKey: true });

/** ENUM of `values`, NOT NULL, with `defaultValue` when given. */
export function enumOf(values: readonly string[], defaultValue?: string) {
  const column = { type: DataTypes.ENUM(...values), allowNull: false };
  // No `defaultValue` key at all without one: a model treats even an undefined default as a default.
  return defaultValue === undefined ? column : { ...column, defaultValue };
}
