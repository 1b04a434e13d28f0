import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { RecordedFrame } from "@jogwright/shared";
import { call, createHarness, listenHarness, type Harness } from "../../test/harness.ts";
import { smoothStickDraft, type SmoothStickDraft } from "../../test/jog-fixture.ts";
import { JogTestClient, sleep } from "../jog/jog-test-client.ts";
import { replayInputOf, replayInputs, ReplayFormatError } from "./replay.ts";
import { modelsOf } from "../../db/models.ts";
import { pruneRecordings } from "../recordings/retention.ts";
import { runTrials } from "./service.ts";
import { closeTrialPool, runInPool } from "./trial-pool.ts";


/**
 * Replay of real operator input (issue 10): a live session over the real WebSocket, with a stick pushed
 * through the wrist region, a joint jog, an emergency stop and its reset, and a release; its recording
 * replayed offline against the version it was driven with reproduces every recorded joint position within
 * 1e-9 rad (the bound); replayed against another version it differs. Then the same through the API.
 */
let h: Harness;
let net: Awaited<ReturnType<typeof listenHarness>>;
let draft: SmoothStickDraft;
let recordingId: number;
let frames: RecordedFrame[];

const INPUT_PERIOD_MS = 10;

beforeAll(async () => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  net = await listenHarness(h);
  draft = await smoothStickDraft(h, "replay test");

  // A live session: hold +y −z (toward the wrist region), a joint jog of joint 5, STOP, reset, a last push, release.
  const c = await JogTestClient.connect(net.wsUrl, { Cookie: draft.engineer.cookie, Origin: net.baseUrl });
  c.send({ type: "start", versionId: draft.versionId });
  await c.next((m) => m.type === "session");
  const hold = async (axes: number[], mode: "cartesian" | "joint", ms: number) => {
    c.input = { ...c.input, enabling: false, mode, axes: axes.map(() => 0) };
    c.sendInput();
    await sleep(20);
    c.input = { ...c.input, enabling: true, mode, axes };
    c.stream(INPUT_PERIOD_MS);
    await sleep(ms);
    c.stopStream();
  };
  await hold([0, 0.8, -0.7, 0, 0, 0.3], "cartesian", 600);
  await hold([0, 0, 0, 0, -0.5, 0], "joint", 300);
  c.send({ type: "estop" });
  await c.nextState((s) => s.estopLatched, 2000);
  c.send({ type: "reset-estop" });
  await c.nextState((s) => !s.estopLatched, 2000);
  await hold([0.5, 0, 0, 0, 0, 0], "cartesian", 300);
  c.input = { ...c.input, enabling: false, axes: [0, 0, 0, 0, 0, 0] };
  c.sendInput();
  await c.nextState((s) => s.qdot.every((v) => v === 0), 3000);
  c.send({ type: "stop" });
  const ended = await c.next((m) => m.type === "ended");
  recordingId = ended.type === "ended" ? ended.recordingId! : 0;
  await c.close();
  await net.jog.hub.writer.drain();
  frames = (await call(h, "get", `/api/recordings/${recordingId}`, draft.engineer.cookie).expect(200)).body.frames as RecordedFrame[];
}, 30_000);

afterAll(async () => {
  await closeTrialPool();
  await net?.close();
  await h?.close();
});

/** Largest |q_replay − q_recorded| over every recorded frame [rad]; the frame's tick from its time. */
function worstDifference(series: ReturnType<typeof replayInputs>, recorded: RecordedFrame[]): number {
  let worst = 0;
  for (const f of recorded) {
    const k = Math.round(f.t * draft.params.tickRateHz);
    if (k >= series.count) continue;
    for (let i = 0; i < series.n; i++) worst = Math.max(worst, Math.abs(series.q[k * series.n + i]! - f.q[i]!));
  }
  return worst;
}

describe("replay of a live session's input", () => {
  it("the recording carries the operator's input events, the start first", () => {
    const input = replayInputOf(frames, draft.params.tickRateHz);
    expect(input.events[0]!.slice(0, 3)).toEqual([0, 0, 0]);
    expect(input.events.filter((e) => e[1] === 1).length).toBeGreaterThan(50);
    expect(input.events.some((e) => e[1] === 2)).toBe(true); // the e-stop
    expect(input.events.some((e) => e[1] === 3)).toBe(true); // its reset
    expect(input.recordedTicks).toBeGreaterThan(draft.params.tickRateHz); // over a second of driving
  });

  it("against the version it was driven with, reproduces every recorded joint position within 1e-9 rad", () => {
    const input = replayInputOf(frames, draft.params.tickRateHz);
    const series = replayInputs(draft.arm.model, draft.arm.readyPose, draft.params, input);
    const moved = frames.some((f) => f.q.some((q, i) => Math.abs(q - frames[0]!.q[i]!) > 0.01));
    expect(moved).toBe(true); // the session really moved the arm (more than 0.01 rad on some joint)
    // The bound. The simulation is deterministic, so the replay is in fact exact.
    expect(worstDifference(series, frames)).toBeLessThanOrEqual(1e-9);
  });

  it("against another version (a lower TCP cap) it takes another path", () => {
    const input = replayInputOf(frames, draft.params.tickRateHz);
    const slower = { ...draft.params, tcpLinearCapMPerS: draft.params.tcpLinearCapMPerS / 2 };
    expect(worstDifference(replayInputs(draft.arm.model, draft.arm.readyPose, slower, input), frames)).toBeGreaterThan(1e-3);
  });

  it("refuses a recording without input events with a sentence", () => {
    const stripped = frames.map(({ inputEvents: _dropped, ...f }) => f);
    expect(() => replayInputOf(stripped, draft.params.tickRateHz)).toThrow(ReplayFormatError);
    expect(() => replayInputOf(stripped, draft.params.tickRateHz)).toThrow(/no operator input to replay/);
  });

  it("through the API: a replay run of the recording with its own version, stored as a run of kind replay", async () => {
    const res = await call(h, "post", "/api/bench/runs", draft.engineer.cookie)
      .send({ source: { kind: "version", versionId: draft.versionId }, trials: [{ kind: "replay", recordingId }] })
      .expect(201);
    expect(res.body.runs[0]).toMatchObject({ trialKind: "replay", recordingId, versionId: draft.versionId, profileId: draft.profileId });
    expect(res.body.runs[0].trialName).toMatch(/^Replay of /);
  });

  it("a recording pruned by retention while its replay is computed: 409 in words, no run stored, the prune audited", async () => {
    // A second, short session, referenced by nothing (the one above is referenced by its stored run).
    const c = await JogTestClient.connect(net.wsUrl, { Cookie: draft.engineer.cookie, Origin: net.baseUrl });
    c.send({ type: "start", versionId: draft.versionId });
    await c.next((m) => m.type === "session");
    c.input = { ...c.input, enabling: false, mode: "cartesian", axes: [0, 0, 0, 0, 0, 0] };
    c.sendInput(); // released first: the enabling control must be pressed anew
    await sleep(20);
    c.input = { ...c.input, enabling: true, axes: [0.5, 0, 0, 0, 0, 0] };
    c.stream(INPUT_PERIOD_MS);
    await c.nextState((s) => s.qdot.some((v) => v !== 0), 3000);
    c.stopStream();
    c.send({ type: "stop" });
    const ended = await c.next((m) => m.type === "ended");
    const shortId = ended.type === "ended" ? ended.recordingId! : 0;
    await c.close();
    await net.jog.hub.writer.drain();

    const { TrialRun, AuditEntry } = modelsOf(h.db);
    const runsBefore = await TrialRun.count();
    // Retention as a pass ten days from now with a 1-day age limit (every unreferenced recording goes),
    // once the trials are resolved (the replay's frames read) and before their runs are computed.
    let prunedIds: number[] = [];
    const pruneFirst: typeof runInPool = async (job, signal) => {
      if (prunedIds.length === 0) {
        prunedIds = [-1];
        prunedIds = (await pruneRecordings(h.db, { maxAgeDays: 1, maxBytes: null }, { now: new Date(Date.now() + 10 * 86_400_000) })).pruned.map((p) => p.id);
      }
      return runInPool(job, signal);
    };
    const request = { source: { kind: "version" as const, versionId: draft.versionId }, trials: [{ kind: "builtin" as const, builtin: "wrist-line" as const }, { kind: "replay" as const, recordingId: shortId }] };
    await expect(runTrials(h.db, draft.engineer.user, request, undefined, pruneFirst)).rejects.toMatchObject({
      status: 409,
      code: "conflict",
      message: `Recording ${shortId} was removed by the recording retention setting while the runs were computed, so nothing was stored. Run the trials again without it.`,
    });
    expect(prunedIds).toContain(shortId);
    expect(prunedIds).not.toContain(recordingId); // referenced by the run stored above
    expect(await TrialRun.count()).toBe(runsBefore);
    expect(await AuditEntry.count({ where: { entity: "recording", entityId: String(shortId), action: "prune" } })).toBe(1);
  });
});
