import { describe, expect, it } from "vitest";
import { DRIVING_RULE, isDriveable, type DrivingUser } from "./driving.ts";
import { VERSION_STATES, type VersionState } from "./profile.ts";
import type { Role } from "./roles.ts";

/**
 * The driving rule on its own. The server's agreement test (apps/server/src/modules/profiles/driving.test.ts)
 * walks the same combinations through the SQL, the listing, loadVersionForDriving and the HTTP endpoint.
 */
const OWNER = "owner-olena-1234";
const users: Record<string, DrivingUser> = {
  ownOperator: { id: OWNER, roles: ["operator"] },
  otherOperator: { id: "other-tomas-5678", roles: ["operator"] },
  engineer: { id: "eng-1", roles: ["engineer"] },
  safetyOfficer: { id: "so-1", roles: ["safety_officer"] },
  admin: { id: "adm-1", roles: ["admin"] },
  ownOperatorEngineer: { id: OWNER, roles: ["operator", "engineer"] },
  otherOperatorOfficer: { id: "other-2", roles: ["operator", "safety_officer"] },
  otherOperatorAdmin: { id: "other-3", roles: ["operator", "admin"] },
  officerAdmin: { id: "so-adm", roles: ["safety_officer", "admin"] },
};

/** The rule as the product brief states it, written out as a table (not with the code's helpers). */
function expected(who: string, state: VersionState, flagged: boolean): "approved" | "test-drive" | 403 | 404 {
  const approved = state === "approved" && !flagged;
  switch (who) {
    case "engineer":
    case "ownOperatorEngineer":
      return state === "retired" ? 403 : approved ? "approved" : "test-drive";
    case "ownOperator":
      return approved ? "approved" : 403;
    case "otherOperator":
    case "otherOperatorAdmin":
      return 404;
    default:
      return 403;
  }
}

describe("isDriveable", () => {
  it("answers every state × role × ceiling flag as the product brief's table says", () => {
    const mismatches: string[] = [];
    for (const [who, user] of Object.entries(users)) {
      for (const state of VERSION_STATES) {
        for (const flagged of [false, true]) {
          const d = isDriveable({ state, exceedsCeilings: flagged, operatorId: OWNER }, user);
          const got = d.isDriveable ? d.kind : d.status;
          const want = expected(who, state, flagged);
          if (got !== want) mismatches.push(`${who} ${state} ${flagged ? "flagged" : "unflagged"}: ${got}, expected ${want}`);
        }
      }
    }
    expect(mismatches).toEqual([]);
  });

  it("an approved version flagged above the ceilings is a test drive for an engineer, not an approved drive (hub.ts ignored the flag)", () => {
    expect(isDriveable({ state: "approved", exceedsCeilings: true, operatorId: OWNER }, users.engineer!)).toEqual({ isDriveable: true, kind: "test-drive" });
  });

  it("tells the owner why: draft, not approved, flagged above the ceilings, retired", () => {
    const reason = (state: VersionState, flagged = false) => {
      const d = isDriveable({ state, exceedsCeilings: flagged, operatorId: OWNER }, users.ownOperator!);
      return d.isDriveable ? "" : d.reason;
    };
    expect(reason("draft")).toMatch(/draft/);
    expect(reason("submitted")).toMatch(/not approved/);
    expect(reason("approved", true)).toMatch(/ceilings/);
    expect(reason("retired")).toMatch(/retired/);
  });

  it("a refusal to drive another operator's version never names or identifies that operator", () => {
    for (const who of ["otherOperator", "otherOperatorOfficer", "otherOperatorAdmin"]) {
      for (const state of VERSION_STATES) {
        const d = isDriveable({ state, exceedsCeilings: false, operatorId: OWNER }, users[who]!);
        expect(d.isDriveable).toBe(false);
        if (!d.isDriveable) {
          expect(d.reason).not.toContain(OWNER);
          expect(d.reason).not.toMatch(/olena/i);
        }
      }
    }
  });

  it("to an operator who cannot see other operators' profiles, another operator's version is the same 404 as a missing one", () => {
    const d = isDriveable({ state: "approved", exceedsCeilings: false, operatorId: OWNER }, users.otherOperator!);
    expect(d).toEqual({ isDriveable: false, status: 404, code: "not_found", refusal: "another-operator", reason: "No such version." });
  });

  it("the rule's data says what the SQL is built from: operators drive approved, engineers all but retired", () => {
    expect(DRIVING_RULE.operatorStates).toEqual(["approved"]);
    expect([...DRIVING_RULE.engineerStates].sort()).toEqual(["approved", "draft", "rejected", "submitted", "superseded", "withdrawn"]);
    const roles: Role[] = ["engineer", "safety_officer"];
    expect(DRIVING_RULE.staffRoles).toEqual(roles);
  });
});
