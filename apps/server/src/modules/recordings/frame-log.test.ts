import { describe, expect, it } from "vitest";
import { decodeChunkSync, encodeChunk } from "./chunk-codec.ts";
import { batchJson, FrameLog } from "./frame-log.ts";

/** The frames of a batch, parsed (the writer's chunk is exactly this JSON array). */
function framesOf(log: FrameLog): unknown[] {
  const batch = log.take();
  return batch === null ? [] : (JSON.parse(batchJson(batch)) as unknown[]);
}

describe("a recording's frame log (frames as bytes outside the heap)", () => {
  it("keeps whole frames and frame bodies cut out of a larger text, in order, with non-ASCII text intact", () => {
    const log = new FrameLog();
    log.push(JSON.stringify({ t: 0, warnings: [] }));
    // As the hub hands a state frame over: the recorded body lies inside the sent text.
    const sent = `{"type":"state","sessionId":"s1","t":1,"warnings":["Joint 3 is close to its limit — 0.5°"],"lastInputSeq":7}`;
    const bodyStart = sent.indexOf('"t":');
    const bodyEnd = sent.indexOf(',"lastInputSeq"');
    log.push(sent, bodyStart, bodyEnd);
    expect(log.length).toBe(2);
    expect(framesOf(log)).toEqual([{ t: 0, warnings: [] }, { t: 1, warnings: ["Joint 3 is close to its limit — 0.5°"] }]);
    expect(log.length).toBe(0);
    expect(log.take()).toBeNull();
  });

  it("grows past its first buffer without losing a byte", () => {
    const log = new FrameLog();
    const big = "x".repeat(5000);
    for (let t = 0; t < 40; t++) log.push(JSON.stringify({ t, big }));
    const frames = framesOf(log) as { t: number; big: string }[];
    expect(frames.map((f) => f.t)).toEqual(Array.from({ length: 40 }, (_, t) => t));
    expect(frames.every((f) => f.big === big)).toBe(true);
  });

  it("drops the oldest frames on request, across compactions, and a batch holds exactly the frames kept", () => {
    const log = new FrameLog();
    for (let t = 0; t < 5000; t++) {
      log.push(JSON.stringify({ t }));
      if (log.length > 300) log.dropOldest(); // the writer's cap: compaction runs every ~300 drops here
    }
    expect(log.length).toBe(300);
    const batch = log.take()!;
    expect(batch.count).toBe(300);
    expect((JSON.parse(batchJson(batch)) as { t: number }[]).map((f) => f.t)).toEqual(Array.from({ length: 300 }, (_, i) => 4700 + i));
  });

  it("dropping every frame leaves an empty log that takes new frames", () => {
    const log = new FrameLog();
    for (let t = 0; t < 1500; t++) log.push(JSON.stringify({ t }));
    for (let i = 0; i < 1500; i++) log.dropOldest();
    expect(log.length).toBe(0);
    expect(log.take()).toBeNull();
    log.push(JSON.stringify({ t: 9 }));
    expect(framesOf(log)).toEqual([{ t: 9 }]);
  });

  it("reuses a batch's memory once it is handed back, and the next batch is whole", () => {
    const log = new FrameLog();
    for (let t = 0; t < 100; t++) log.push(JSON.stringify({ t }));
    const first = log.take()!;
    const firstMemory = first.text.buffer;
    expect((JSON.parse(batchJson(first)) as unknown[]).length).toBe(100);
    log.recycle(first);
    for (let t = 100; t < 150; t++) log.push(JSON.stringify({ t }));
    log.take(); // the buffer written since the first take; the recycled one is used from here
    for (let t = 150; t < 160; t++) log.push(JSON.stringify({ t }));
    const third = log.take()!;
    expect(third.text.buffer).toBe(firstMemory);
    expect((JSON.parse(batchJson(third)) as { t: number }[]).map((f) => f.t)).toEqual(Array.from({ length: 10 }, (_, i) => 150 + i));
  });

  it("a batch encodes to the same stored chunk as the same frames as strings", async () => {
    const texts = Array.from({ length: 30 }, (_, t) => JSON.stringify({ t, note: `frame ${t}` }));
    const log = new FrameLog();
    for (const text of texts) log.push(text);
    const fromBatch = await encodeChunk(log.take()!);
    const fromStrings = await encodeChunk(texts);
    expect(fromBatch.encoding).toBe(fromStrings.encoding);
    expect(decodeChunkSync(fromBatch.encoding, fromBatch.data)).toEqual(texts.map((t) => JSON.parse(t)));
  });
});
