import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/**
 * The emergency-stop latch of each operator station (user and arm), so a latch survives a server
 * restart. A row means latched; the reset deletes it. The jog hub's memory is authoritative while it runs
 * (modules/jog/station-latches.ts); latches and resets are audited as entity "session",
 * id "station:<user id>:<arm id>".
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE station_estop_latches (
      user_id VARCHAR(40) NOT NULL,
      arm_id INT UNSIGNED NOT NULL,
      latched_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      latched_by_session VARCHAR(64) NOT NULL,
      PRIMARY KEY (user_id, arm_id),
      CONSTRAINT station_estop_latches_user_fk FOREIGN KEY (user_id) REFERENCES users (id),
      CONSTRAINT station_estop_latches_arm_fk FOREIGN KEY (arm_id) REFERENCES arms (id)
    ) ENGINE=InnoDB`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS station_estop_latches");
};
