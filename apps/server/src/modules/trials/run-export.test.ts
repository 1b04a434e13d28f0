import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { parse } from "csv-parse/sync";
import { modelsOf } from "../../db/models.ts";
import { call, createHarness, type Harness } from "../../test/harness.ts";
import { compliantParams, createProfile, freshTeam, retireTeam, sixAxisArm, type Team } from "../../test/profiles-fixture.ts";
import type { TrialSeries } from "./runner.ts";
import { encodeSeries, seriesHash } from "./series-codec.ts";

/** A stored run's series exported as CSV and JSON. The run is written synthetically (a 4-sample series). */
let h: Harness;
let team: Team;
let runId: number;
const N = 6, COUNT = 4;

beforeAll(async () => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  team = await freshTeam(h);
  const arm = await sixAxisArm(h);
  const profile = await createProfile(h, team, arm);
  const f = (len: number, at: (i: number) => number) => Float64Array.from({ length: len }, (_, i) => at(i));
  const series: TrialSeries = {
    tickRateHz: 1000, n: N, count: COUNT, releaseIndex: COUNT,
    t: f(COUNT, (k) => k / 1000), q: f(COUNT * N, (i) => i / 100), qdot: f(COUNT * N, (i) => -i / 10),
    tcp: f(COUNT * 3, (i) => 0.5 + i / 1000), reference: f(COUNT * 3, () => 0), orientationError: f(COUNT, () => 0),
    wanted: f(COUNT * 6, () => 0), commanded: f(COUNT * 6, () => 0), achieved: f(COUNT * 6, () => 0),
    sigmaMin: f(COUNT, (k) => 0.1 - k / 100), lambda: f(COUNT, (k) => k / 1000), stopDistance: f(COUNT, () => 0),
    capBound: Uint8Array.from([0, 1, 0, 0]), guardHeld: Uint8Array.from([0, 0, 1, 0]), fault: new Uint8Array(COUNT),
  };
  const run = await modelsOf(h.db).TrialRun.create({
    armId: arm.id, profileId: profile.id, versionId: profile.latestVersion.id, params: compliantParams(arm), trialKind: "custom", trialId: null,
    recordingId: null, trialName: "Synthetic", trialDefinition: null, metrics: {}, series: encodeSeries(series), seriesHash: seriesHash(series),
    durationMs: 1, createdBy: team.engineer.id,
  });
  runId = run.id;
});
afterAll(async () => {
  await retireTeam(h, team);
  await h.close();
});

describe("trial run exports", () => {
  it("CSV: one row per sample with the units in the header; JSON: the same samples", async () => {
    const csv = await call(h, "get", `/api/bench/runs/${runId}/export.csv`, team.officer.cookie);
    expect(csv.status).toBe(200);
    expect(csv.headers["content-type"]).toMatch(/^text\/csv/);
    const rows = parse(csv.text) as string[][];
    expect(rows[0]!.slice(0, 2)).toEqual(["t_s", "q1_rad"]);
    expect(rows[0]!.slice(-6)).toEqual(["tcp_x_m", "tcp_y_m", "tcp_z_m", "sigma_min_m", "lambda_m", "binding_limit"]);
    expect(rows).toHaveLength(1 + COUNT);
    const want = [0.001, ...[6, 7, 8, 9, 10, 11].map((i) => i / 100), ...[6, 7, 8, 9, 10, 11].map((i) => -i / 10), 0.5 + 3 / 1000, 0.5 + 4 / 1000, 0.5 + 5 / 1000, 0.1 - 1 / 100, 1 / 1000];
    expect(rows[2]!.slice(0, -1).map(Number)).toEqual(want); // the stored doubles, written in full
    expect(rows[2]![want.length]).toBe("joint-rate");
    expect(rows.slice(1).map((r) => r[r.length - 1])).toEqual(["none", "joint-rate", "singularity-guard", "none"]);
    const json = await call(h, "get", `/api/bench/runs/${runId}/export.json`, team.engineer.cookie);
    const body = JSON.parse(json.text) as { samples: { t: number; q: number[]; binding: string }[] };
    expect(body.samples).toHaveLength(COUNT);
    expect(body.samples[3]).toMatchObject({ t: 0.003, binding: "none" });
    expect(body.samples[3]!.q).toEqual([18, 19, 20, 21, 22, 23].map((i) => i / 100));
  });

  it("operators have no bench: 403", async () => {
    expect((await call(h, "get", `/api/bench/runs/${runId}/export.csv`, team.operator.cookie)).status).toBe(403);
  });
});
