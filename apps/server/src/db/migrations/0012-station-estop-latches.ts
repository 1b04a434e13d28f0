import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey, NOW } from "./columns.ts";

/**
 * The emergency-stop latch of each operator station (user and arm), so a latch survives a server
 * restart. A row means latched; the reset deletes it. The jog hub's memory is authoritative while it runs
 * (modules/jog/station-latches.ts); latches and resets are audited as entity "session",
 * id "station:<user id>:<arm id>".
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("station_estop_latches", {
    user_id: { type: DataTypes.STRING(40), allowNull: false, primaryKey: true },
    arm_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    latched_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    latched_by_session: { type: DataTypes.STRING(64), allowNull: false },
  });
  await addForeignKey(qi, "station_estop_latches", "station_estop_latches_user_fk", "user_id", "users");
  await addForeignKey(qi, "station_estop_latches", "station_estop_latches_arm_fk", "arm_id", "arms");
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.getQueryInterface().dropTable("station_estop_latches");
};
