import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Op, QueryTypes } from "sequelize";
import { defaultProfileParams, type RecordedFrame } from "@jogwright/shared";
import * as m0017 from "../../db/migrations/0017-recording-storage.ts";
import { modelsOf } from "../../db/models.ts";
import { createOwnerDb } from "../../test/owner-db.ts";
import { call, createHarness, listenHarness, type Harness } from "../../test/harness.ts";
import { smoothStickDraft, type SmoothStickDraft } from "../../test/jog-fixture.ts";
import { JogSimulation } from "../jog/simulation.ts";
import { JogTestClient, sleep } from "../jog/jog-test-client.ts";
import { encodeChunk } from "./chunk-codec.ts";
import { insertChunk, insertRecording } from "./service.ts";

/**
 * How recordings are stored (issue 11, item 8), against the real MariaDB and the real jog socket:
 * - the measure: a session of the six-axis demo arm, jogged for several seconds through the live path,
 *   takes at most 100 bytes per frame as stored (the target; the JSON chunks before took ~1 700);
 * - chunks written before migration 0017 (JSON text in `frames`) still read, alone and next to new ones;
 * - the schema keeps each encoding's payload in its own column.
 */
let h: Harness;
let net: Awaited<ReturnType<typeof listenHarness>>;
let draft: SmoothStickDraft;

beforeAll(async () => {
  h = createHarness();
  net = await listenHarness(h);
  draft = await smoothStickDraft(h, "storage test");
});

afterAll(async () => {
  await net?.close();
  await h?.close();
});

/** The stored chunks of a recording: encodings, bytes as stored, frames. */
async function storedChunks(recordingId: number) {
  return h.db.query<{ encoding: string; bytes: number; stored_bytes: number; frame_count: number; has_frames: number }>(
    `SELECT encoding, COALESCE(OCTET_LENGTH(data), OCTET_LENGTH(frames)) AS bytes, stored_bytes, frame_count, frames IS NOT NULL AS has_frames
       FROM jog_recording_chunks WHERE recording_id = ? ORDER BY chunk_index`,
    { replacements: [recordingId], type: QueryTypes.SELECT },
  );
}

describe("recording storage, measured", () => {
  it("a session of several seconds of jogging the six-axis arm is stored in at most 100 bytes per frame", async () => {
    const c = await JogTestClient.connect(net.wsUrl, { Cookie: draft.engineer.cookie, Origin: net.baseUrl });
    try {
      await driveAndMeasure(c);
    } finally {
      c.stopStream();
      await c.close(); // a session cut short ends here, so its frames stop coming for the tests after
    }
  }, 60_000);
});

/** The measured session (the waits are generous: the machine may be busy; nothing here is timed). */
async function driveAndMeasure(c: JogTestClient): Promise<void> {
  c.send({ type: "start", versionId: draft.versionId });
  await c.next((m) => m.type === "session", 10_000);
  const release = async () => {
    c.stopStream();
    c.input = { ...c.input, enabling: false, axes: c.input.axes.map(() => 0) };
    c.sendInput();
    await sleep(20);
  };
  // As the drive page sends: every 16 ms while held.
  const hold = async (mode: "cartesian" | "joint", ms: number, axesAt: (t: number) => number[]) => {
    await release();
    const t0 = Date.now();
    c.input = { ...c.input, enabling: true, mode, axes: axesAt(0) };
    c.stream(16);
    while (Date.now() - t0 < ms) {
      await sleep(16);
      c.input = { ...c.input, axes: axesAt((Date.now() - t0) / 1000) };
    }
  };
  // Keys held (exact ±1), a gamepad (device deadband and expo applied in the browser: any double, changing
  // at every input), a joint jog, an emergency stop and its reset.
  const shaped = (x: number) => 0.7 * x + 0.3 * x * x * x;
  await hold("cartesian", 1500, () => [0, 1, -1, 0, 0, 0]);
  await hold("cartesian", 2500, (t) => [shaped(0.3 * Math.sin(2 * t)), shaped(0.7), shaped(-0.5 + 0.2 * Math.sin(3 * t)), 0, 0, shaped(0.4 * Math.cos(2 * t))]);
  await hold("joint", 1000, (t) => [0, 0, 0, shaped(0.5 * Math.sin(t)), shaped(-0.6), 0]);
  await release();
  c.send({ type: "estop" });
  await c.nextState((s) => s.estopLatched, 10_000);
  c.send({ type: "reset-estop" });
  await c.nextState((s) => !s.estopLatched, 10_000);
  await hold("cartesian", 800, () => [-1, 0, 0, 0, 0, 1]);
  await release();
  await c.nextState((s) => s.qdot.every((v) => v === 0), 10_000);
  c.send({ type: "stop" });
  const ended = await c.next((m) => m.type === "ended", 10_000);
  const recordingId = ended.type === "ended" ? ended.recordingId! : 0;
  await net.jog.hub.writer.drain();

  const chunks = await storedChunks(recordingId);
  const frames = (await call(h, "get", `/api/recordings/${recordingId}`, draft.engineer.cookie).expect(200)).body.frames as RecordedFrame[];
  const frameCount = chunks.reduce((s, ch) => s + ch.frame_count, 0);
  const storedBytes = chunks.reduce((s, ch) => s + Number(ch.bytes), 0);
  // What a frame took as the JSON chunks before: the recorded body of the state frames this client got.
  const sent = c.messages.map((m) => m.msg).filter((m) => m.type === "state");
  const jsonBytesPerFrame =
    sent.reduce((s, { type: _t, sessionId: _s, lastInputSeq: _l, lastInputClientTimeMs: _c, ...body }) => s + Buffer.byteLength(JSON.stringify(body)) + 1, 0) /
    sent.length;
  const bytesPerFrame = storedBytes / frameCount;
  console.log(
    `[recording storage] ${frameCount} frames (${(frames.at(-1)!.t).toFixed(1)} s) in ${chunks.length} chunks: ` +
      `${bytesPerFrame.toFixed(1)} B/frame stored (${((bytesPerFrame * 60) / 1024).toFixed(1)} KB/s at 60 frames/s); as JSON ${jsonBytesPerFrame.toFixed(0)} B/frame`,
  );
  expect(frames.length).toBe(frameCount);
  expect(frames.at(-1)!.t).toBeGreaterThan(5); // several seconds of driving
  expect(frames.some((f) => f.q.some((q, i) => Math.abs(q - frames[0]!.q[i]!) > 0.05))).toBe(true); // it really moved
  expect(chunks.every((ch) => ch.encoding === "columns-v1" && !ch.has_frames && ch.stored_bytes === Number(ch.bytes))).toBe(true);
  expect(bytesPerFrame).toBeLessThanOrEqual(100); // the target
}

describe("a recording read right after its session ends", () => {
  it("is whole and ended: the replay and the CSV export have every frame, though the last chunk was still being written", async () => {
    const c = await JogTestClient.connect(net.wsUrl, { Cookie: draft.engineer.cookie, Origin: net.baseUrl });
    try {
      c.send({ type: "start", versionId: draft.versionId });
      await c.next((m) => m.type === "session", 10_000);
      // The gate arms on a released enabling control first (PRODUCT.md step 2), as a console does.
      c.input = { ...c.input, enabling: false, axes: c.input.axes.map(() => 0) };
      c.sendInput();
      await sleep(20);
      c.input = { ...c.input, enabling: true, mode: "cartesian", axes: [0, 1, 0, 0, 0, 0] };
      c.stream(16);
      await c.nextState((s) => s.qdot.some((v) => v !== 0), 10_000);
      await sleep(300);
      c.stopStream();
      c.send({ type: "stop" });
      const ended = await c.next((m) => m.type === "ended", 10_000);
      const recordingId = ended.type === "ended" ? ended.recordingId! : 0;
      // No drain: read at once, as the drive page's "Open its recording" and a download do.
      const [read, csv] = await Promise.all([
        call(h, "get", `/api/recordings/${recordingId}`, draft.engineer.cookie).expect(200),
        call(h, "get", `/api/recordings/${recordingId}/export.csv`, draft.engineer.cookie).expect(200),
      ]);
      const frames = read.body.frames as RecordedFrame[];
      expect(read.body.recording.endedAt).not.toBeNull();
      expect(frames.length).toBeGreaterThan(10); // ~0.3 s and more at 60 frames/s
      const rows = csv.text.trim().split(/\r?\n/);
      expect(rows.length - 1).toBe(frames.length); // the header, then one row a frame
      const chunkFrames = (await storedChunks(recordingId)).reduce((s, ch) => s + ch.frame_count, 0);
      expect(chunkFrames).toBe(frames.length);
    } finally {
      c.stopStream();
      await c.close();
    }
  }, 60_000);
});

describe("chunks written before migration 0017", () => {
  /** Real frames of the simulation, as the writer queues them. */
  function frameTexts(count: number): string[] {
    const base = defaultProfileParams(draft.arm.model.joints.map((j) => j.maxSpeed!));
    const sim = new JogSimulation({ arm: draft.arm.model, readyPose: draft.arm.readyPose, params: base, recordInputs: true });
    const out: string[] = [];
    sim.applyInput({ type: "input", seq: 0, clientTimeMs: 0, enabling: false, mode: "cartesian", frame: "world", axes: [0, 0, 0, 0, 0, 0], overridePercent: 40 });
    for (let k = 0; out.length < count; k++) {
      if (k % 5 === 0) sim.applyInput({ type: "input", seq: k + 1, clientTimeMs: 0, enabling: true, mode: "cartesian", frame: "world", axes: [0, 0.5, 0, 0, 0, 0.25], overridePercent: 40 });
      sim.tick();
      if (k % 8 === 7) out.push("{" + sim.frameBody() + "}");
    }
    return out;
  }

  it("still read: a recording of JSON chunks, and one whose first chunk is JSON and the next compact", async () => {
    const texts = frameTexts(120);
    const old = texts.slice(0, 60);
    const subject = { driverId: draft.engineer.user.id, armId: draft.arm.id, profileId: draft.profileId, versionId: draft.versionId };
    const legacyId = await insertRecording(h.db, { sessionId: `legacy-${Date.now()}`, ...subject, startedAt: new Date() });
    const mixedId = await insertRecording(h.db, { sessionId: `mixed-${Date.now()}`, ...subject, startedAt: new Date() });
    // As the writer wrote them before 0017: the JSON array text in `frames`, no encoding given (the column's default).
    const { RecordingChunk } = modelsOf(h.db);
    const json = `[${old.join(",")}]`;
    await RecordingChunk.create({ recordingId: legacyId, chunkIndex: 0, frameCount: 60, frames: json, storedBytes: Buffer.byteLength(json) });
    await RecordingChunk.create({ recordingId: mixedId, chunkIndex: 0, frameCount: 60, frames: json, storedBytes: Buffer.byteLength(json) });
    await insertChunk(h.db, mixedId, 1, 60, await encodeChunk(texts.slice(60)));
    expect((await storedChunks(mixedId)).map((ch) => ch.encoding)).toEqual(["json", "columns-v1"]);

    const legacy = (await call(h, "get", `/api/recordings/${legacyId}`, draft.engineer.cookie).expect(200)).body.frames as RecordedFrame[];
    expect(legacy).toEqual(old.map((s) => JSON.parse(s) as unknown)); // exactly as recorded
    const mixed = (await call(h, "get", `/api/recordings/${mixedId}`, draft.engineer.cookie).expect(200)).body.frames as RecordedFrame[];
    expect(mixed.map((f) => f.t)).toEqual(texts.map((s) => (JSON.parse(s) as RecordedFrame).t)); // in order, times exact
    expect(mixed.slice(0, 60)).toEqual(legacy);
    mixed.slice(60).forEach((f, i) => {
      const original = JSON.parse(texts[60 + i]!) as RecordedFrame;
      expect(f.inputEvents).toEqual(original.inputEvents);
      f.q.forEach((q, j) => expect(Math.abs(q - original.q[j]!)).toBeLessThanOrEqual(5e-11 * (1 + 1e-9)));
    });
  });

  it("migration 0017 keeps a database's earlier recordings: their chunks become `json` with their size, and read as before", async () => {
    // Back to the schema before 0017 (as the migration account), a chunk written the old way, then 0017 again.
    // 0017's own down and up (not the migrator's: later migrations stay as they are).
    const owner = createOwnerDb();
    const migration = { name: "0017-recording-storage", context: owner, path: undefined };
    let isDown = false;
    try {
      // 0017 refuses to go back over compact chunks (their frames would be lost): this file's earlier ones go.
      await net.jog.hub.writer.drain();
      await owner.getQueryInterface().bulkDelete("jog_recording_chunks", { encoding: { [Op.ne]: "json" } });
      await m0017.down(migration);
      isDown = true;
      const texts = frameTexts(60);
      const json = `[${texts.join(",")}]`;
      const id = await insertRecording(owner, { sessionId: `pre-0017-${Date.now()}`, driverId: draft.engineer.user.id, armId: draft.arm.id, profileId: draft.profileId, versionId: draft.versionId, startedAt: new Date() });
      await owner.getQueryInterface().bulkInsert("jog_recording_chunks", [{ recording_id: id, chunk_index: 0, frame_count: 60, frames: json }]);
      await m0017.up(migration);
      isDown = false;

      expect(await storedChunks(id)).toEqual([{ encoding: "json", bytes: Buffer.byteLength(json), stored_bytes: Buffer.byteLength(json), frame_count: 60, has_frames: 1 }]);
      const read = (await call(h, "get", `/api/recordings/${id}`, draft.engineer.cookie).expect(200)).body.frames as RecordedFrame[];
      expect(read).toEqual(texts.map((t) => JSON.parse(t) as unknown));
    } finally {
      if (isDown) await m0017.up(migration); // the file's later tests get the full schema
      await owner.close();
    }
  });

  it("the schema keeps each payload in its column: a json chunk has frames and no data, a compact one data and no frames", async () => {
    const id = await insertRecording(h.db, { sessionId: `check-${Date.now()}`, driverId: draft.engineer.user.id, armId: draft.arm.id, profileId: draft.profileId, versionId: draft.versionId, startedAt: new Date() });
    const { RecordingChunk } = modelsOf(h.db);
    const compact = await encodeChunk(frameTexts(3));
    await expect(RecordingChunk.create({ recordingId: id, chunkIndex: 0, frameCount: 3, storedBytes: 1 })).rejects.toThrow(/jog_recording_chunks_payload/);
    await expect(
      RecordingChunk.create({ recordingId: id, chunkIndex: 0, frameCount: 3, encoding: "columns-v1", frames: "[]", data: compact.data, storedBytes: 1 }),
    ).rejects.toThrow(/jog_recording_chunks_payload/);
    await expect(RecordingChunk.create({ recordingId: id, chunkIndex: 0, frameCount: 3, encoding: "columns-v1", storedBytes: 1 })).rejects.toThrow(
      /jog_recording_chunks_payload/,
    );
    await expect(RecordingChunk.create({ recordingId: id, chunkIndex: 0, frameCount: 1, frames: "not json", storedBytes: 1 })).rejects.toThrow();
  });
});
