import type { Sequelize } from "sequelize";
import { primaryKey, string, time, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, TableModel, type Stamp } from "../../db/model-parts.ts";

/**
 * One latched station (`station_estop_latches`, migration 0012): a row means latched; the reset deletes it.
 * The store that reads and writes it is station-latches.ts.
 */
export class StationLatchModel extends TableModel<StationLatchModel> {
  declare userId: string;
  declare armId: number;
  declare latchedAt: Stamp;
  declare latchedBySession: string;
}

/** Binds a copy of StationLatchModel to one Sequelize instance (db/models.ts). */
export function defineStationLatchModels(sequelize: Sequelize) {
  const StationLatch = bindModel(sequelize, StationLatchModel, { modelName: "StationLatch", tableName: "station_estop_latches" }, { timestamps: false }, {
    userId: primaryKey(userRef()),
    armId: primaryKey(unsigned()),
    latchedAt: time(),
    latchedBySession: string(64),
  });
  return { StationLatch };
}
