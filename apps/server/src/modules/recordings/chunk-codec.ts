import { promisify } from "node:util";
import { deflate, inflate, inflateSync } from "node:zlib";
import { BINDING_LIMITS, GUARD_STATES, STOP_KINDS, STOP_REASONS } from "@jogwright/shared";
import { batchJson, type FrameBatch } from "./frame-log.ts";

/**
 * How a chunk of recorded frames is stored (`jog_recording_chunks.encoding`, migration 0017; issue 11,
 * item 8: recordings grew 44 KB/s per session as JSON text).
 *
 * - `json`: the chunk's frames as a JSON array in `frames` (LONGTEXT). Every chunk written before 0017.
 * - `columns-v1`: the frames as columns in `data` (LONGBLOB), zlib-compressed (RFC 1950, node:zlib's
 *   deflate, level 9). One column per field (every joint and pose element its own), each written for all of
 *   the chunk's frames before the next, so deflate sees like next to like.
 * - `json-deflate`: the JSON array text, zlib-compressed, in `data`: for a chunk whose frames do not have
 *   the state frame's exact shape (a field added later, a test's stand-in frame, a value too large for
 *   its fixed-point column), so nothing is ever lost or reshaped.
 *
 * Precision of `columns-v1` (decoded = round(value · 10^d) / 10^d, i.e. within 0.5 · 10^−d):
 * - exact (bit for bit): `t`, `overridePercent`, every input event (`inputEvents`: the tuning bench's
 *   replay applies them to a fresh simulation, trials/replay.ts), the enums, flags, `bindingJoint`,
 *   `warnings`, the array lengths;
 * - d = 10: q [rad or m] (±5e−11; the replay's check against the recorded positions is 1e−9 rad),
 *   σ_min, manipulability, λ;
 * - d = 8: the four cap scales;
 * - d = 7: pose (rotation elements, and the position in m: ±50 nm), both twists [m/s, rad/s], stop
 *   distances [m];
 * - d = 6: qdot [rad/s or m/s];
 * - d = 5: stop times [s];
 * - d = 3: jointAccelPeak [rad/s² or m/s²].
 * All far below what the console shows (0.01°, 0.1 mm, 0.1 mm/s) and what the tests read back (1e−6 and
 * coarser). Chosen by measurement against the 100 B/frame target (DEVELOPERS.md, "Recording").
 * A value whose fixed-point form would pass ±2^49 (e.g. |q| > 56 000 rad) sends its chunk to json-deflate.
 *
 * Fixed-point columns are predicted linearly from the two frames before, along the frames' times (the
 * first from nothing, the second from the first) and the residual is stored as a zigzag LEB128 varint: a
 * joint moving at constant speed costs about one byte, however unevenly the frames came. An exact column
 * stores per value a tag — the same as the value before in that column, a decimal k/10^6 as a varint
 * delta of k, or a float32 — so integers, decimals and raw gamepad axes (float32 values) stay exact and
 * small; any other double is stored as the bytes of its XOR with the value before that differ (Gorilla's
 * idea: Pelkonen et al., "Gorilla: a fast, scalable, in-memory time series database", VLDB 2015), at most
 * its 8 bytes.
 */

export const CHUNK_ENCODINGS = ["json", "json-deflate", "columns-v1"] as const;
export type ChunkEncoding = (typeof CHUNK_ENCODINGS)[number];

const deflateAsync = promisify(deflate);
const inflateAsync = promisify(inflate);
const ZLIB = { level: 9, memLevel: 9 } as const;

export class ChunkFormatError extends Error {}

// The frame's fields, in the order a state frame carries them (simulation.ts frameBody).

const FRAME_KEYS = [
  "t", "q", "qdot", "pose", "twistCommanded", "twistAchieved", "sigmaMin", "manipulability", "lambda", "scales", "binding",
  "bindingJoint", "guardState", "enabled", "estopLatched", "stopReason", "overridePercent", "warnings", "stopping",
  "stopPredictions", "jointAccelPeak",
] as const;
const SCALE_KEYS = ["jointRate", "tcpLinear", "tcpAngular", "jointLimit"] as const;
const STOPPING_KEYS = ["kind", "isActive", "timeS", "distanceM"] as const;
const ESTIMATE_KEYS = ["timeS", "distanceM"] as const;

/** Fixed-point decimals per field (see the header). */
const D = { q: 10, qdot: 6, pose: 7, twist: 7, sigma: 10, scale: 8, time: 5, distance: 7, accel: 3 } as const;

/**
 * The most a value read back from a `columns-v1` chunk differs from the one recorded, per field (half a
 * fixed-point step). For code that checks recorded frames against bounds (jog.test.ts).
 */
export const RECORDED_PRECISION = {
  q: 0.5 * 10 ** -D.q,
  qdot: 0.5 * 10 ** -D.qdot,
  pose: 0.5 * 10 ** -D.pose,
  twist: 0.5 * 10 ** -D.twist,
  jointAccelPeak: 0.5 * 10 ** -D.accel,
} as const;
/** Largest |fixed-point integer| a column holds: the prediction 2a − b − c then stays a safe integer. */
const MAX_FIXED = 2 ** 49;
const EXACT_DECIMALS = 1e6;

/** A recorded frame as the columns codec expects it (the state frame's recorded body). */
type Frame = Record<string, unknown>;

// Bytes: a growable writer and a reader, LEB128 varints by arithmetic (values beyond 2^31).

class ByteWriter {
  private buf = new Uint8Array(256);
  length = 0;
  private ensure(n: number): void {
    if (this.length + n <= this.buf.length) return;
    let size = this.buf.length * 2;
    while (size < this.length + n) size *= 2;
    const next = new Uint8Array(size);
    next.set(this.buf.subarray(0, this.length));
    this.buf = next;
  }
  byte(b: number): void {
    this.ensure(1);
    this.buf[this.length++] = b;
  }
  /** Unsigned LEB128 of a non-negative safe integer. */
  varint(v: number): void {
    this.ensure(8);
    while (v >= 128) {
      this.buf[this.length++] = (v % 128) | 128;
      v = Math.floor(v / 128);
    }
    this.buf[this.length++] = v;
  }
  signed(v: number): void {
    this.varint(v < 0 ? -2 * v - 1 : 2 * v);
  }
  float32(v: number): void {
    this.ensure(4);
    new DataView(this.buf.buffer).setFloat32(this.length, v, true);
    this.length += 4;
  }
  float64(v: number): void {
    this.ensure(8);
    new DataView(this.buf.buffer).setFloat64(this.length, v, true);
    this.length += 8;
  }
  bytes(b: Uint8Array): void {
    this.ensure(b.length);
    this.buf.set(b, this.length);
    this.length += b.length;
  }
  done(): Uint8Array {
    return this.buf.subarray(0, this.length);
  }
}

class ByteReader {
  private pos = 0;
  private readonly view: DataView;
  constructor(private readonly buf: Uint8Array) {
    this.view = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
  }
  private need(n: number): void {
    if (this.pos + n > this.buf.length) throw new ChunkFormatError("the chunk ends early");
  }
  byte(): number {
    this.need(1);
    return this.buf[this.pos++]!;
  }
  varint(): number {
    let v = 0;
    let scale = 1;
    for (;;) {
      const b = this.byte();
      v += (b & 127) * scale;
      if (b < 128) return v;
      scale *= 128;
      if (scale > 2 ** 56) throw new ChunkFormatError("a varint is too long");
    }
  }
  signed(): number {
    const z = this.varint();
    return z % 2 === 1 ? -(z + 1) / 2 : z / 2;
  }
  float32(): number {
    this.need(4);
    const v = this.view.getFloat32(this.pos, true);
    this.pos += 4;
    return v;
  }
  float64(): number {
    this.need(8);
    const v = this.view.getFloat64(this.pos, true);
    this.pos += 8;
    return v;
  }
  bytes(n: number): Uint8Array {
    this.need(n);
    const b = this.buf.subarray(this.pos, this.pos + n);
    this.pos += n;
    return b;
  }
  get isAtEnd(): boolean {
    return this.pos === this.buf.length;
  }
}

// Column codecs

/** Thrown inside the encoder when a frame does not fit the columns; the chunk then goes to json-deflate. */
class DoesNotFit extends Error {}

/**
 * The linear prediction of frame i from the two before, along the frames' times (frames are not evenly
 * spaced: each is built at the first tick after its deadline, later on a busy machine). `steps[i]` is
 * (t_i − t_{i−1}) / (t_{i−1} − t_{i−2}), 1 where that is not defined; both sides compute it from the exact
 * times, so the rounding is the same.
 */
function predict(i: number, k0: number, k1: number, steps: readonly number[]): number {
  return i === 0 ? 0 : i === 1 ? k1 : k1 + Math.round((k1 - k0) * steps[i]!);
}

function stepRatios(t: readonly number[]): number[] {
  return t.map((ti, i) => {
    if (i < 2) return 1;
    const before = t[i - 1]! - t[i - 2]!;
    const ratio = (ti - t[i - 1]!) / before;
    return before > 0 && Number.isFinite(ratio) && ratio >= 0 && ratio <= 16 ? ratio : 1;
  });
}

/** Fixed point with linear prediction (predict): the residual k − prediction as a zigzag varint. */
function writeFixed(w: ByteWriter, values: readonly number[], decimals: number, steps: readonly number[]): void {
  const scale = 10 ** decimals;
  let k0 = 0;
  let k1 = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    const k = Math.round(v * scale);
    if (!Number.isFinite(v) || Math.abs(k) > MAX_FIXED) throw new DoesNotFit();
    w.signed(k - predict(i, k0, k1, steps));
    k0 = k1;
    k1 = k;
  }
}

function readFixed(r: ByteReader, count: number, decimals: number, steps: readonly number[]): number[] {
  const scale = 10 ** decimals;
  const out = new Array<number>(count);
  let k0 = 0;
  let k1 = 0;
  for (let i = 0; i < count; i++) {
    const k = predict(i, k0, k1, steps) + r.signed();
    // Division by an exact power of ten: 0, 1, 0.5 and every short decimal come back as the same double.
    out[i] = k / scale + 0; // + 0: no −0 (JSON has none either)
    k0 = k1;
    k1 = k;
  }
  return out;
}

const TAG_SAME = 0;
const TAG_DECIMAL = 1;
const TAG_FLOAT32 = 2;
const TAG_FLOAT64 = 3;
/**
 * TAG_XOR + n (n = 1…7): the float64's bits XOR the previous value's, of which only the low n bytes are
 * not zero (a stick value close to the one before shares sign, exponent and the top of the mantissa).
 */
const TAG_XOR = 8;
const bits = new DataView(new ArrayBuffer(16));

/** Bytes of the XOR of the two doubles' bit patterns that are not leading zeros (0 when equal). */
function xorBytes(v: number, previous: number, out: Uint8Array): number {
  bits.setFloat64(0, v, true);
  bits.setFloat64(8, previous, true);
  let n = 0;
  for (let i = 0; i < 8; i++) {
    out[i] = bits.getUint8(i) ^ bits.getUint8(8 + i);
    if (out[i] !== 0) n = i + 1;
  }
  return n;
}
const xorScratch = new Uint8Array(8);

/** One exact number after `previous` (the value before it in its column). */
function writeExact(tags: ByteWriter, w: ByteWriter, v: number, previous: number): void {
  if (typeof v !== "number" || !Number.isFinite(v)) throw new DoesNotFit();
  if (Object.is(v, previous)) return tags.byte(TAG_SAME);
  const k = Math.round(v * EXACT_DECIMALS);
  const kPrevious = Math.round(previous * EXACT_DECIMALS);
  if (Math.abs(k) <= MAX_FIXED && Math.abs(kPrevious) <= MAX_FIXED && k / EXACT_DECIMALS === v && !Object.is(v, -0)) {
    tags.byte(TAG_DECIMAL);
    return w.signed(k - kPrevious);
  }
  if (Math.fround(v) === v) {
    tags.byte(TAG_FLOAT32);
    return w.float32(v);
  }
  const n = xorBytes(v, previous, xorScratch);
  if (n < 8) {
    tags.byte(TAG_XOR + n);
    return w.bytes(xorScratch.subarray(0, n));
  }
  tags.byte(TAG_FLOAT64);
  w.float64(v);
}

function readExact(tags: ByteReader, r: ByteReader, previous: number): number {
  const tag = tags.byte();
  switch (tag) {
    case TAG_SAME:
      return previous;
    case TAG_DECIMAL:
      return (Math.round(previous * EXACT_DECIMALS) + r.signed()) / EXACT_DECIMALS + 0;
    case TAG_FLOAT32:
      return r.float32();
    case TAG_FLOAT64:
      return r.float64();
    default: {
      const n = tag - TAG_XOR;
      if (n < 1 || n > 7) throw new ChunkFormatError(`unknown value tag ${tag}`);
      const low = r.bytes(n);
      bits.setFloat64(8, previous, true);
      for (let i = 0; i < 8; i++) bits.setUint8(i, bits.getUint8(8 + i) ^ (i < n ? low[i]! : 0));
      return bits.getFloat64(0, true);
    }
  }
}

function enumIndex(values: readonly string[], v: unknown): number {
  const i = values.indexOf(v as string);
  if (i < 0) throw new DoesNotFit();
  return i;
}

function numbers(v: unknown, length: number): readonly number[] {
  if (!Array.isArray(v) || v.length !== length) throw new DoesNotFit();
  return v as number[];
}

function hasExactly(o: unknown, keys: readonly string[]): o is Record<string, unknown> {
  if (typeof o !== "object" || o === null || Array.isArray(o)) return false;
  const own = Object.keys(o);
  return own.length === keys.length && keys.every((k) => k in o);
}

// columns-v1

const MAGIC = 0x4a; // "J"
const VERSION = 1;

/** The chunk's frames as columns (uncompressed), or DoesNotFit. */
function writeColumns(frames: readonly Frame[]): Uint8Array {
  const count = frames.length;
  const first = frames[0]!;
  const n = Array.isArray(first.q) ? first.q.length : -1;
  const nAccel = Array.isArray(first.jointAccelPeak) ? first.jointAccelPeak.length : -1;
  if (count === 0 || n < 0 || nAccel < 0) throw new DoesNotFit();
  for (const f of frames) {
    const keys = Object.keys(f);
    const hasEvents = "inputEvents" in f;
    if (keys.length !== FRAME_KEYS.length + (hasEvents ? 1 : 0) || !FRAME_KEYS.every((k) => k in f)) throw new DoesNotFit();
    if (!hasExactly(f.scales, SCALE_KEYS) || !hasExactly(f.stopping, STOPPING_KEYS) || !hasExactly(f.stopPredictions, STOP_KINDS)) throw new DoesNotFit();
    for (const kind of STOP_KINDS) if (!hasExactly((f.stopPredictions as Record<string, unknown>)[kind], ESTIMATE_KEYS)) throw new DoesNotFit();
  }
  const w = new ByteWriter();
  w.byte(MAGIC);
  w.byte(VERSION);
  w.varint(count);
  w.varint(n);
  w.varint(nAccel);

  const column = (pick: (f: Frame) => number) => frames.map(pick);
  const fixedArray = (key: string, length: number, decimals: number) => {
    for (let j = 0; j < length; j++) writeFixed(w, column((f) => numbers(f[key], length)[j]!), decimals, steps);
  };
  const sub = (f: Frame, key: string) => f[key] as Record<string, unknown>;

  // Exact: time and override.
  const exactColumn = (pick: (f: Frame) => unknown) => {
    const tags = new ByteWriter();
    const values = new ByteWriter();
    let previous = 0;
    for (const f of frames) {
      const v = pick(f) as number;
      writeExact(tags, values, v, previous);
      previous = v;
    }
    w.bytes(tags.done());
    w.bytes(values.done());
  };
  exactColumn((f) => f.t);
  exactColumn((f) => f.overridePercent);
  const steps = stepRatios(frames.map((f) => f.t as number));

  fixedArray("q", n, D.q);
  fixedArray("qdot", n, D.qdot);
  fixedArray("pose", 16, D.pose);
  fixedArray("twistCommanded", 6, D.twist);
  fixedArray("twistAchieved", 6, D.twist);
  for (const key of ["sigmaMin", "manipulability", "lambda"]) writeFixed(w, column((f) => f[key] as number), D.sigma, steps);
  for (const key of SCALE_KEYS) writeFixed(w, column((f) => sub(f, "scales")[key] as number), D.scale, steps);
  writeFixed(w, column((f) => sub(f, "stopping").timeS as number), D.time, steps);
  writeFixed(w, column((f) => sub(f, "stopping").distanceM as number), D.distance, steps);
  for (const kind of STOP_KINDS) {
    writeFixed(w, column((f) => (sub(f, "stopPredictions")[kind] as Record<string, number>).timeS!), D.time, steps);
    writeFixed(w, column((f) => (sub(f, "stopPredictions")[kind] as Record<string, number>).distanceM!), D.distance, steps);
  }
  fixedArray("jointAccelPeak", nAccel, D.accel);

  // Small exact integers and enums, one column each.
  for (const f of frames) w.byte(enumIndex(BINDING_LIMITS, f.binding));
  for (const f of frames) {
    if (!Number.isSafeInteger(f.bindingJoint)) throw new DoesNotFit();
    w.signed(f.bindingJoint as number);
  }
  for (const f of frames) w.byte(enumIndex(GUARD_STATES, f.guardState));
  for (const f of frames) w.byte(enumIndex(STOP_REASONS, f.stopReason));
  for (const f of frames) w.byte(enumIndex(STOP_KINDS, sub(f, "stopping").kind));
  for (const f of frames) {
    const flags = [f.enabled, f.estopLatched, sub(f, "stopping").isActive];
    if (!flags.every((b) => typeof b === "boolean")) throw new DoesNotFit();
    w.byte((flags[0] ? 1 : 0) | (flags[1] ? 2 : 0) | (flags[2] ? 4 : 0));
  }

  // Warnings: the chunk's distinct lists, then each frame's index into them.
  const lists: string[] = [];
  const indexOf = new Map<string, number>();
  const listIndex = frames.map((f) => {
    if (!Array.isArray(f.warnings) || !f.warnings.every((s) => typeof s === "string")) throw new DoesNotFit();
    const key = JSON.stringify(f.warnings);
    let i = indexOf.get(key);
    if (i === undefined) {
      i = lists.length;
      indexOf.set(key, i);
      lists.push(key);
    }
    return i;
  });
  w.varint(lists.length);
  for (const key of lists) {
    const text = Buffer.from(key, "utf8");
    w.varint(text.length);
    w.bytes(text);
  }
  for (const i of listIndex) w.varint(i);

  // Input events, exact: per frame presence and count, per event its length, its tick after the previous
  // event's, then each value after the same position of the previous event of the same kind.
  const eventTags = new ByteWriter();
  const eventValues = new ByteWriter();
  const previousOfKind = new Map<number, readonly number[]>();
  let previousTick = 0;
  for (const f of frames) {
    if (!("inputEvents" in f)) {
      w.byte(0);
      continue;
    }
    const events = f.inputEvents;
    if (!Array.isArray(events)) throw new DoesNotFit();
    w.byte(1);
    w.varint(events.length);
    for (const ev of events as unknown[]) {
      if (!Array.isArray(ev) || ev.length < 2) throw new DoesNotFit();
      const e = ev as number[];
      w.varint(e.length);
      writeExact(eventTags, eventValues, e[0]!, previousTick);
      previousTick = e[0]!;
      writeExact(eventTags, eventValues, e[1]!, 0);
      const before = previousOfKind.get(e[1]!);
      for (let i = 2; i < e.length; i++) writeExact(eventTags, eventValues, e[i]!, before?.[i] ?? 0);
      previousOfKind.set(e[1]!, e);
    }
  }
  w.varint(eventTags.length);
  w.bytes(eventTags.done());
  w.bytes(eventValues.done());
  return w.done();
}

function readColumns(raw: Uint8Array): Frame[] {
  const r = new ByteReader(raw);
  if (r.byte() !== MAGIC || r.byte() !== VERSION) throw new ChunkFormatError("not a columns-v1 chunk");
  const count = r.varint();
  const n = r.varint();
  const nAccel = r.varint();
  if (count > 1_000_000 || n > 64 || nAccel > 64) throw new ChunkFormatError("implausible chunk header");

  const exactColumn = () => {
    // Tags first, then values: the tags' length is the frame count.
    const tags = new ByteReader(r.bytes(count));
    const out = new Array<number>(count);
    let previous = 0;
    for (let i = 0; i < count; i++) out[i] = previous = readExact(tags, r, previous);
    return out;
  };
  const t = exactColumn();
  const overridePercent = exactColumn();
  const steps = stepRatios(t);
  const fixedArray = (length: number, decimals: number) => {
    const cols: number[][] = [];
    for (let j = 0; j < length; j++) cols.push(readFixed(r, count, decimals, steps));
    return cols;
  };
  const q = fixedArray(n, D.q);
  const qdot = fixedArray(n, D.qdot);
  const pose = fixedArray(16, D.pose);
  const twistCommanded = fixedArray(6, D.twist);
  const twistAchieved = fixedArray(6, D.twist);
  const [sigmaMin, manipulability, lambda] = fixedArray(3, D.sigma) as [number[], number[], number[]];
  const scales = fixedArray(4, D.scale);
  const stoppingTime = readFixed(r, count, D.time, steps);
  const stoppingDistance = readFixed(r, count, D.distance, steps);
  const predictions = STOP_KINDS.map(() => [readFixed(r, count, D.time, steps), readFixed(r, count, D.distance, steps)] as const);
  const accel = fixedArray(nAccel, D.accel);

  const enumColumn = <T extends string>(values: readonly T[]) =>
    Array.from({ length: count }, () => {
      const v = values[r.byte()];
      if (v === undefined) throw new ChunkFormatError("an enum index is out of range");
      return v;
    });
  const binding = enumColumn(BINDING_LIMITS);
  const bindingJoint = Array.from({ length: count }, () => r.signed());
  const guardState = enumColumn(GUARD_STATES);
  const stopReason = enumColumn(STOP_REASONS);
  const stoppingKind = enumColumn(STOP_KINDS);
  const flags = Array.from({ length: count }, () => r.byte());

  const lists = Array.from({ length: r.varint() }, () => JSON.parse(Buffer.from(r.bytes(r.varint())).toString("utf8")) as string[]);
  const warningIndex = Array.from({ length: count }, () => r.varint());

  const presence: (number[] | null)[] = [];
  for (let i = 0; i < count; i++) {
    if (r.byte() === 0) {
      presence.push(null);
      continue;
    }
    const lengths = Array.from({ length: r.varint() }, () => r.varint());
    presence.push(lengths);
  }
  const tags = new ByteReader(r.bytes(r.varint()));
  const previousOfKind = new Map<number, readonly number[]>();
  let previousTick = 0;
  const events = presence.map((lengths) => {
    if (!lengths) return null;
    return lengths.map((length) => {
      const e = new Array<number>(length);
      e[0] = previousTick = readExact(tags, r, previousTick);
      e[1] = readExact(tags, r, 0);
      const before = previousOfKind.get(e[1]);
      for (let i = 2; i < length; i++) e[i] = readExact(tags, r, before?.[i] ?? 0);
      previousOfKind.set(e[1], e);
      return e;
    });
  });
  if (!r.isAtEnd) throw new ChunkFormatError("the chunk has bytes after its last column");

  const row = (cols: number[][], i: number) => cols.map((c) => c[i]!);
  const frames: Frame[] = [];
  for (let i = 0; i < count; i++) {
    const list = lists[warningIndex[i]!];
    if (!list) throw new ChunkFormatError("a warnings index is out of range");
    const stopPredictions: Record<string, { timeS: number; distanceM: number }> = {};
    STOP_KINDS.forEach((kind, k) => (stopPredictions[kind] = { timeS: predictions[k]![0][i]!, distanceM: predictions[k]![1][i]! }));
    const frame: Frame = {
      t: t[i],
      q: row(q, i),
      qdot: row(qdot, i),
      pose: row(pose, i),
      twistCommanded: row(twistCommanded, i),
      twistAchieved: row(twistAchieved, i),
      sigmaMin: sigmaMin[i],
      manipulability: manipulability[i],
      lambda: lambda[i],
      scales: { jointRate: scales[0]![i], tcpLinear: scales[1]![i], tcpAngular: scales[2]![i], jointLimit: scales[3]![i] },
      binding: binding[i],
      bindingJoint: bindingJoint[i],
      guardState: guardState[i],
      enabled: (flags[i]! & 1) !== 0,
      estopLatched: (flags[i]! & 2) !== 0,
      stopReason: stopReason[i],
      overridePercent: overridePercent[i],
      warnings: [...list],
      stopping: { kind: stoppingKind[i], isActive: (flags[i]! & 4) !== 0, timeS: stoppingTime[i], distanceM: stoppingDistance[i] },
      stopPredictions,
      jointAccelPeak: row(accel, i),
    };
    if (events[i]) frame.inputEvents = events[i];
    frames.push(frame);
  }
  return frames;
}

// The chunk as stored

export interface EncodedChunk {
  encoding: Exclude<ChunkEncoding, "json">;
  data: Buffer;
}

/**
 * The frames (each a recorded frame's JSON object text, or the writer's queued batch of them,
 * frame-log.ts) as stored: columns-v1 when every frame has the state frame's shape, else the JSON array
 * compressed. Compression runs on libuv's thread pool (zlib's async API), not on the event loop.
 */
export async function encodeChunk(frames: readonly string[] | FrameBatch): Promise<EncodedChunk> {
  const json = "text" in frames ? batchJson(frames) : `[${frames.join(",")}]`;
  let columns: Uint8Array | null = null;
  try {
    columns = writeColumns(JSON.parse(json) as Frame[]);
  } catch (error) {
    if (!(error instanceof DoesNotFit) && !(error instanceof SyntaxError) && !(error instanceof TypeError)) throw error;
  }
  if (columns) return { encoding: "columns-v1", data: await deflateAsync(columns, ZLIB) };
  return { encoding: "json-deflate", data: await deflateAsync(Buffer.from(json, "utf8"), ZLIB) };
}

/** The frames of one stored chunk, as plain objects (JSON's shape), whatever its encoding. */
export async function decodeChunk(encoding: string, frames: string | unknown[] | null, data: Buffer | null): Promise<unknown[]> {
  switch (encoding) {
    case "json":
      // The server marks a column whose CHECK is JSON_VALID(column) as JSON, so the driver may hand it back parsed.
      if (frames === null) throw new ChunkFormatError("a json chunk without frames");
      return typeof frames === "string" ? (JSON.parse(frames) as unknown[]) : frames;
    case "json-deflate":
      if (!data) throw new ChunkFormatError("a json-deflate chunk without data");
      return JSON.parse((await inflateAsync(data)).toString("utf8")) as unknown[];
    case "columns-v1":
      if (!data) throw new ChunkFormatError("a columns-v1 chunk without data");
      return readColumns(await inflateAsync(data));
    default:
      throw new ChunkFormatError(`unknown chunk encoding "${encoding}"`);
  }
}

/** decodeChunk without the thread pool (tests and scripts). */
export function decodeChunkSync(encoding: string, data: Buffer): unknown[] {
  if (encoding === "json-deflate") return JSON.parse(inflateSync(data).toString("utf8")) as unknown[];
  if (encoding === "columns-v1") return readColumns(inflateSync(data));
  throw new ChunkFormatError(`unknown chunk encoding "${encoding}"`);
}
