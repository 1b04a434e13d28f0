import { generateIdFromEntropySize } from "lucia";
import { QueryTypes, type Sequelize } from "sequelize";
import { demoArms } from "@jogwright/kinematics";
import type { Role } from "@jogwright/shared";
import { hashPassword } from "../auth/password.ts";
import { upsertArmBySlug } from "../modules/arms/model.ts";
import { insertUser } from "../modules/users/model.ts";

/** The invented scenario of PRODUCT.md: a shielded cell where damaged EV battery packs are dismantled. */
export const DEMO_PASSWORD = "demo-pass-2026";

export const DEMO_ACCOUNTS: { username: string; displayName: string; email: string; roles: Role[] }[] = [
  { username: "olena", displayName: "Olena Brandt", email: "olena@cell-b.example", roles: ["operator"] },
  { username: "tomas", displayName: "Tomás Reyes", email: "tomas@cell-b.example", roles: ["operator"] },
  { username: "emeka", displayName: "Emeka Obi", email: "emeka@cell-b.example", roles: ["engineer"] },
  { username: "sigrid", displayName: "Sigrid Hale", email: "sigrid@cell-b.example", roles: ["safety_officer"] },
  { username: "adele", displayName: "Adèle Martin", email: "adele@cell-b.example", roles: ["admin"] },
];

/** Idempotent: accounts are created only when missing (a changed password is left alone), arms refreshed. */
export async function seedDemo(db: Sequelize): Promise<void> {
  for (const arm of demoArms) {
    await upsertArmBySlug(db, { slug: arm.slug, name: arm.name, description: arm.description, model: arm.model, readyPose: arm.readyPose });
  }
  for (const account of DEMO_ACCOUNTS) {
    const existing = await db.query("SELECT id FROM users WHERE username = ?", {
      replacements: [account.username],
      type: QueryTypes.SELECT,
    });
    if (existing.length > 0) continue;
    const passwordHash = await hashPassword(DEMO_PASSWORD);
    await db.transaction((transaction) =>
      insertUser(db, { ...account, id: generateIdFromEntropySize(10), passwordHash }, transaction),
    );
  }
}
