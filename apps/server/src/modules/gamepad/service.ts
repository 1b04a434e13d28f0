import type { Sequelize } from "sequelize";
import { DEFAULT_GAMEPAD_MAPPING, gamepadMappingSchema, type GamepadMapping } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";

/** The signed-in user's gamepad mapping: the saved one, else the default. */

export async function findGamepadMapping(db: Sequelize, userId: string): Promise<GamepadMapping> {
  const row = await modelsOf(db).GamepadMapping.findByPk(userId);
  if (!row) return DEFAULT_GAMEPAD_MAPPING;
  // A mapping saved by an older version may not parse any more: the default then, until it is saved again.
  const parsed = gamepadMappingSchema.safeParse(row.mapping);
  return parsed.success ? parsed.data : DEFAULT_GAMEPAD_MAPPING;
}

/** INSERT … ON DUPLICATE KEY UPDATE: one row per user. */
export async function saveGamepadMapping(db: Sequelize, userId: string, mapping: GamepadMapping): Promise<void> {
  await modelsOf(db).GamepadMapping.upsert({ userId, mapping });
}
