import { QueryTypes, type Sequelize } from "sequelize";
import { DEFAULT_GAMEPAD_MAPPING, gamepadMappingSchema, type GamepadMapping } from "@jogwright/shared";

/** One gamepad mapping per user (migration 0011); the default mapping until one is saved. */
export async function findGamepadMapping(db: Sequelize, userId: string): Promise<GamepadMapping> {
  const rows = await db.query<{ mapping: string | object }>("SELECT mapping FROM gamepad_mappings WHERE user_id = ?", {
    replacements: [userId],
    type: QueryTypes.SELECT,
  });
  if (!rows[0]) return DEFAULT_GAMEPAD_MAPPING;
  const raw = typeof rows[0].mapping === "string" ? JSON.parse(rows[0].mapping) : rows[0].mapping;
  const parsed = gamepadMappingSchema.safeParse(raw);
  return parsed.success ? parsed.data : DEFAULT_GAMEPAD_MAPPING;
}

export async function saveGamepadMapping(db: Sequelize, userId: string, mapping: GamepadMapping): Promise<void> {
  await db.query(
    `INSERT INTO gamepad_mappings (user_id, mapping) VALUES (?, ?) ON DUPLICATE KEY UPDATE mapping = VALUES(mapping)`,
    { replacements: [userId, JSON.stringify(mapping)] },
  );
}
