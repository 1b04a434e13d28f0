import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import { armModelSchema, type Arm } from "@jogwright/shared";

type ArmRow = {
  id: number;
  slug: string;
  name: string;
  description: string;
  model: string | object;
  ready_pose: string | object;
  created_at: Date;
  updated_at: Date;
};

const json = (v: string | object): unknown => (typeof v === "string" ? JSON.parse(v) : v);

function toArm(row: ArmRow): Arm {
  return {
    id: row.id,
    name: row.name,
    description: row.description,
    model: armModelSchema.parse(json(row.model)),
    readyPose: json(row.ready_pose) as number[],
    createdAt: new Date(row.created_at).toISOString(),
    updatedAt: new Date(row.updated_at).toISOString(),
  };
}

export async function listArms(db: Sequelize): Promise<Arm[]> {
  const rows = await db.query<ArmRow>("SELECT * FROM arms ORDER BY name", { type: QueryTypes.SELECT });
  return rows.map(toArm);
}

export async function findArm(db: Sequelize, id: number): Promise<Arm | null> {
  const rows = await db.query<ArmRow>("SELECT * FROM arms WHERE id = ?", { replacements: [id], type: QueryTypes.SELECT });
  return rows[0] ? toArm(rows[0]) : null;
}

/** The stored definition of an arm by slug, as the seed compares it (null when there is none). */
export async function findArmDefinitionBySlug(
  db: Sequelize,
  slug: string,
  transaction?: Transaction,
): Promise<{ id: number; slug: string; name: string; description: string; model: unknown; readyPose: number[] } | null> {
  const rows = await db.query<ArmRow>("SELECT * FROM arms WHERE slug = ?", { replacements: [slug], type: QueryTypes.SELECT, transaction });
  const row = rows[0];
  return row
    ? { id: row.id, slug: row.slug, name: row.name, description: row.description, model: json(row.model), readyPose: json(row.ready_pose) as number[] }
    : null;
}

/** Insert or refresh an arm by slug (the demo seed uses it; idempotent). */
export async function upsertArmBySlug(
  db: Sequelize,
  arm: { slug: string; name: string; description: string; model: unknown; readyPose: number[] },
  transaction?: Transaction,
): Promise<void> {
  await db.query(
    `INSERT INTO arms (slug, name, description, model, ready_pose) VALUES (?, ?, ?, ?, ?)
     ON DUPLICATE KEY UPDATE name = VALUES(name), description = VALUES(description), model = VALUES(model), ready_pose = VALUES(ready_pose)`,
    { replacements: [arm.slug, arm.name, arm.description, JSON.stringify(arm.model), JSON.stringify(arm.readyPose)], transaction },
  );
}
