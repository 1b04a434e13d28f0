import { beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { BUILTIN_TRIAL_KINDS, versionDetailResponseSchema, type Ceilings } from "@jogwright/shared";
import { call, createHarness } from "../../test/harness.ts";
import { compliantParams, createProfile, teamForFile } from "../../test/profiles-fixture.ts";
import { closeTrialPool } from "../trials/trial-pool.ts";

/**
 * Evidence in the review (issue 10): a version is submitted with its runs; the site's rule (ceilings
 * `evidenceRequired`, default "builtin-trials") adds a run of every built-in trial of the arm that the
 * engineer did not attach and refuses the submission when one stalls or stops above the stopping-distance
 * ceiling; the review reads the runs; the database keeps them fixed once the version left draft.
 */
const cast = teamForFile(() => createHarness({ SIGN_IN_MAX_FAILURES: "1000" }), { owner: true, beforeClose: closeTrialPool });
let original: Ceilings;
let revision: number;

beforeAll(async () => {
  const current = await call(cast.h, "get", "/api/ceilings", cast.team.officer.cookie).expect(200);
  original = current.body.ceilings;
  revision = current.body.revision;
});

async function setCeilings(ceilings: Ceilings, note: string): Promise<void> {
  const res = await call(cast.h, "put", "/api/ceilings", cast.team.officer.cookie).send({ revision, ceilings, note });
  if (res.status !== 200) throw new Error(`set ceilings: ${res.status} ${JSON.stringify(res.body)}`);
  revision = res.body.record.revision;
}

describe("evidence at submission", () => {
  it("a draft submitted with a run of its own gets the built-in trials the site requires added; the review shows them all", async () => {
    const profile = await createProfile(cast.h, cast.team, cast.arm);
    const v = profile.latestVersion;
    const custom = await call(cast.h, "post", "/api/bench/runs", cast.team.engineer.cookie)
      .send({ source: { kind: "version", versionId: v.id }, trials: [{ kind: "builtin", builtin: "wrist-line" }] })
      .expect(201);
    const attached = custom.body.runs[0].id as number;
    await call(cast.h, "post", `/api/versions/${v.id}/submit`, cast.team.engineer.cookie).send({ evidenceRunIds: [attached] }).expect(200);

    const detail = versionDetailResponseSchema.parse((await call(cast.h, "get", `/api/versions/${v.id}`, cast.team.officer.cookie).expect(200)).body);
    // The engineer's wrist-line run is used, not run again; the six other built-in trials were run at submission.
    expect(detail.evidence.map((r) => r.trialKind).sort()).toEqual([...BUILTIN_TRIAL_KINDS].sort());
    expect(detail.evidence.find((r) => r.trialKind === "wrist-line")!.id).toBe(attached);
    expect(detail.evidence.every((r) => r.versionId === v.id)).toBe(true);
    // The default profile's stop-before guard holds before the singular region: the profile's own answer, accepted.
    expect(detail.evidence.some((r) => r.metrics.stallKind === "guard")).toBe(true);
  });

  it("refuses a run of another version, naming the field, and submits nothing", async () => {
    const a = await createProfile(cast.h, cast.team, cast.arm);
    const b = await createProfile(cast.h, cast.team, cast.arm);
    const run = await call(cast.h, "post", "/api/bench/runs", cast.team.engineer.cookie)
      .send({ source: { kind: "version", versionId: a.latestVersion.id }, trials: [{ kind: "builtin", builtin: "guard-ramp" }] })
      .expect(201);
    const res = await call(cast.h, "post", `/api/versions/${b.latestVersion.id}/submit`, cast.team.engineer.cookie).send({ evidenceRunIds: [run.body.runs[0].id] }).expect(400);
    expect(res.body.error.issues[0].path).toBe("evidenceRunIds.0");
    expect((await call(cast.h, "get", `/api/versions/${b.latestVersion.id}`, cast.team.engineer.cookie)).body.version.state).toBe("draft");
  });

  it("refuses a version one of whose built-in trials stalls because the arm falls behind (409 evidence_insufficient) and submits nothing", async () => {
    // Joint-rate caps at 10 % of rated, damping through the wrist: within every ceiling (they bound caps from
    // above), but the rotation about the lost wrist direction needs more than the wrist may give, so the arm
    // falls more than half the path behind (checked on the bench first: a lag stall).
    const base = compliantParams(cast.arm);
    const params = { ...base, jointRateCapsRadPerS: cast.arm.model.joints.map((j) => j.maxSpeed! * 0.1), guard: { policy: "damp-through" as const, sigmaStopM: 0.02 } };
    const profile = await createProfile(cast.h, cast.team, cast.arm, params);
    const res = await call(cast.h, "post", `/api/versions/${profile.latestVersion.id}/submit`, cast.team.engineer.cookie).expect(409);
    expect(res.body.error.code).toBe("evidence_insufficient");
    expect(res.body.error.message).toMatch(/Rotation about the direction lost at wrist alignment.*stalled: the arm fell more than 50 % of the path behind/);
    expect(res.body.error.issues.length).toBeGreaterThan(0);
    expect((await call(cast.h, "get", `/api/versions/${profile.latestVersion.id}`, cast.team.engineer.cookie)).body.version.state).toBe("draft");
    // The runs stay on the bench for the engineer to look at.
    expect((await call(cast.h, "get", `/api/bench/runs?versionId=${profile.latestVersion.id}`, cast.team.engineer.cookie)).body.runs.length).toBe(BUILTIN_TRIAL_KINDS.length);
  });

  it("with the site's rule set to none, a version is submitted with only the runs attached to it", async () => {
    await setCeilings({ ...original, evidenceRequired: "none" }, "no evidence required, for a test");
    try {
      const profile = await createProfile(cast.h, cast.team, cast.arm);
      await call(cast.h, "post", `/api/versions/${profile.latestVersion.id}/submit`, cast.team.engineer.cookie).expect(200);
      expect((await call(cast.h, "get", `/api/versions/${profile.latestVersion.id}`, cast.team.officer.cookie)).body.evidence).toEqual([]);
    } finally {
      await setCeilings(original, "back to the defaults");
    }
  });

  it("the evidence of a submitted version never changes, even for the schema's owner", async () => {
    const profile = await createProfile(cast.h, cast.team, cast.arm);
    const v = profile.latestVersion.id;
    await call(cast.h, "post", `/api/versions/${v}/submit`, cast.team.engineer.cookie).expect(200);
    const [row] = await cast.h.db.query<{ run_id: number }>("SELECT run_id FROM version_evidence WHERE version_id = ? LIMIT 1", { replacements: [v], type: QueryTypes.SELECT });
    await expect(cast.owner!.query("DELETE FROM version_evidence WHERE version_id = ?", { replacements: [v] })).rejects.toThrow(/never changes/);
    const [other] = await cast.h.db.query<{ id: number }>("SELECT id FROM trial_runs WHERE version_id = ? AND id <> ? LIMIT 1", { replacements: [v, row!.run_id], type: QueryTypes.SELECT });
    await expect(cast.owner!.query("INSERT INTO version_evidence (version_id, run_id, attached_by) VALUES (?, ?, ?)", { replacements: [v, other?.id ?? row!.run_id, cast.team.engineer.id] })).rejects.toThrow(
      /draft only|Duplicate/,
    );
  });
});
