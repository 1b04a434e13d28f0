import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/** One saved gamepad mapping per user (shared gamepadMappingSchema as JSON); absent → the default mapping. */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE gamepad_mappings (
      user_id VARCHAR(40) NOT NULL PRIMARY KEY,
      mapping JSON NOT NULL CHECK (JSON_VALID(mapping)),
      updated_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3),
      CONSTRAINT gamepad_mappings_user_fk FOREIGN KEY (user_id) REFERENCES users (id) ON DELETE CASCADE
    ) ENGINE=InnoDB`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS gamepad_mappings");
};
