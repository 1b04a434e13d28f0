import type { Sequelize } from "sequelize";
import { type Ceilings, type CeilingsRecord, type User } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { recordAudit } from "../audit/service.ts";
import { listProfileEngineers } from "../profiles/model.ts";
import { reflagApprovedVersions, type WorkflowContext } from "../profiles/service.ts";
import * as model from "./model.ts";

/**
 * Site ceilings no version may exceed. Revision 1 (migration 0005) sets the TCP linear ceiling to
 * 250 mm/s, the manual reduced-speed figure of ISO 10218-1:2011 (clause number from memory; that edition
 * was replaced in February 2025 by ISO 10218-1:2025, which keeps a reduced-speed mode;
 * ISO_10218_REDUCED_SPEED_M_PER_S in shared). Revision 1 predates the stopping-distance and deceleration
 * ceilings: it parses with their defaults (ceilingsSchema), and migration 0013 re-checked the approved
 * versions against them once. Each change writes a new revision and re-checks every approved version
 * against it.
 */
export const getCeilings = (db: Sequelize) => model.findLatestCeilings(db);

export async function updateCeilings(
  ctx: WorkflowContext,
  actor: User,
  input: { revision: number; ceilings: Ceilings; note: string },
): Promise<{ record: CeilingsRecord; flaggedVersionIds: number[] }> {
  const { db } = ctx;
  const flaggedVersionIds = await db.transaction(async (t) => {
    const current = await model.findLatestCeilings(db, t, "update");
    if (current.revision !== input.revision) {
      throw new AppError(
        409,
        "stale_parent",
        `The ceilings were changed to revision ${current.revision} by ${current.updatedByName ?? "the system"} at ${current.updatedAt.slice(0, 16).replace("T", " ")} UTC since you opened revision ${input.revision}; nothing was saved. Reload and edit again.`,
        [{ path: "revision", message: `the latest revision is ${current.revision}` }],
      );
    }
    const revision = current.revision + 1;
    await model.insertCeilings(db, { revision, ceilings: input.ceilings, note: input.note, updatedBy: actor.id }, t);
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "ceilings",
      entityId: revision,
      action: "update",
      summary: `set site ceilings revision ${revision}${input.note ? `: ${input.note}` : ""}`,
      before: current.ceilings,
      after: input.ceilings,
    });
    const { newlyFlagged, flaggedIds } = await reflagApprovedVersions(db, t, actor, input.ceilings, revision);
    if (newlyFlagged.length) {
      const profileIds = [...new Set(newlyFlagged.map((v) => v.profileId))];
      const engineers = await listProfileEngineers(db, profileIds, t);
      await ctx.mailer.enqueue(t, {
        kind: "ceilings-lowered",
        to: engineers.map((e) => e.email),
        subject: `[Jogwright] Site ceilings lowered: ${newlyFlagged.length} approved version(s) can no longer be driven`,
        text: [
          `${actor.displayName} set site ceilings revision ${revision}${input.note ? ` (${input.note})` : ""}.`,
          "These approved versions now exceed them and cannot be driven until a compliant version is approved:",
          ...newlyFlagged.map((v) => `  - profile ${v.profileId}, version ${v.number} (id ${v.id})`),
        ].join("\n"),
      });
    }
    return flaggedIds;
  });
  return { record: await model.findLatestCeilings(db), flaggedVersionIds };
}
