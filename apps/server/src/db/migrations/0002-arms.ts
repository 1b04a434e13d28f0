import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { NOW, NOW_ON_UPDATE } from "./columns.ts";

/**
 * Arms: the DH model as JSON (SI units, the arm JSON of PRODUCT.md) and the ready pose in radians.
 * MariaDB's JSON is LONGTEXT (utf8mb4_bin) with a CHECK (JSON_VALID(column)) it adds itself.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("arms", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    slug: { type: DataTypes.STRING(60), allowNull: false },
    name: { type: DataTypes.STRING(120), allowNull: false },
    description: { type: DataTypes.TEXT, allowNull: false },
    model: { type: DataTypes.JSON, allowNull: false },
    ready_pose: { type: DataTypes.JSON, allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    updated_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW_ON_UPDATE },
  });
  await qi.addConstraint("arms", { type: "unique", name: "arms_slug_unique", fields: ["slug"] });
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.getQueryInterface().dropTable("arms");
};
