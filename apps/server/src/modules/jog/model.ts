import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

/**
 * One latched station (`station_estop_latches`, migration 0012): a row means latched; the reset deletes it.
 * The store that reads and writes it is station-latches.ts.
 */
export class StationLatchModel extends Model<InferAttributes<StationLatchModel>, InferCreationAttributes<StationLatchModel>> {
  declare userId: string;
  declare armId: number;
  declare latchedAt: CreationOptional<Date>;
  declare latchedBySession: string;
}

/** Binds a copy of StationLatchModel to one Sequelize instance (db/models.ts). */
export function defineStationLatchModels(sequelize: Sequelize) {
  const StationLatch = class extends StationLatchModel {};
  StationLatch.init(
    {
      userId: { type: DataTypes.STRING(40), primaryKey: true },
      armId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      latchedAt: { type: DataTypes.DATE(3), allowNull: false },
      latchedBySession: { type: DataTypes.STRING(64), allowNull: false },
    },
    { sequelize, modelName: "StationLatch", tableName: "station_estop_latches", underscored: true, timestamps: false },
  );
  return { StationLatch };
}
