import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/** Arms: the DH model as JSON (SI units, the arm JSON of PRODUCT.md) and the ready pose in radians. */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE arms (
      id INT UNSIGNED NOT NULL AUTO_INCREMENT PRIMARY KEY,
      slug VARCHAR(60) NOT NULL,
      name VARCHAR(120) NOT NULL,
      description TEXT NOT NULL,
      model JSON NOT NULL CHECK (JSON_VALID(model)),
      ready_pose JSON NOT NULL CHECK (JSON_VALID(ready_pose)),
      created_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      updated_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3),
      UNIQUE KEY arms_slug_unique (slug)
    ) ENGINE=InnoDB`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS arms");
};
