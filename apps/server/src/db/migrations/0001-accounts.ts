import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/** Users, their roles (a user may hold several) and lucia's sessions. */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE users (
      id VARCHAR(40) NOT NULL PRIMARY KEY,
      username VARCHAR(40) NOT NULL,
      display_name VARCHAR(80) NOT NULL,
      email VARCHAR(120) NOT NULL,
      password_hash VARCHAR(255) NOT NULL,
      is_active TINYINT(1) NOT NULL DEFAULT 1,
      created_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      updated_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3),
      UNIQUE KEY users_username_unique (username)
    ) ENGINE=InnoDB`);
  await db.query(`
    CREATE TABLE user_roles (
      user_id VARCHAR(40) NOT NULL,
      role ENUM('operator','engineer','safety_officer','admin') NOT NULL,
      PRIMARY KEY (user_id, role),
      KEY user_roles_role (role),
      CONSTRAINT user_roles_user_fk FOREIGN KEY (user_id) REFERENCES users (id) ON DELETE CASCADE
    ) ENGINE=InnoDB`);
  await db.query(`
    CREATE TABLE sessions (
      id VARCHAR(64) NOT NULL PRIMARY KEY,
      user_id VARCHAR(40) NOT NULL,
      expires_at DATETIME(3) NOT NULL,
      KEY sessions_user (user_id),
      KEY sessions_expires (expires_at),
      CONSTRAINT sessions_user_fk FOREIGN KEY (user_id) REFERENCES users (id) ON DELETE CASCADE
    ) ENGINE=InnoDB`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS sessions");
  await db.query("DROP TABLE IF EXISTS user_roles");
  await db.query("DROP TABLE IF EXISTS users");
};
