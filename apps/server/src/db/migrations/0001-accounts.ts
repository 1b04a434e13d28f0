import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey, NOW, NOW_ON_UPDATE } from "./columns.ts";

/** Users, their roles (a user may hold several) and lucia's sessions. */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("users", {
    id: { type: DataTypes.STRING(40), allowNull: false, primaryKey: true },
    username: { type: DataTypes.STRING(40), allowNull: false },
    display_name: { type: DataTypes.STRING(80), allowNull: false },
    email: { type: DataTypes.STRING(120), allowNull: false },
    password_hash: { type: DataTypes.STRING(255), allowNull: false },
    is_active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    created_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    updated_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW_ON_UPDATE },
  });
  await qi.addConstraint("users", { type: "unique", name: "users_username_unique", fields: ["username"] });

  await qi.createTable("user_roles", {
    user_id: { type: DataTypes.STRING(40), allowNull: false, primaryKey: true },
    role: { type: DataTypes.ENUM("operator", "engineer", "safety_officer", "admin"), allowNull: false, primaryKey: true },
  });
  await qi.addIndex("user_roles", ["role"], { name: "user_roles_role" });
  await addForeignKey(qi, "user_roles", "user_roles_user_fk", "user_id", "users", { onDelete: "CASCADE" });

  await qi.createTable("sessions", {
    id: { type: DataTypes.STRING(64), allowNull: false, primaryKey: true },
    user_id: { type: DataTypes.STRING(40), allowNull: false },
    expires_at: { type: DataTypes.DATE(3), allowNull: false },
  });
  await qi.addIndex("sessions", ["user_id"], { name: "sessions_user" });
  await qi.addIndex("sessions", ["expires_at"], { name: "sessions_expires" });
  await addForeignKey(qi, "sessions", "sessions_user_fk", "user_id", "users", { onDelete: "CASCADE" });
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.dropTable("sessions");
  await qi.dropTable("user_roles");
  await qi.dropTable("users");
};
