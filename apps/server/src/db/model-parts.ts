import {
  DataTypes,
  Model,
  type Attributes,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type InitOptions,
  type ModelAttributes,
  type ModelStatic,
  type NonAttribute,
  type Sequelize,
} from "sequelize";
import { json } from "./columns.ts";

/**
 * Pieces the models (modules/X/model.ts) share: binding a model class to one Sequelize instance, the two
 * directions of an association, what an include reads, and JSON columns. The column types themselves are
 * in db/columns.ts, shared with the migrations.
 */

/**
 * The base of a model class: its attributes are the fields the class `declare`s (CreationOptional: filled
 * in on INSERT), except `Joined`, the optional fields an include fills (NonAttribute).
 */
export abstract class TableModel<M extends Model, Joined extends keyof M = never> extends Model<
  InferAttributes<M, { omit: Joined }>,
  InferCreationAttributes<M, { omit: Joined }>
> {}

/** A `serialId()` column's field: AUTO_INCREMENT, so not given on create. */
export type SerialId = CreationOptional<number>;

/**
 * A time stamped when the row is written or changed — by Sequelize's timestamps, a column default or a
 * trigger — so not given on create.
 */
export type Stamp = CreationOptional<Date>;

/** What a model's own options may say beyond its names: the timestamps its table has, scopes, … */
type ModelOptions<M extends Model> = Omit<InitOptions<M>, "sequelize" | "modelName" | "tableName" | "underscored"> & { timestamps: boolean };

/**
 * A subclass of `base` bound to `sequelize` (`Model.init` binds a class to the last instance it saw, so
 * every instance gets its own: db/models.ts) and to `tableName`, a table a migration made: snake_case
 * columns, and Sequelize stamps only the `createdAt`/`updatedAt` the options say the table has.
 */
export function bindModel<C extends ModelStatic<Model>>(
  sequelize: Sequelize,
  base: C,
  names: { modelName: string; tableName: string },
  options: ModelOptions<InstanceType<C>>,
  attributes: ModelAttributes<InstanceType<C>, Attributes<InstanceType<C>>>,
): C {
  const Base = base as unknown as typeof Model; // TypeScript lets no class extend a type parameter
  const Bound = class extends Base {};
  Bound.init(attributes as ModelAttributes, { ...options, sequelize, ...names, underscored: true } as InitOptions);
  return Bound as unknown as C;
}

type Linked = { foreignKey: string; as: string; inverseAs: string };

/** `parent` has many `child` rows on `foreignKey` (as `as`), and each belongs to its parent (as `inverseAs`). */
export function hasManyBothWays(parent: ModelStatic<Model>, child: ModelStatic<Model>, link: Linked & { onDelete?: "CASCADE" }): void {
  const { foreignKey, as, inverseAs, ...rest } = link;
  parent.hasMany(child, { as, foreignKey, ...rest });
  child.belongsTo(parent, { as: inverseAs, foreignKey });
}

/** `parent` has one `child` row on `foreignKey` (as `as`), which belongs to it (as `inverseAs`). */
export function hasOneBothWays(parent: ModelStatic<Model>, child: ModelStatic<Model>, { foreignKey, as, inverseAs }: Linked): void {
  parent.hasOne(child, { as, foreignKey });
  child.belongsTo(parent, { as: inverseAs, foreignKey });
}

/**
 * Fields of another table a model reads through an association (an include, declared in db/models.ts or
 * its module's model.ts); null where the link is empty.
 */
export type Named<K extends string, V> = NonAttribute<{ [key in K]: V } | null>;

/** What a module reads of another module's users through an include: their display name, no more. */
export const USER_NAME = ["displayName"];

/** A user read through an include with `USER_NAME` attributes. */
export type IncludedUser = Named<"displayName", string>;

/**
 * The shared `profileRefShape` fields of a row that names a profile (a recording, a trial run): its id, and
 * its name from the `withNames` include ("" when the row was read without it).
 */
export const profileRefOf = (row: { profileId: number; profile?: Named<"name", string> }) => ({
  profileId: row.profileId,
  profileName: row.profile?.name ?? "",
});

/** A JSON column as read: MariaDB's JSON is LONGTEXT with a JSON_VALID check, which the driver hands back parsed or as text. */
export const readJson = (raw: unknown): unknown => (typeof raw === "string" ? JSON.parse(raw) : raw);

/** A JSON column (NOT NULL) whose value is read through `schema` (which may fill in defaults older rows lack). */
export function jsonParsedBy<T>(attribute: string, schema: { parse(value: unknown): T }) {
  return {
    ...json(),
    get(this: Model): T {
      return schema.parse(readJson(this.getDataValue(attribute)));
    },
  };
}

/**
 * A DATETIME(3) the database fills in (a column default or a trigger): NOT NULL in the table, left unset
 * here so Sequelize leaves it to the database.
 */
export const stampedByDatabase = () => ({ type: DataTypes.DATE(3) });
