import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

/**
 * One gamepad mapping per user (`gamepad_mappings`, migration 0011); the default mapping until one is
 * saved. The class gives the types; `defineGamepadModels` binds a copy of it to one Sequelize instance
 * (db/models.ts). The queries are in service.ts.
 */
export class GamepadMappingModel extends Model<InferAttributes<GamepadMappingModel>, InferCreationAttributes<GamepadMappingModel>> {
  declare userId: string;
  /** As stored; `findGamepadMapping` parses it with the shared schema. */
  declare mapping: unknown;
  declare updatedAt: CreationOptional<Date>;
}

export function defineGamepadModels(sequelize: Sequelize) {
  const GamepadMapping = class extends GamepadMappingModel {};
  GamepadMapping.init(
    {
      userId: { type: DataTypes.STRING(40), primaryKey: true },
      mapping: { type: DataTypes.JSON, allowNull: false },
      updatedAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "GamepadMapping", tableName: "gamepad_mappings", underscored: true, timestamps: true, createdAt: false },
  );
  return { GamepadMapping };
}
