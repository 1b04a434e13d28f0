import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { modelsOf } from "../../db/models.ts";
import { createHarness, type Harness } from "../../test/harness.ts";
import { seededRecordingSubject, type RecordingSubject } from "../../test/recordings-fixture.ts";
import { findRecording, insertRecording, readChunks } from "./service.ts";
import { RecordingWriter } from "./writer.ts";

/**
 * The recording writer against the real MariaDB. A chunk write is held up by a row lock on the recording
 * (the chunk's foreign key needs a shared lock on its parent row), as when the database falls behind, while
 * the simulation keeps pushing frames past the writer's cap.
 */
let h: Harness;
let recordingTarget: RecordingSubject;

beforeAll(async () => {
  h = createHarness();
  // Any seeded version will do as the recording's subject.
  recordingTarget = await seededRecordingSubject(h);
});

afterAll(async () => {
  await h?.close();
});

const frame = (i: number) => JSON.stringify({ t: i });

/** The `t` of every stored frame, chunk by chunk in order (not readFrames: these test frames are not full state frames). */
async function storedTimes(id: number): Promise<number[]> {
  return (await readChunks(h.db, id)).flatMap((frames) => (frames as { t: number }[]).map((f) => f.t));
}

describe("the recording writer", () => {
  it("when the database falls behind past the cap, every frame is either recorded once, in order, or counted as dropped in the summary", async () => {
    const id = await insertRecording(h.db, { sessionId: `writer-test-${Date.now()}`, ...recordingTarget, startedAt: new Date() });
    const cap = 10;
    const writer = new RecordingWriter(h.db, 60_000, cap);
    for (let i = 0; i < 6; i++) writer.push(id, frame(i));

    // Hold the recording row: the chunk insert waits for the lock.
    const blocker = await h.db.transaction();
    await modelsOf(h.db).Recording.findByPk(id, { attributes: ["id"], lock: true, transaction: blocker });
    const flushing = writer.flush();
    await new Promise((r) => setTimeout(r, 200)); // the insert is now waiting on the lock
    for (let i = 6; i < 20; i++) writer.push(id, frame(i));
    await blocker.commit();
    await flushing;

    writer.end(id, new Date(), "stopped", { durationS: 0.04, frames: 20, maxTcpSpeedMPerS: 0, minSigma: 0.1, maxJointRateFraction: 0, stops: {} });
    await writer.close();

    const recorded = await storedTimes(id);
    const summary = (await findRecording(h.db, id))!.summary!;
    // Pushed 20 with at most 10 held: the 6 being written survive, the oldest queued ones go (derived).
    expect(recorded).toEqual([0, 1, 2, 3, 4, 5, 16, 17, 18, 19]);
    expect(summary.droppedFrames).toBe(10);
    expect(recorded.length + summary.droppedFrames).toBe(20);
    expect(writer.droppedFrames).toBe(10);
  });

  it("a recording that never fell behind reports no dropped frames", async () => {
    const id = await insertRecording(h.db, { sessionId: `writer-test-ok-${Date.now()}`, ...recordingTarget, startedAt: new Date() });
    const writer = new RecordingWriter(h.db, 60_000, 10);
    for (let i = 0; i < 8; i++) writer.push(id, frame(i));
    writer.end(id, new Date(), "stopped", { durationS: 0.02, frames: 8, maxTcpSpeedMPerS: 0, minSigma: 0.1, maxJointRateFraction: 0, stops: {} });
    await writer.close();
    expect(await storedTimes(id)).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
    expect((await findRecording(h.db, id))!.summary!.droppedFrames).toBe(0);
  });

  it("an ended recording is written whole at once, not a flush interval later (a replay opened right after sees it ended)", async () => {
    const id = await insertRecording(h.db, { sessionId: `writer-test-end-${Date.now()}`, ...recordingTarget, startedAt: new Date() });
    const writer = new RecordingWriter(h.db, 60_000, 100); // the timer alone would not flush for a minute
    try {
      for (let i = 0; i < 5; i++) writer.push(id, frame(i));
      writer.end(id, new Date(), "stopped", { durationS: 0.01, frames: 5, maxTcpSpeedMPerS: 0, minSigma: 0.1, maxJointRateFraction: 0, stops: {} });
      await vi.waitFor(async () => expect((await findRecording(h.db, id))!.endedAt).not.toBeNull(), { timeout: 5000, interval: 50 });
      expect(await storedTimes(id)).toEqual([0, 1, 2, 3, 4]);
      expect(writer.isPending(id)).toBe(false);
    } finally {
      await writer.close();
    }
  });
});

