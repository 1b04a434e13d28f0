import { describe, expect, it, vi } from "vitest";
import { deflateSync, inflateSync } from "node:zlib";
import { demoArms } from "@jogwright/kinematics";
import { defaultProfileParams, recordedFrameSchema, type RecordedFrame } from "@jogwright/shared";
import { JogSimulation } from "../jog/simulation.ts";
import { ChunkFormatError, decodeChunk, decodeChunkSync, encodeChunk } from "./chunk-codec.ts";
import { ChunkEncoderThread } from "./encode-thread.ts";

/**
 * The recording chunk codec (issue 11, item 8) on frames of the real simulation: the six-axis demo arm
 * jogged with keyboard-like, float32 (raw gamepad) and float64 (shaped gamepad) stick values, a joint jog,
 * an emergency stop and its reset, at 500 Hz ticks, 60 frames/s, inputs at 100 Hz. No database needed.
 */
const arm = demoArms.find((a) => a.slug === "cell-arm-6")!;

function session(): string[] {
  const base = defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));
  const params = { ...base, shaping: { ...base.shaping, deadband: 0.05, expo: 0.3 }, guard: { ...base.guard, policy: "damp-through" as const } };
  const sim = new JogSimulation({ arm: arm.model, readyPose: arm.readyPose, params, recordInputs: true });
  const rate = params.tickRateHz;
  const frames: string[] = [];
  let seq = 0;
  const run = (seconds: number, axesAt: (t: number) => number[], enabling: boolean, mode: "cartesian" | "joint" = "cartesian") => {
    for (let k = 0; k < seconds * rate; k++) {
      if (k % (rate / 100) === 0) {
        sim.applyInput({ type: "input", seq: seq++, clientTimeMs: 0, enabling, mode, frame: "world", axes: axesAt(k / rate), overridePercent: 60 });
      }
      sim.tick();
      if (Math.floor(((k + 1) * 60) / rate) !== Math.floor((k * 60) / rate)) frames.push("{" + sim.frameBody() + "}");
    }
  };
  const stick = (x: number) => Math.fround(Math.round(x * 32767) / 32767); // a raw 16-bit axis, as float32
  run(0.1, () => [0, 0, 0, 0, 0, 0], false);
  run(1.5, () => [0, 1, -1, 0, 0, 0], true); // keyboard
  run(1.5, (t) => [stick(0.3 * Math.sin(t)), stick(0.8), stick(-0.6 + 0.1 * Math.sin(3 * t)), 0, 0, stick(0.3 * Math.cos(2 * t))], true);
  run(1, (t) => [0, 0, 0, 0, 0.7 * Math.sin(t + 0.3) + 0.3 * Math.sin(t) ** 3, 0], true, "joint"); // shaped: float64
  sim.emergencyStop();
  run(0.3, () => [0, 0, 0, 0, 0, 0], false);
  sim.resetEstop();
  run(0.3, () => [0.5, 0, 0, 0, 0, 0], true);
  sim.end();
  run(0.1, () => [0, 0, 0, 0, 0, 0], false);
  return frames;
}

const frameTexts = session();

/** Largest |a − b| over the numbers of one field of every frame. */
function worst(original: RecordedFrame[], decoded: RecordedFrame[], pick: (f: RecordedFrame) => number[]): number {
  let w = 0;
  original.forEach((f, i) => pick(f).forEach((v, j) => (w = Math.max(w, Math.abs(v - pick(decoded[i]!)[j]!)))));
  return w;
}

describe("the columns-v1 chunk encoding", () => {
  it("round-trips a chunk of real frames: input events, time, enums, flags and warnings bit for bit, the rest within the stated fixed point", async () => {
    const chunks: string[][] = [];
    for (let i = 0; i < frameTexts.length; i += 60) chunks.push(frameTexts.slice(i, i + 60));
    expect(chunks.length).toBeGreaterThanOrEqual(5); // 4.8 s at 60 frames/s
    for (const chunk of chunks) {
      const encoded = await encodeChunk(chunk);
      expect(encoded.encoding).toBe("columns-v1");
      const original = chunk.map((s) => JSON.parse(s) as RecordedFrame);
      const decoded = (await decodeChunk(encoded.encoding, null, encoded.data)) as RecordedFrame[];
      expect(decoded).toHaveLength(original.length);
      // Exact (toEqual uses Object.is on numbers): everything the bench's replay needs, and every non-float.
      expect(decoded.map((f) => f.inputEvents)).toEqual(original.map((f) => f.inputEvents));
      for (const key of ["t", "overridePercent", "binding", "bindingJoint", "guardState", "enabled", "estopLatched", "stopReason", "warnings"] as const) {
        expect(decoded.map((f) => f[key])).toEqual(original.map((f) => f[key]));
      }
      expect(decoded.map((f) => [f.stopping.kind, f.stopping.isActive])).toEqual(original.map((f) => [f.stopping.kind, f.stopping.isActive]));
      // Every key, in the simulation's order, and a valid recorded frame.
      decoded.forEach((f, i) => expect(Object.keys(f)).toEqual(Object.keys(original[i]!)));
      for (const f of decoded) expect(recordedFrameSchema.safeParse(f).success).toBe(true);
      // Fixed point: within half a step (chunk-codec.ts; a hair more for the double rounding of v·10^d).
      const halfStep = (d: number) => 0.5 * 10 ** -d * (1 + 1e-9);
      expect(worst(original, decoded, (f) => f.q)).toBeLessThanOrEqual(halfStep(10));
      expect(worst(original, decoded, (f) => [f.sigmaMin, f.manipulability, f.lambda])).toBeLessThanOrEqual(halfStep(10));
      expect(worst(original, decoded, (f) => Object.values(f.scales))).toBeLessThanOrEqual(halfStep(8));
      expect(worst(original, decoded, (f) => [...f.pose, ...f.twistCommanded, ...f.twistAchieved])).toBeLessThanOrEqual(halfStep(7));
      expect(worst(original, decoded, (f) => [f.stopping.distanceM, ...Object.values(f.stopPredictions).map((p) => p.distanceM)])).toBeLessThanOrEqual(halfStep(7));
      expect(worst(original, decoded, (f) => f.qdot)).toBeLessThanOrEqual(halfStep(6));
      expect(worst(original, decoded, (f) => [f.stopping.timeS, ...Object.values(f.stopPredictions).map((p) => p.timeS)])).toBeLessThanOrEqual(halfStep(5));
      expect(worst(original, decoded, (f) => f.jointAccelPeak)).toBeLessThanOrEqual(halfStep(3));
      // Values that are exact in the simulation stay exact: a joint at rest is 0, a free cap scale is 1.
      original.forEach((f, i) => {
        f.qdot.forEach((v, j) => v === 0 && expect(decoded[i]!.qdot[j]).toBe(0));
        if (f.scales.jointRate === 1) expect(decoded[i]!.scales.jointRate).toBe(1);
      });
    }
  });

  it("the session carries every kind of stick value the codec distinguishes, and an e-stop", () => {
    const events = frameTexts.flatMap((s) => (JSON.parse(s) as RecordedFrame).inputEvents ?? []);
    const axes = events.filter((e) => e[1] === 1).flatMap((e) => e.slice(7));
    expect(axes.some((v) => v !== 0 && Math.fround(v) === v && Math.round(v * 1e6) / 1e6 !== v)).toBe(true); // float32
    expect(axes.some((v) => Math.fround(v) !== v && Math.round(v * 1e6) / 1e6 !== v)).toBe(true); // float64
    expect(events.some((e) => e[1] === 2)).toBe(true);
  });

  it("is several times smaller than the JSON text, and than the JSON text compressed", async () => {
    let json = 0;
    let compressedJson = 0;
    let columns = 0;
    for (let i = 0; i < frameTexts.length; i += 60) {
      const chunk = frameTexts.slice(i, i + 60);
      const text = `[${chunk.join(",")}]`;
      json += Buffer.byteLength(text);
      compressedJson += deflateSync(text, { level: 9 }).length;
      columns += (await encodeChunk(chunk)).data.length;
    }
    // Measured: JSON ~1 650 B/frame, JSON + zlib ~400, columns-v1 ~85 on this mix (see DEVELOPERS.md).
    expect(columns * 3).toBeLessThan(compressedJson);
    expect(columns * 15).toBeLessThan(json);
  });
});

describe("chunks that are not state frames", () => {
  it("are stored as compressed JSON, exactly: a stand-in frame, an unknown field, a value beyond the fixed point", async () => {
    const frame = JSON.parse(frameTexts[10]!) as Record<string, unknown>;
    const cases = [
      [JSON.stringify({ t: 1 }), JSON.stringify({ t: 2 })],
      [JSON.stringify({ ...frame, somethingNew: [1, 2] })],
      [JSON.stringify({ ...frame, q: [1e9, 0, 0, 0, 0, 0] })],
      [JSON.stringify({ ...frame, binding: "a binding added later" })],
    ];
    for (const texts of cases) {
      const encoded = await encodeChunk(texts);
      expect(encoded.encoding).toBe("json-deflate");
      expect(decodeChunkSync(encoded.encoding, encoded.data)).toEqual(texts.map((s) => JSON.parse(s) as unknown));
    }
  });

  it("a damaged or unknown chunk is refused with ChunkFormatError, not read as wrong frames", async () => {
    const encoded = await encodeChunk(frameTexts.slice(0, 60));
    const raw = inflateSync(encoded.data);
    expect(() => decodeChunkSync("columns-v1", deflateSync(raw.subarray(0, raw.length - 3)))).toThrow(ChunkFormatError);
    expect(() => decodeChunkSync("columns-v1", deflateSync(Buffer.concat([raw, Buffer.from([0])])))).toThrow(ChunkFormatError);
    await expect(decodeChunk("columns-v9", null, encoded.data)).rejects.toThrow(ChunkFormatError);
  });
});

describe("the recording encoder thread (the live writer's, off the main thread)", () => {
  it("stores exactly the bytes the codec makes on the calling thread, as a Buffer", async () => {
    const encoder = new ChunkEncoderThread();
    try {
      for (const texts of [frameTexts.slice(0, 60), frameTexts.slice(60, 200), [JSON.stringify({ t: 1 })]]) {
        const onThread = await encoder.encode(texts);
        const here = await encodeChunk(texts);
        expect(onThread.encoding).toBe(here.encoding);
        expect(Buffer.isBuffer(onThread.data)).toBe(true);
        expect(onThread.data.equals(here.data)).toBe(true);
      }
      expect(encoder.encodedOnThread).toBe(3);
    } finally {
      await encoder.close();
    }
  });

  it("a thread that cannot start costs no chunk: the codec runs on the calling thread instead", async () => {
    const encoder = new ChunkEncoderThread(new URL("./no-such-encoder.mjs", import.meta.url));
    const logged = vi.spyOn(console, "error").mockImplementation(() => {});
    try {
      const texts = frameTexts.slice(0, 60);
      const here = await encodeChunk(texts);
      for (let i = 0; i < 2; i++) {
        const encoded = await encoder.encode(texts);
        expect(encoded.encoding).toBe("columns-v1");
        expect(encoded.data.equals(here.data)).toBe(true);
      }
      expect(encoder.encodedOnThread).toBe(0);
      expect(logged).toHaveBeenCalledTimes(1); // said once, not per chunk
    } finally {
      logged.mockRestore();
      await encoder.close();
    }
  });
});
