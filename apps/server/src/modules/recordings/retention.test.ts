import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { Op } from "sequelize";
import { modelsOf } from "../../db/models.ts";
import { createHarness, type Harness } from "../../test/harness.ts";
import { seededRecordingSubject, type RecordingSubject } from "../../test/recordings-fixture.ts";
import { jogHubFor, forgetJogHub } from "../jog/hub.ts";
import { encodeChunk } from "./chunk-codec.ts";
import { pruneRecordings } from "./retention.ts";
import { finishRecording, insertChunk, insertRecording } from "./service.ts";

/**
 * Recording retention (issue 11, item 8) against the real MariaDB, as the runtime account: by age, by
 * total size oldest first, never a referenced (replayed by a bench run) or live recording, one audit entry
 * per pruned recording. Recordings are made here with known start times and chunk sizes.
 */
let h: Harness;
let subject: RecordingSubject;
const NOW = new Date("2026-12-03T08:00:00Z");
const DAY = 86_400_000;
let made = 0;

beforeAll(async () => {
  h = createHarness();
  subject = await seededRecordingSubject(h);
});

afterAll(async () => {
  await h?.close();
});

/** A recording that started `daysAgo` before NOW with `chunks` chunks of stand-in frames; ended unless `isOpen`. */
async function recording(daysAgo: number, chunks = 1, isOpen = false): Promise<{ id: number; bytes: number }> {
  const startedAt = new Date(NOW.getTime() - daysAgo * DAY);
  const id = await insertRecording(h.db, { sessionId: `retention-${++made}-${Date.now()}`, ...subject, startedAt });
  let bytes = 0;
  for (let c = 0; c < chunks; c++) {
    const encoded = await encodeChunk(Array.from({ length: 60 }, (_, i) => JSON.stringify({ t: c * 60 + i, recording: id })));
    await insertChunk(h.db, id, c, 60, encoded);
    bytes += encoded.data.length;
  }
  if (!isOpen) await finishRecording(h.db, id, new Date(startedAt.getTime() + 60_000), "stopped", { durationS: 60, frames: 60 * chunks, maxTcpSpeedMPerS: 0, minSigma: 0.1, maxJointRateFraction: 0, stops: {} });
  return { id, bytes };
}

/** A bench run that replays the recording (what makes it referenced). */
async function replayRun(recordingId: number): Promise<void> {
  await modelsOf(h.db).TrialRun.create({
    armId: subject.armId, profileId: subject.profileId, versionId: subject.versionId, params: {}, trialKind: "replay", trialId: null,
    recordingId, trialName: "replay", trialDefinition: null, metrics: {}, series: Buffer.from([0]), seriesHash: "0".repeat(64), durationMs: 1,
    createdBy: subject.driverId,
  });
}

async function existing(ids: number[]): Promise<number[]> {
  const rows = await modelsOf(h.db).Recording.findAll({ attributes: ["id"], where: { id: ids }, order: [["id", "ASC"]] });
  return rows.map((r) => r.id);
}

async function chunkCount(id: number): Promise<number> {
  return modelsOf(h.db).RecordingChunk.count({ where: { recordingId: id } });
}

/** Each test starts from no prunable recordings: what an earlier test left is pruned with no limits to speak of. */
beforeEach(async () => {
  await pruneRecordings(h.db, { maxAgeDays: null, maxBytes: 0 }, { now: NOW });
});

describe("recording retention", () => {
  it("by age: every recording that started before the limit goes with its chunks, the newer ones stay", async () => {
    const old = await recording(200, 2);
    const older = await recording(400);
    const recent = await recording(100);
    const today = await recording(0);
    const { pruned } = await pruneRecordings(h.db, { maxAgeDays: 180, maxBytes: null }, { now: NOW });
    expect(pruned.map((p) => [p.id, p.reason])).toEqual([[older.id, "age"], [old.id, "age"]]); // oldest first
    expect(await existing([old.id, older.id, recent.id, today.id])).toEqual([recent.id, today.id]);
    expect(await chunkCount(old.id)).toBe(0);
    expect(await chunkCount(recent.id)).toBe(1);
  });

  it("by size: the oldest unreferenced recordings go until the total fits, the newest stay", async () => {
    const a = await recording(30, 2);
    const b = await recording(20, 2);
    const c = await recording(10, 2);
    const d = await recording(5, 2);
    const before = await pruneRecordings(h.db, { maxAgeDays: null, maxBytes: null }, { now: NOW });
    // Room for the two newest (and whatever referenced ones earlier tests keep), not three.
    const limit = before.totalBytes - a.bytes - b.bytes;
    const { pruned, totalBytes } = await pruneRecordings(h.db, { maxAgeDays: 180, maxBytes: limit }, { now: NOW });
    expect(pruned.map((p) => [p.id, p.reason, p.bytes])).toEqual([[a.id, "size", a.bytes], [b.id, "size", b.bytes]]);
    expect(totalBytes).toBe(limit);
    expect(await existing([a.id, b.id, c.id, d.id])).toEqual([c.id, d.id]);
  });

  it("never prunes a referenced or a live recording, however old or large; a crash's open recording goes by age only", async () => {
    const referenced = await recording(400, 3);
    await replayRun(referenced.id);
    const live = await recording(400, 1, true);
    const orphan = await recording(400, 1, true); // never ended, and not live here: a crash left it
    const recentOpen = await recording(1, 1, true); // never ended, recent: perhaps another server's live session
    const plain = await recording(300);
    const { pruned, totalBytes } = await pruneRecordings(h.db, { maxAgeDays: 30, maxBytes: 1 }, { now: NOW, isLive: (id) => id === live.id });
    expect(pruned.map((p) => p.id).sort()).toEqual([orphan.id, plain.id].sort());
    expect(await existing([referenced.id, live.id, orphan.id, recentOpen.id, plain.id])).toEqual([referenced.id, live.id, recentOpen.id]);
    expect(totalBytes).toBeGreaterThanOrEqual(referenced.bytes + live.bytes + recentOpen.bytes); // still above the limit: said in the log
  });

  it("writes one audit entry per pruned recording, in the pass's transaction: entity recording, action prune, no actor, why", async () => {
    const byAge = await recording(500);
    const bySize = await recording(2);
    const keep = await recording(1);
    const before = await pruneRecordings(h.db, { maxAgeDays: null, maxBytes: null }, { now: NOW });
    // 450 days: the open recording the test before left (400 days) is not pruned here.
    await pruneRecordings(h.db, { maxAgeDays: 450, maxBytes: before.totalBytes - byAge.bytes - bySize.bytes }, { now: NOW });
    const entries = await modelsOf(h.db).AuditEntry.findAll({
      where: { entity: "recording", entityId: { [Op.in]: [byAge.id, bySize.id, keep.id].map(String) } },
      order: [["id", "ASC"]],
    });
    expect(entries.map((e) => [e.entityId, e.action, e.actorId])).toEqual([[String(byAge.id), "prune", null], [String(bySize.id), "prune", null]]);
    expect(entries[0]!.summary).toMatch(new RegExp(`^Recording ${byAge.id} \\(.* pruned by retention: older than 450 days \\(RECORDING_RETENTION_DAYS\\)\\.$`));
    expect(entries[1]!.summary).toMatch(/pruned by retention: recordings took more than .* MB \(RECORDING_RETENTION_MAX_MB\)/);
    expect(entries.every((e) => /^[0-9a-f]{64}$/.test(e.sha256Before ?? ""))).toBe(true);
  });

  it("with both limits off a pass prunes nothing", async () => {
    const old = await recording(10_000);
    expect((await pruneRecordings(h.db, { maxAgeDays: null, maxBytes: null }, { now: NOW })).pruned).toEqual([]);
    expect(await existing([old.id])).toEqual([old.id]);
  });
});

describe("the retention job", () => {
  it("runs a pass when the server's jog hub starts, with the configured limits", async () => {
    const h2 = createHarness({ RECORDING_RETENTION_DAYS: "30" });
    try {
      // Days before the real clock: the job uses it.
      const startedAt = new Date(Date.now() - 40 * DAY);
      const id = await insertRecording(h2.db, { sessionId: `retention-job-${Date.now()}`, ...subject, startedAt });
      await finishRecording(h2.db, id, startedAt, "stopped", { durationS: 0, frames: 0, maxTcpSpeedMPerS: 0, minSigma: 0, maxJointRateFraction: 0, stops: {} });
      const hub = jogHubFor(h2.ctx);
      await hub.retention.runOnce(); // the pass started with the hub (or a fresh one after it)
      expect(hub.retention.passes).toBeGreaterThanOrEqual(1);
      expect(await existing([id])).toEqual([]);
      await hub.close();
      forgetJogHub(h2.ctx);
    } finally {
      await h2.close();
    }
  });
});
