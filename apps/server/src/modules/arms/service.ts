import type { Sequelize, Transaction } from "sequelize";
import type { Arm } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";

/**
 * What the app asks of the arms: every arm, one arm, and the demo seed's refresh by slug. Other modules
 * import this file, never model.ts. Plain objects out.
 */

export async function listArms(db: Sequelize): Promise<Arm[]> {
  const arms = await modelsOf(db).Arm.findAll({ order: [["name", "ASC"]] });
  return arms.map((a) => a.toApi());
}

export async function findArm(db: Sequelize, id: number): Promise<Arm | null> {
  const arm = await modelsOf(db).Arm.findByPk(id);
  return arm?.toApi() ?? null;
}

/** The id of the arm with this slug, if any (the demo seed finds its arms by slug). */
export async function findArmIdBySlug(db: Sequelize, slug: string): Promise<number | null> {
  const arm = await modelsOf(db).Arm.findOne({ where: { slug }, attributes: ["id"] });
  return arm?.id ?? null;
}

/** The stored definition of an arm by slug, as the seed compares it (null when there is none). */
export async function findArmDefinitionBySlug(
  db: Sequelize,
  slug: string,
  transaction?: Transaction,
): Promise<{ id: number; slug: string; name: string; description: string; model: unknown; readyPose: number[] } | null> {
  const arm = await modelsOf(db).Arm.findOne({ where: { slug }, transaction });
  return arm ? { id: arm.id, slug: arm.slug, name: arm.name, description: arm.description, model: arm.model, readyPose: arm.readyPose } : null;
}

/**
 * Insert or refresh an arm by slug (the demo seed uses it; idempotent): INSERT … ON DUPLICATE KEY UPDATE
 * of the definition only, so `updated_at` moves (its ON UPDATE) only when the definition changed.
 */
export async function upsertArmBySlug(
  db: Sequelize,
  arm: { slug: string; name: string; description: string; model: unknown; readyPose: number[] },
  transaction?: Transaction,
): Promise<void> {
  await modelsOf(db).Arm.bulkCreate([arm], { updateOnDuplicate: ["name", "description", "model", "readyPose"], transaction });
}
