/**
 * One recording's queued frames, kept as UTF-8 bytes in a Buffer (memory outside the JavaScript heap), not
 * as strings: "frame,frame,…", the inside of the JSON array a chunk is encoded from (chunk-codec.ts).
 *
 * Why (issue 11, input-to-state latency): frames wait up to a flush interval (~1 s) for their chunk. As
 * strings they were the main thread's only young objects that lived that long: with 50 live sessions about
 * 6000 frames, ~5 MB, which every young-generation GC copied and then promoted. Those pauses were 8 ms at
 * the median and up to 34 ms (V8's --trace-gc under `pnpm bench`), each one a delay for every input and
 * frame queued behind it. Bytes in a Buffer are not copied by a GC, and a batch crosses to the encoder
 * thread as one memcpy instead of a structured clone of ~90 strings.
 */
export interface FrameBatch {
  /** UTF-8 of the frames' JSON object texts joined by commas (no brackets). */
  text: Uint8Array;
  /** How many frames the text holds. */
  count: number;
}

const INITIAL_BYTES = 16 * 1024;
const INITIAL_FRAMES = 128;

export class FrameLog {
  private bytes: Buffer = Buffer.allocUnsafe(INITIAL_BYTES);
  /** End offset (exclusive) in `bytes` of each frame written since the last take, dropped ones included. */
  private ends = new Uint32Array(INITIAL_FRAMES);
  private used = 0;
  private written = 0;
  /** Frames at the front dropped (dropOldest) since the last take. */
  private dropped = 0;
  /** A taken batch's memory, handed back once encoded (recycle), for the next take. */
  private spare: Buffer | null = null;

  /** Frames queued. */
  get length(): number {
    return this.written - this.dropped;
  }

  /**
   * Appends one frame: `text` whole when it is a JSON object's text, or with `bodyStart`/`bodyEnd` the body
   * of an object (its members, without braces) inside a larger text, which is then written between braces
   * (the state frame carries its recorded body that way, sim-messages.ts FrameText).
   */
  push(text: string, bodyStart?: number, bodyEnd?: number): void {
    const isBody = bodyStart !== undefined;
    const body = isBody ? text.slice(bodyStart, bodyEnd ?? text.length) : text;
    // At most 3 bytes of UTF-8 per UTF-16 code unit, plus a comma and two braces.
    this.reserve(3 * body.length + 3);
    let at = this.used;
    if (this.written > 0) this.bytes[at++] = 0x2c; // ,
    if (isBody) this.bytes[at++] = 0x7b; // {
    at += this.bytes.write(body, at, "utf8");
    if (isBody) this.bytes[at++] = 0x7d; // }
    if (this.written === this.ends.length) {
      const more = new Uint32Array(this.ends.length * 2);
      more.set(this.ends);
      this.ends = more;
    }
    this.ends[this.written++] = at;
    this.used = at;
  }

  /** Drops the oldest queued frame (the writer's cap when the database falls behind). */
  dropOldest(): void {
    if (this.length === 0) return;
    this.dropped++;
    // Frames dropped at the front keep their bytes until compacted: at most as many as are kept, so a
    // recording held back for long (the database away) stays within twice the writer's cap.
    if (this.dropped >= 1024 && 2 * this.dropped >= this.written) this.compact();
  }

  /** Hands over every queued frame (null when there is none) and starts empty. */
  take(): FrameBatch | null {
    if (this.length === 0) return null;
    // The first kept frame starts after the comma that ends the last dropped one.
    const start = this.dropped === 0 ? 0 : this.ends[this.dropped - 1]! + 1;
    const batch = { text: this.bytes.subarray(start, this.used), count: this.length };
    const wanted = Math.max(INITIAL_BYTES, Math.min(this.bytes.length, 2 * this.used));
    this.bytes = this.spare !== null && this.spare.length >= wanted ? this.spare : Buffer.allocUnsafe(wanted);
    this.spare = null;
    this.used = 0;
    this.written = 0;
    this.dropped = 0;
    return batch;
  }

  /**
   * Hands back a batch's memory once nothing reads its text any more (it is encoded). Buffers are memory
   * outside the heap that V8 counts: a new one per recording per flush (50 live sessions: ~7 MB/s) set
   * off a full mark-compact GC every second, 8–12 ms each (--trace-gc); reused, they stop.
   */
  recycle(batch: FrameBatch): void {
    if (this.spare === null && batch.text.buffer.byteLength >= INITIAL_BYTES && batch.text.buffer instanceof ArrayBuffer) {
      this.spare = Buffer.from(batch.text.buffer);
    }
  }

  /** Moves the kept frames to the front, forgetting the dropped ones. */
  private compact(): void {
    // (Every frame dropped: the last one's end is `used`, with no comma after it.)
    const start = Math.min(this.used, this.ends[this.dropped - 1]! + 1);
    this.bytes.copy(this.bytes, 0, start, this.used);
    this.used -= start;
    const kept = this.length;
    for (let i = 0; i < kept; i++) this.ends[i] = this.ends[this.dropped + i]! - start;
    this.written = kept;
    this.dropped = 0;
  }

  private reserve(extra: number): void {
    if (this.used + extra <= this.bytes.length) return;
    const bigger = Buffer.allocUnsafe(Math.max(2 * this.bytes.length, this.used + extra));
    this.bytes.copy(bigger, 0, 0, this.used);
    this.bytes = bigger;
  }
}

/** A batch's frames as one JSON array text. */
export function batchJson(batch: FrameBatch): string {
  return `[${Buffer.from(batch.text.buffer, batch.text.byteOffset, batch.text.byteLength).toString("utf8")}]`;
}
