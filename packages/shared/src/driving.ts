import { z } from "zod";
import { armRefShape, operatorRefShape } from "./named-refs.ts";
import { profileVersionSchema } from "./profile-api.ts";
import { VERSION_STATES, type VersionState } from "./profile.ts";
import type { Role } from "./roles.ts";

/**
 * Who may drive which profile version: the one rule. The server's SQL (profiles/model.ts builds its
 * predicate from DRIVING_RULE below), the socket (loadVersionForDriving), the live-session banner (hub.ts),
 * GET /api/drive/versions and the console's version picker all answer with it; a test walks every
 * state × role × ceiling-flag combination through each of them.
 *
 * - An operator drives the approved version of a profile assigned to them, unless it is flagged as above
 *   the site ceilings (the flag is set when ceilings are lowered below an approved version, and stays until
 *   a compliant version is approved).
 * - An engineer may test-drive any version that is not retired, of any profile, drafts and flagged versions
 *   included; only an approved, unflagged version counts as "approved" for them too.
 * - Nobody else drives (safety officers and admins watch and review).
 * - A version of another operator's profile is refused without naming that operator; to someone who
 *   cannot see other operators' profiles at all, it does not exist (404), exactly like a missing id.
 */

/** What the rule needs of a version. */
export interface DrivingVersionFacts {
  state: VersionState;
  /** Set when the site ceilings were lowered below this approved version. */
  exceedsCeilings: boolean;
  /** The operator the version's profile is assigned to. */
  operatorId: string;
}

/** What the rule needs of a person. */
export interface DrivingUser {
  id: string;
  roles: readonly Role[];
}

/** The rule as data, so the SQL predicate is built from the same definition as isDriveable. */
export const DRIVING_RULE = {
  /** States an operator drives on a profile assigned to them (and only when not above the ceilings). */
  operatorStates: ["approved"] as readonly VersionState[],
  /** States an engineer may test-drive, on any profile. */
  engineerStates: VERSION_STATES.filter((s) => s !== "retired") as readonly VersionState[],
  /** Roles that may see every operator's profiles (a refusal to them need not pretend the version is missing). */
  staffRoles: ["engineer", "safety_officer"] as readonly Role[],
} as const;

export const DRIVING_KINDS = ["approved", "test-drive"] as const;
/** "approved": the approved, unflagged version; "test-drive": anything else an engineer may drive. */
export type DrivingKind = (typeof DRIVING_KINDS)[number];

export type DrivingRefusalCode = "not_found" | "forbidden";
/** Why not: the version's state, its ceiling flag, whose profile it is, or the person's roles. */
export type DrivingRefusal = "retired" | "not-approved" | "above-ceilings" | "another-operator" | "not-a-driver";

export type DrivingDecision =
  | { isDriveable: true; kind: DrivingKind }
  /** `reason` is a sentence about "this version" that names nobody (see drivingRefusalMessage). */
  | { isDriveable: false; status: 403 | 404; code: DrivingRefusalCode; refusal: DrivingRefusal; reason: string };

const STATE_WORDS: Record<VersionState, string> = {
  draft: "a draft",
  submitted: "submitted for review, not approved",
  approved: "approved",
  rejected: "rejected",
  superseded: "superseded by a newer approved version",
  retired: "retired",
  withdrawn: "withdrawn from review, not approved",
};

/** True when the version is the approved one and not flagged as above the ceilings. */
export function isApprovedAndCompliant(version: Pick<DrivingVersionFacts, "state" | "exceedsCeilings">): boolean {
  return DRIVING_RULE.operatorStates.includes(version.state) && !version.exceedsCeilings;
}

/** May `user` drive `version`, and as what; or why not. */
export function isDriveable(version: DrivingVersionFacts, user: DrivingUser): DrivingDecision {
  const approved = isApprovedAndCompliant(version);
  const kind: DrivingKind = approved ? "approved" : "test-drive";
  const isEngineer = user.roles.includes("engineer");
  const isOperator = user.roles.includes("operator");
  const isOwn = isOperator && version.operatorId === user.id;

  if (isEngineer && DRIVING_RULE.engineerStates.includes(version.state)) return { isDriveable: true, kind };
  if (isOwn && approved) return { isDriveable: true, kind };

  if (isEngineer || isOwn) {
    // Their own profile (or an engineer): say exactly why.
    if (version.state === "retired") return refuse(403, "retired", "This version is retired and cannot be driven.");
    if (!DRIVING_RULE.operatorStates.includes(version.state)) {
      return refuse(403, "not-approved", `This version is ${STATE_WORDS[version.state]}; operators drive only the current approved version.`);
    }
    return refuse(
      403,
      "above-ceilings",
      "This version exceeds the site ceilings, which were lowered after its approval; it cannot be driven until a compliant version is approved.",
    );
  }
  if (isOperator) {
    // Another operator's profile: never say whose. Someone who cannot see other operators' profiles gets
    // the same answer as for an id that does not exist.
    const seesAll = user.roles.some((r) => DRIVING_RULE.staffRoles.includes(r));
    return seesAll
      ? refuse(403, "another-operator", "This version belongs to a profile assigned to another operator; operators drive only their own profiles.")
      : refuse(404, "another-operator", "No such version.");
  }
  return refuse(403, "not-a-driver", "Only operators and engineers drive the arm.");
}

function refuse(status: 403 | 404, refusal: DrivingRefusal, reason: string): DrivingDecision {
  return { isDriveable: false, status, code: status === 404 ? "not_found" : "forbidden", refusal, reason };
}

/**
 * The refusal as a person reads it. `label` (e.g. `"Pack opening" v3`) replaces "This version" only where
 * the person may know which version it is: never for another operator's profile, whose name could name
 * that operator.
 */
export function drivingRefusalMessage(decision: Extract<DrivingDecision, { isDriveable: false }>, label?: string): string {
  if (!label || decision.refusal === "another-operator" || decision.refusal === "not-a-driver") return decision.reason;
  return decision.reason.replace(/^This version/, label);
}

// ---------------------------------------------------------------------------------------------------
// GET /api/drive/versions
// ---------------------------------------------------------------------------------------------------

/** A version the signed-in person may drive, with what the picker shows. */
export const driveableVersionSchema = profileVersionSchema.extend({
  profileName: z.string(),
  ...operatorRefShape,
  ...armRefShape,
  /** As isDriveable decided it: "test-drive" marks an engineer's drive of anything but the approved version. */
  kind: z.enum(DRIVING_KINDS),
});
export type DriveableVersion = z.infer<typeof driveableVersionSchema>;

/** GET /api/drive/versions: every version the signed-in person may drive (empty for those who drive none). */
export const driveVersionsResponseSchema = z.object({ versions: z.array(driveableVersionSchema) });
export type DriveVersionsResponse = z.infer<typeof driveVersionsResponseSchema>;
