import { DataTypes, type Sequelize } from "sequelize";
import { json, primaryKey, userRef } from "../../db/columns.ts";
import { bindModel, TableModel, type Stamp } from "../../db/model-parts.ts";

/**
 * One gamepad mapping per user (`gamepad_mappings`, migration 0011); the default mapping until one is
 * saved. The class gives the types; `defineGamepadModels` binds a copy of it to one Sequelize instance
 * (db/models.ts). The queries are in service.ts.
 */
export class GamepadMappingModel extends TableModel<GamepadMappingModel> {
  declare userId: string;
  /** As stored; `findGamepadMapping` parses it with the shared schema. */
  declare mapping: unknown;
  declare updatedAt: Stamp;
}

export function defineGamepadModels(sequelize: Sequelize) {
  const GamepadMapping = bindModel(sequelize, GamepadMappingModel, { modelName: "GamepadMapping", tableName: "gamepad_mappings" }, { timestamps: true, createdAt: false }, {
    userId: primaryKey(userRef()),
    mapping: json(),
    updatedAt: DataTypes.DATE(3),
  });
  return { GamepadMapping };
}
