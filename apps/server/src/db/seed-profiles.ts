import type { Sequelize } from "sequelize";
import { checkCeilings, defaultProfileParams, type ProfileParams } from "@jogwright/shared";
import { findArm, findArmIdBySlug } from "../modules/arms/service.ts";
import { recordAudit } from "../modules/audit/service.ts";
import { findCeilingsInForce, ratedJointSpeeds } from "../modules/ceilings/service.ts";
import { findProfileByName, insertProfile } from "../modules/profiles/service.ts";
import { insertApproval } from "../modules/reviews/service.ts";
import { attachBuiltinEvidence } from "../modules/trials/service.ts";
import { findUserById, findUserIdByUsername } from "../modules/users/service.ts";
import { findVersion, flagAboveCeilings, insertVersion, paramsSha256, setStatus } from "../modules/versions/service.ts";

/**
 * The demo's profiles (idempotent; a profile that exists is left alone, so locked rows are never
 * touched): Olena's pack-opening profile on the six-axis arm with version 1 approved by Sigrid (written
 * by Emeka), so she can drive out of the box, and version 2 waiting for review; Tomás's cover-plate
 * profile on the seven-axis arm as a draft with the null-space term on. Every demo profile uses the
 * stop-before singularity guard (defaultProfileParams); the site's default ceilings still allow both
 * policies, and the safety officer decides. The approved version goes draft → submitted → locked →
 * approved, the order the workflow and the lifecycle triggers (0003, 0008) expect, with its ceiling flag
 * set from the ceilings in force. Both submitted versions carry the built-in trials of the arm as evidence,
 * run while seeding (about a second), as a real submission would.
 */
const userId = findUserIdByUsername;

const armIdBySlug = findArmIdBySlug;

/**
 * Who the demo profiles belong to (user names) and what they are called: the demo's own cast by default;
 * the seed's test seeds a fresh cast of its own, so what it checks no other test can have moved on.
 */
export interface DemoProfileCast {
  packOperator: string;
  coverOperator: string;
  engineer: string;
  safetyOfficer: string;
  packProfileName: string;
  coverProfileName: string;
}

export const DEMO_PROFILE_CAST: DemoProfileCast = {
  packOperator: "olena",
  coverOperator: "tomas",
  engineer: "emeka",
  safetyOfficer: "sigrid",
  packProfileName: "Olena — pack opening",
  coverProfileName: "Tomás — cover plates",
};

export async function seedDemoProfiles(db: Sequelize, cast: DemoProfileCast = DEMO_PROFILE_CAST): Promise<void> {
  const [olena, tomas, emeka, sigrid] = await Promise.all(
    [cast.packOperator, cast.coverOperator, cast.engineer, cast.safetyOfficer].map((u) => userId(db, u)),
  );
  const [arm6Id, arm7Id] = await Promise.all([armIdBySlug(db, "cell-arm-6"), armIdBySlug(db, "cell-arm-7")]);
  if (!olena || !tomas || !emeka || !sigrid || !arm6Id || !arm7Id) return;
  const arm6 = (await findArm(db, arm6Id))!;
  const arm7 = (await findArm(db, arm7Id))!;
  const inForce = await findCeilingsInForce(db);
  const ceilings = inForce.ceilings;

  const olenaName = cast.packProfileName;
  if (!(await findProfileByName(db, olenaName, olena))) {
    // Defaults: half of each rated joint speed, 250 mm/s TCP (the manual reduced-speed figure of
    // ISO 10218-1:2011, replaced in February 2025 by ISO 10218-1:2025), the stop-before guard.
    const v1: ProfileParams = defaultProfileParams(ratedJointSpeeds(arm6).map((s) => s!));
    // Version 2: more damping at the wrist singularity and a slower tool for unbolting module covers.
    const v2: ProfileParams = {
      ...v1,
      damping: { kind: "singular-value", epsilonM: 0.05, lambdaMaxM: 0.06 },
      tcpLinearCapMPerS: 0.2,
      shaping: { ...v1.shaping, expo: 0.45 },
    };
    await db.transaction(async (t) => {
      const profileId = await insertProfile(db, t, { name: olenaName, operatorId: olena, armId: arm6Id, createdBy: emeka });
      await recordAudit(db, t, {
        actorId: emeka,
        entity: "profile",
        entityId: profileId,
        action: "create",
        summary: `created profile "${olenaName}" (demo seed)`,
        after: { id: profileId, name: olenaName, operatorId: olena, armId: arm6Id, createdBy: emeka },
      });
      const v1Id = await insertVersion(db, t, { profileId, number: 1, parentVersionId: null, params: v1, note: "Starting point: defaults for the six-axis arm.", authorId: emeka });
      // Submitted as the workflow submits: with the built-in trials of the arm as evidence (run now).
      await attachBuiltinEvidence(db, t, { id: v1Id, profileId, params: v1 }, arm6, emeka);
      await setStatus(db, t, v1Id, { state: "submitted", submittedAt: new Date() });
      const comment = "Test-driven live through the wrist region; damping and caps are within the site ceilings.";
      // The approvals row approves and locks v1 (its triggers, migration 0014).
      const approvalId = await insertApproval(db, t, { versionId: v1Id, approverId: sigrid, comment, paramsSha256: paramsSha256(v1) });
      const violations = checkCeilings(v1, ceilings, ratedJointSpeeds(arm6));
      if (violations.length > 0) {
        // Flagged as a ceilings change flags an approved version: the flag, a row in its flag history and an
        // audit entry (the safety officer's, as the approver who would re-confirm it).
        const officer = (await findUserById(db, sigrid, t))!;
        const summary = `"${olenaName}" v1 is above the site ceilings in force (revision ${inForce.revision}) when seeded: ${violations.map((v) => v.message).join("; ")}`;
        await flagAboveCeilings(db, t, officer, (await findVersion(db, v1Id, t))!, inForce.revision, summary);
      }
      await recordAudit(db, t, { actorId: emeka, entity: "version", entityId: v1Id, action: "save", summary: `saved "${olenaName}" v1 (demo seed)`, after: { id: v1Id, paramsSha256: paramsSha256(v1) } });
      await recordAudit(db, t, { actorId: sigrid, entity: "approval", entityId: approvalId, action: "create", summary: `approved "${olenaName}" v1 (demo seed): ${comment}`, after: { versionId: v1Id, paramsSha256: paramsSha256(v1) } });
      const v2Id = await insertVersion(db, t, { profileId, number: 2, parentVersionId: v1Id, params: v2, note: "More damping near the wrist singularity; slower tool for cover bolts.", authorId: emeka });
      await attachBuiltinEvidence(db, t, { id: v2Id, profileId, params: v2 }, arm6, emeka);
      await setStatus(db, t, v2Id, { state: "submitted", submittedAt: new Date() });
      await recordAudit(db, t, { actorId: emeka, entity: "version", entityId: v2Id, action: "submit", summary: `saved and submitted "${olenaName}" v2 (demo seed)`, after: { id: v2Id, paramsSha256: paramsSha256(v2) } });
    });
  }

  const tomasName = cast.coverProfileName;
  if (!(await findProfileByName(db, tomasName, tomas))) {
    // Seven joints: the null-space term keeps the spare joint away from its limits (Liégeois 1977).
    const params: ProfileParams = {
      ...defaultProfileParams(ratedJointSpeeds(arm7).map((s) => s!)),
      watchdogMs: 150,
      nullSpace: { enabled: true, gainPerS: 0.5 },
    };
    await db.transaction(async (t) => {
      const profileId = await insertProfile(db, t, { name: tomasName, operatorId: tomas, armId: arm7Id, createdBy: emeka });
      const versionId = await insertVersion(db, t, { profileId, number: 1, parentVersionId: null, params, note: "First try on the seven-axis arm.", authorId: emeka });
      await recordAudit(db, t, {
        actorId: emeka,
        entity: "profile",
        entityId: profileId,
        action: "create",
        summary: `created profile "${tomasName}" with draft v1 (demo seed)`,
        after: { id: profileId, name: tomasName, operatorId: tomas, armId: arm7Id, createdBy: emeka, versionId },
      });
    });
  }
}
