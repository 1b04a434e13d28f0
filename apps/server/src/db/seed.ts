import { generateIdFromEntropySize } from "lucia";
import type { Sequelize } from "sequelize";
import { demoArms } from "@jogwright/kinematics";
import { canonicalJson, type Role } from "@jogwright/shared";
import { hashPassword } from "../auth/password.ts";
import { findArmDefinitionBySlug, upsertArmBySlug } from "../modules/arms/service.ts";
import { recordAudit } from "../modules/audit/service.ts";
import { findUserById, findUserIdByUsername, insertUser } from "../modules/users/service.ts";
import { seedDemoProfiles } from "./seed-profiles.ts";

/** The invented scenario of PRODUCT.md: a shielded cell where damaged EV battery packs are dismantled. */
export const DEMO_PASSWORD = "demo-pass-2026";

export const DEMO_ACCOUNTS: { username: string; displayName: string; email: string; roles: Role[] }[] = [
  { username: "olena", displayName: "Olena Brandt", email: "olena@cell-b.example", roles: ["operator"] },
  { username: "tomas", displayName: "Tomás Reyes", email: "tomas@cell-b.example", roles: ["operator"] },
  { username: "emeka", displayName: "Emeka Obi", email: "emeka@cell-b.example", roles: ["engineer"] },
  { username: "sigrid", displayName: "Sigrid Hale", email: "sigrid@cell-b.example", roles: ["safety_officer"] },
  { username: "adele", displayName: "Adèle Martin", email: "adele@cell-b.example", roles: ["admin"] },
];

/**
 * Idempotent: accounts are created only when missing (a changed password is left alone), arms refreshed
 * (and audited when they changed), demo profiles created only when missing.
 */
export async function seedDemo(db: Sequelize): Promise<void> {
  for (const arm of demoArms) {
    const definition = { slug: arm.slug, name: arm.name, description: arm.description, model: arm.model, readyPose: arm.readyPose };
    await db.transaction(async (transaction) => {
      const existing = await findArmDefinitionBySlug(db, arm.slug, transaction);
      const before = existing ? { slug: existing.slug, name: existing.name, description: existing.description, model: existing.model, readyPose: existing.readyPose } : null;
      if (before && JSON.stringify(canonical(before)) === JSON.stringify(canonical(definition))) return;
      await upsertArmBySlug(db, definition, transaction);
      const stored = (await findArmDefinitionBySlug(db, arm.slug, transaction))!;
      await recordAudit(db, transaction, {
        actorId: null,
        entity: "arm",
        entityId: stored.id,
        action: existing ? "update" : "create",
        summary: `${existing ? "refreshed" : "added"} demo arm ${arm.slug} (seed)`,
        before,
        after: definition,
      });
    });
  }
  for (const account of DEMO_ACCOUNTS) {
    if (await findUserIdByUsername(db, account.username)) continue;
    const passwordHash = await hashPassword(DEMO_PASSWORD);
    await db.transaction(async (transaction) => {
      const id = generateIdFromEntropySize(10);
      await insertUser(db, { ...account, id, passwordHash }, transaction);
      await recordAudit(db, transaction, {
        actorId: null,
        entity: "user",
        entityId: id,
        action: "create",
        summary: `created demo account ${account.username} (seed)`,
        after: await findUserById(db, id, transaction),
      });
    });
  }
  await seedDemoProfiles(db);
}

/** Compare definitions the way the database stores them (JSON round trip). */
const canonical = (v: unknown) => canonicalJson(JSON.parse(JSON.stringify(v)));
