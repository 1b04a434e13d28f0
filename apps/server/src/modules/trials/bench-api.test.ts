import { beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import {
  armTrialsSchema, mapResponseSchema, runDetailSchema, sweepResultSchema, takeStreamEvents, trialRunSchema, type TrialDefinition,
} from "@jogwright/shared";
import { call, createHarness, listenHarness } from "../../test/harness.ts";
import { compliantParams, createProfile, teamForFile } from "../../test/profiles-fixture.ts";
import { computeTrialMetrics } from "./metrics.ts";
import { effectiveJointCaps } from "./run-job.ts";
import { decodeSeries, seriesHash } from "./series-codec.ts";
import { dominates } from "./pareto.ts";
import { closeTrialPool, trialPoolQueueSize } from "./trial-pool.ts";
import { wristJointIndex } from "./builtin.ts";

/**
 * The tuning bench's API (issue 10) on the real database and the real worker pool: trials, stored runs,
 * sweeps over server-sent events (and their cancellation), singularity maps.
 */
const cast = teamForFile(() => createHarness({ SIGN_IN_MAX_FAILURES: "1000" }), { owner: true, beforeClose: closeTrialPool });
let versionId: number;
let profileId: number;
beforeAll(async () => {
  const profile = await createProfile(cast.h, cast.team, cast.arm);
  profileId = profile.id;
  versionId = profile.latestVersion.id;
});

const customTrial = (name: string, linear: [string, string, string]): TrialDefinition => ({
  name,
  description: "",
  startPose: cast.arm.readyPose,
  segments: [{ kind: "expression", frame: "world", linear, angular: ["0", "0", "0"], durationS: 1 }],
});

describe("trials", () => {
  it("lists the arm's seven built-in trials, generated from its geometry, and its saved ones", async () => {
    const res = await call(cast.h, "get", `/api/bench/arms/${cast.arm.id}/trials`, cast.team.officer.cookie).expect(200);
    const trials = armTrialsSchema.parse(res.body);
    expect(trials.builtin.map((t) => t.kind).sort()).toEqual(
      ["elbow-reach", "guard-ramp", "shoulder-pass", "wrist-line", "wrist-lost-rotation", "wrist-near-miss-10mm", "wrist-near-miss-3mm"],
    );
    expect(trials.notApplicable).toEqual([]);
    for (const t of trials.builtin) expect(t.definition.startPose).toHaveLength(cast.arm.model.joints.length);
  });

  it("refuses a custom trial whose expression is wrong, naming its segment and field; saves a valid one, audited; refuses a second of that name", async () => {
    const bad = customTrial("Bad units", ["0.1 m", "0", "0"]);
    const refused = await call(cast.h, "post", "/api/bench/trials", cast.team.engineer.cookie).send({ armId: cast.arm.id, definition: bad }).expect(400);
    expect(refused.body.error.issues[0]).toMatchObject({ path: "definition.segments.0.linear.0", message: expect.stringMatching(/segment 1/) });

    const good = customTrial("Sway in y", ["0", "0.05 m/s * sin(2 pi t / 1 s)", "0"]);
    const saved = await call(cast.h, "post", "/api/bench/trials", cast.team.engineer.cookie).send({ armId: cast.arm.id, definition: good }).expect(201);
    expect(saved.body.trial).toMatchObject({ armId: cast.arm.id, name: "Sway in y", createdBy: cast.team.engineer.id });
    const audit = await cast.h.db.query<{ action: string }>("SELECT action FROM audit_log WHERE entity = 'trial' AND entity_id = ?", {
      replacements: [String(saved.body.trial.id)], type: QueryTypes.SELECT,
    });
    expect(audit.map((a) => a.action)).toEqual(["create"]);

    const again = await call(cast.h, "post", "/api/bench/trials", cast.team.engineer.cookie).send({ armId: cast.arm.id, definition: good }).expect(409);
    expect(again.body.error.issues[0].path).toBe("definition.name");
    // Changed with PUT: checked in full the same way, audited as an update.
    const id = saved.body.trial.id as number;
    const slower = customTrial("Sway in y", ["0", "0.02 m/s * sin(2 pi t / 1 s)", "0"]);
    const updated = await call(cast.h, "put", `/api/bench/trials/${id}`, cast.team.engineer.cookie).send({ definition: slower }).expect(200);
    expect(updated.body.trial.definition.segments[0].linear[1]).toBe("0.02 m/s * sin(2 pi t / 1 s)");
    const wrong = await call(cast.h, "put", `/api/bench/trials/${id}`, cast.team.engineer.cookie).send({ definition: customTrial("Sway in y", ["0", "0", "1 rad"]) }).expect(400);
    expect(wrong.body.error.issues[0].path).toBe("definition.segments.0.linear.2");
    const actions = await cast.h.db.query<{ action: string }>("SELECT action FROM audit_log WHERE entity = 'trial' AND entity_id = ? ORDER BY id", {
      replacements: [String(id)], type: QueryTypes.SELECT,
    });
    expect(actions.map((a) => a.action)).toEqual(["create", "update"]);
    // A safety officer reads trials but does not write them.
    await call(cast.h, "post", "/api/bench/trials", cast.team.officer.cookie).send({ armId: cast.arm.id, definition: customTrial("Officer's", ["0", "0", "0"]) }).expect(403);
  });
});

describe("runs", () => {
  it("runs a built-in and a custom trial in the pool, stores each run, and the same version and trial give the same hash again", async () => {
    const list = armTrialsSchema.parse((await call(cast.h, "get", `/api/bench/arms/${cast.arm.id}/trials`, cast.team.engineer.cookie)).body);
    const custom = list.custom.find((t) => t.name === "Sway in y")!;
    const request = { source: { kind: "version", versionId }, trials: [{ kind: "builtin", builtin: "wrist-line" }, { kind: "custom", trialId: custom.id }] };
    const first = await call(cast.h, "post", "/api/bench/runs", cast.team.engineer.cookie).send(request).expect(201);
    const runs = first.body.runs.map((r: unknown) => trialRunSchema.parse(r));
    expect(runs.map((r: { trialKind: string }) => r.trialKind)).toEqual(["wrist-line", "custom"]);
    expect(runs[0]).toMatchObject({ versionId, profileId, versionNumber: 1, createdBy: cast.team.engineer.id });
    // The default profile's stop-before guard holds the arm before the wrist-aligned region: the line stalls
    // there and σ_min never falls below σ_stop (PRODUCT.md, the guard).
    expect(runs[0].params.guard).toMatchObject({ policy: "stop-before" });
    expect(runs[0].metrics).toMatchObject({ finished: false, stalledReason: expect.stringMatching(/stop-before guard/) });
    expect(runs[0].metrics.singularity.minSigma).toBeGreaterThanOrEqual(runs[0].params.guard.sigmaStopM - 1e-6);
    expect(runs[0].metrics.singularity.guardStops).toBeGreaterThan(0);

    const second = await call(cast.h, "post", "/api/bench/runs", cast.team.engineer.cookie).send(request).expect(201);
    expect(second.body.runs.map((r: { seriesHash: string }) => r.seriesHash)).toEqual(runs.map((r: { seriesHash: string }) => r.seriesHash));
    expect(second.body.runs[0].id).not.toBe(runs[0].id);

    const listed = await call(cast.h, "get", `/api/bench/runs?versionId=${versionId}`, cast.team.officer.cookie).expect(200);
    expect(listed.body.runs).toHaveLength(4);
  });

  it("the stored series decodes to its hash, and the metrics recomputed from it equal the stored metrics", async () => {
    const rows = await cast.h.db.query<{ id: number; series: Buffer; series_hash: string; metrics: unknown }>(
      "SELECT id, series, series_hash, metrics FROM trial_runs WHERE version_id = ? AND trial_kind = 'wrist-line' ORDER BY id LIMIT 1",
      { replacements: [versionId], type: QueryTypes.SELECT },
    );
    const row = rows[0]!;
    const series = decodeSeries(row.series);
    expect(seriesHash(series)).toBe(row.series_hash);
    const params = compliantParams(cast.arm);
    const d = params.damping;
    const recomputed = computeTrialMetrics(series, {
      jointCaps: effectiveJointCaps(cast.arm.model, params),
      epsilonM: d.kind === "singular-value" ? d.epsilonM : null,
      wristJoint: wristJointIndex(cast.arm.model),
    });
    const stored = typeof row.metrics === "string" ? JSON.parse(row.metrics) : row.metrics;
    expect(JSON.parse(JSON.stringify(recomputed))).toEqual(stored);

    const detail = runDetailSchema.parse((await call(cast.h, "get", `/api/bench/runs/${row.id}`, cast.team.officer.cookie).expect(200)).body);
    expect(detail.series.n).toBe(6);
    expect(detail.series.t[detail.series.t.length - 1]).toBeCloseTo(series.t[series.count - 1]!, 12);
  });

  it("a run is never changed, even by the schema's owner", async () => {
    const [row] = await cast.h.db.query<{ id: number }>("SELECT id FROM trial_runs LIMIT 1", { type: QueryTypes.SELECT });
    await expect(cast.owner!.query("UPDATE trial_runs SET trial_name = 'x' WHERE id = ?", { replacements: [row!.id] })).rejects.toThrow(/never changed/);
  });

  it("runs unsaved edits (no version), and refuses edits that do not fit the arm", async () => {
    const params = compliantParams(cast.arm);
    const edited = { ...params, damping: { ...params.damping, lambdaMaxM: 0.02 } };
    const res = await call(cast.h, "post", "/api/bench/runs", cast.team.engineer.cookie)
      .send({ source: { kind: "edits", profileId, params: edited }, trials: [{ kind: "builtin", builtin: "wrist-near-miss-3mm" }] })
      .expect(201);
    expect(res.body.runs[0]).toMatchObject({ versionId: null, versionNumber: null, params: edited });
    const short = { ...params, jointRateCapsRadPerS: params.jointRateCapsRadPerS.slice(0, 5) };
    const refused = await call(cast.h, "post", "/api/bench/runs", cast.team.engineer.cookie)
      .send({ source: { kind: "edits", profileId, params: short }, trials: [{ kind: "builtin", builtin: "wrist-line" }] })
      .expect(400);
    expect(refused.body.error.issues[0].path).toBe("source.params.jointRateCapsRadPerS");
  });
});

/** Reads a server-sent-event stream to its end (or until `stopAfter` says so): [event, data] pairs. */
async function readEvents(res: Response, stopAfter?: (event: string) => boolean): Promise<[string, unknown][]> {
  const out: [string, unknown][] = [];
  const reader = res.body!.getReader();
  const decoder = new TextDecoder();
  let buffer = "";
  for (;;) {
    const { value, done } = await reader.read();
    if (done) return out;
    const taken = takeStreamEvents(buffer + decoder.decode(value, { stream: true }));
    buffer = taken.rest;
    for (const { event, data } of taken.events) {
      out.push([event, data]);
      if (stopAfter?.(event)) {
        await reader.cancel();
        return out;
      }
    }
  }
}

describe("sweeps", () => {
  const sweepBody = (steps: number) => ({
    versionId,
    axes: [{ parameter: "damping.lambdaMaxM", from: 0.005, to: 0.06, steps }],
    builtins: ["wrist-line", "wrist-near-miss-3mm"],
    x: "peakWristAccelRadPerS2",
    y: "maxDeviationM",
  });

  it("streams progress, then the result; no point of the Pareto front is dominated by any point", async () => {
    const net = await listenHarness(cast.h);
    try {
      const res = await fetch(`${net.baseUrl}/api/bench/sweeps`, {
        method: "POST",
        headers: { "Content-Type": "application/json", Cookie: cast.team.engineer.cookie, Origin: net.baseUrl },
        body: JSON.stringify(sweepBody(6)),
      });
      expect(res.headers.get("content-type")).toMatch(/text\/event-stream/);
      const events = await readEvents(res);
      const progress = events.filter(([e]) => e === "progress").map(([, d]) => d as { done: number; total: number });
      expect(progress[0]).toEqual({ done: 0, total: 12 });
      expect(progress[progress.length - 1]).toEqual({ done: 12, total: 12 });
      const [event, data] = events[events.length - 1]!;
      expect(event).toBe("result");
      const result = sweepResultSchema.parse(data);
      expect(result.points).toHaveLength(6);
      expect(result.front.length).toBeGreaterThan(0);
      const xy = result.points.map((p) => ({ x: p.objectives![result.x], y: p.objectives![result.y] }));
      for (const i of result.front) for (const other of xy) expect(dominates(other, xy[i]!)).toBe(false);
      // Every point off the front is dominated by some point on it (the front is complete).
      for (const [i, p] of xy.entries()) if (!result.front.includes(i)) expect(xy.some((q) => dominates(q, p))).toBe(true);
    } finally {
      await net.close();
    }
  });

  it("closing the request cancels the sweep: its queued runs are dropped", async () => {
    const net = await listenHarness(cast.h);
    try {
      const controller = new AbortController();
      const res = await fetch(`${net.baseUrl}/api/bench/sweeps`, {
        method: "POST",
        headers: { "Content-Type": "application/json", Cookie: cast.team.engineer.cookie, Origin: net.baseUrl },
        body: JSON.stringify(sweepBody(100)),
        signal: controller.signal,
      });
      await readEvents(res, (e) => e === "progress");
      expect(trialPoolQueueSize()).toBeGreaterThan(0); // 200 runs for a pool of a few threads
      controller.abort();
      await expect.poll(() => trialPoolQueueSize(), { timeout: 5000, interval: 50 }).toBe(0);
    } finally {
      await net.close();
    }
  });

  it("refuses a sweep that is too large or sweeps one parameter twice, before anything runs", async () => {
    const big = await call(cast.h, "post", "/api/bench/sweeps", cast.team.engineer.cookie)
      .send({ ...sweepBody(100), axes: [{ parameter: "damping.lambdaMaxM", from: 0.005, to: 0.06, steps: 100 }, { parameter: "damping.epsilonM", from: 0.02, to: 0.08, steps: 10 }] })
      .expect(400);
    expect(big.body.error.message).toMatch(/at most 400/);
    const twice = await call(cast.h, "post", "/api/bench/sweeps", cast.team.engineer.cookie)
      .send({ ...sweepBody(3), axes: [{ parameter: "damping.lambdaMaxM", from: 0.005, to: 0.06, steps: 3 }, { parameter: "damping.lambdaMaxM", from: 0.01, to: 0.02, steps: 3 }] })
      .expect(400);
    expect(twice.body.error.issues[0].path).toBe("axes.1.parameter");
  });
});

describe("singularity maps", () => {
  it("σ_min over (q4, q5) vanishes along q5 = 0 (wrist aligned) and nowhere far from it; a longer tool changes the map", async () => {
    const res = await call(cast.h, "post", "/api/bench/maps", cast.team.officer.cookie).send({ kind: "joints", armId: cast.arm.id, resolution: 41 }).expect(200);
    const map = mapResponseSchema.parse(res.body);
    expect([map.xLabel, map.yLabel]).toEqual(["q4", "q5"]);
    const cols = map.xs.length;
    // The row nearest q5 = 0: wrist aligned (Spong, Hutchinson & Vidyasagar, Robot Modeling and Control, 2006, §4.10: a spherical wrist is singular when z3 ∥ z5, i.e. θ5 = 0; from memory).
    const zeroRow = map.ys.reduce((best, y, i) => (Math.abs(y) < Math.abs(map.ys[best]!) ? i : best), 0);
    expect(Math.abs(map.ys[zeroRow]!)).toBeLessThan(1e-9);
    const rowMax = (r: number) => Math.max(...map.values.slice(r * cols, (r + 1) * cols).map((v) => v ?? 0));
    expect(rowMax(zeroRow)).toBeLessThan(1e-9);
    const farRow = map.ys.findIndex((y) => Math.abs(y - Math.PI / 2) < 0.2);
    expect(Math.min(...map.values.slice(farRow * cols, (farRow + 1) * cols).map((v) => v ?? 0))).toBeGreaterThan(1e-3);

    const longer = mapResponseSchema.parse(
      (await call(cast.h, "post", "/api/bench/maps", cast.team.officer.cookie).send({ kind: "joints", armId: cast.arm.id, resolution: 41, toolLengthM: 0.3 }).expect(200)).body,
    );
    expect(longer.toolLengthM).toBe(0.3);
    expect(longer.values).not.toEqual(map.values);
  });

  it("maps a Cartesian slice around the ready pose; refuses two equal joints with the field named", async () => {
    const res = await call(cast.h, "post", "/api/bench/maps", cast.team.engineer.cookie).send({ kind: "cartesian", armId: cast.arm.id, resolution: 21, halfWidthM: 0.1 }).expect(200);
    const map = mapResponseSchema.parse(res.body);
    expect(map.values).toHaveLength(21 * 21);
    expect(map.values.filter((v) => v !== null).length).toBeGreaterThan(200);
    const refused = await call(cast.h, "post", "/api/bench/maps", cast.team.engineer.cookie).send({ kind: "joints", armId: cast.arm.id, xJoint: 3, yJoint: 3 }).expect(400);
    expect(refused.body.error.issues[0].path).toBe("yJoint");
  });
});
