import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey, NOW_ON_UPDATE } from "./columns.ts";

/** One saved gamepad mapping per user (shared gamepadMappingSchema as JSON); absent → the default mapping. */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("gamepad_mappings", {
    user_id: { type: DataTypes.STRING(40), allowNull: false, primaryKey: true },
    mapping: { type: DataTypes.JSON, allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW_ON_UPDATE },
  });
  await addForeignKey(qi, "gamepad_mappings", "gamepad_mappings_user_fk", "user_id", "users", { onDelete: "CASCADE" });
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.getQueryInterface().dropTable("gamepad_mappings");
};
