import type { Sequelize } from "sequelize";
import { encodeChunk, type EncodedChunk } from "./chunk-codec.ts";
import { ChunkEncoderThread } from "./encode-thread.ts";
import { FrameLog, type FrameBatch } from "./frame-log.ts";
import { finishRecording, insertChunk } from "./service.ts";

/**
 * Buffered recording writer: the simulation hands over each frame's JSON (a string, built anyway for the
 * socket; queued as bytes outside the JavaScript heap, frame-log.ts says why) and never waits. A flush
 * every ~1 s encodes (chunk-codec.ts: columns, zlib on libuv's thread pool; with `encodeOffThread`, on a
 * thread of its own, encode-thread.ts) and writes one chunk per recording. When the database is slow or
 * down, frames stay queued and go out with a later flush (a failed chunk is retried, kept in order);
 * nothing here throws into the tick path. A recording's end (summary) is written after its last chunk.
 */

export const FLUSH_INTERVAL_MS = 1000;
/**
 * How long a reader waits for a recording's queued frames to be written (settle): the 2 s within which the
 * API answers 503 when the database is away (issue 11, item 5). Common practice, no source.
 */
export const SETTLE_TIMEOUT_MS = 2000;
/**
 * Above this many frames per recording (queued plus being written) the oldest queued ones are dropped, and
 * counted: memory stays bounded. The count goes into the recording's summary (droppedFrames) and the log.
 */
export const MAX_QUEUED_FRAMES = 60 * 600;

interface Pending {
  recordingId: number;
  nextChunk: number;
  /** Frames not yet handed to a chunk write. */
  frames: FrameLog;
  /**
   * The chunk being written (or whose write failed): retried exactly as it was, under the same chunk index,
   * so a retry after a write that did land is idempotent (insertChunk).
   */
  batch: FrameBatch | null;
  /** The batch as encoded for storage (chunk-codec.ts), kept for its retries. */
  encoded: EncodedChunk | null;
  dropped: number;
  end: { endedAt: Date; reason: string; summary: object } | null;
}

export class RecordingWriter {
  private readonly pending = new Map<number, Pending>();
  private timer: NodeJS.Timeout | null = null;
  private flushing: Promise<void> | null = null;
  /** The flush queued behind the running one (shared by every call made meanwhile). */
  private next: Promise<void> | null = null;
  failures = 0;
  chunksWritten = 0;
  /** Frames dropped over all recordings because the database fell behind (each also in its summary). */
  droppedFrames = 0;

  /** Null: chunks are encoded on this thread. */
  private readonly encoder: ChunkEncoderThread | null;

  constructor(
    private readonly db: Sequelize,
    private readonly flushIntervalMs = FLUSH_INTERVAL_MS,
    private readonly maxQueuedFrames = MAX_QUEUED_FRAMES,
    options: { encodeOffThread?: boolean } = {},
  ) {
    this.encoder = options.encodeOffThread ? new ChunkEncoderThread() : null;
  }

  private entry(recordingId: number): Pending {
    let p = this.pending.get(recordingId);
    if (!p) {
      p = { recordingId, nextChunk: 0, frames: new FrameLog(), batch: null, encoded: null, dropped: 0, end: null };
      this.pending.set(recordingId, p);
    }
    this.ensureTimer();
    return p;
  }

  private ensureTimer(): void {
    if (this.timer) return;
    this.timer = setInterval(() => void this.flush(), this.flushIntervalMs);
    this.timer.unref();
  }

  /**
   * Queues one recorded frame: a JSON object's text, or with `bodyStart`/`bodyEnd` the object's body inside
   * a larger text (FrameLog.push). O(1) amortised, never touches the database.
   */
  push(recordingId: number, text: string, bodyStart?: number, bodyEnd?: number): void {
    const p = this.entry(recordingId);
    p.frames.push(text, bodyStart, bodyEnd);
    if (p.frames.length + (p.batch?.count ?? 0) > this.maxQueuedFrames && p.frames.length > 0) {
      p.frames.dropOldest();
      if (p.dropped === 0) console.warn(`[jogwright] recording ${recordingId}: the database is behind; dropping the oldest queued frames (counted in its summary).`);
      p.dropped++;
      this.droppedFrames++;
    }
  }

  /** True while frames or the end of this recording wait to be written. */
  isPending(recordingId: number): boolean {
    return this.pending.has(recordingId);
  }

  /**
   * Marks the recording ended and flushes at once: its last frames and its end are written now, not up to
   * a flush interval later, so a replay opened right after the session sees it whole and ended.
   */
  end(recordingId: number, endedAt: Date, reason: string, summary: object): void {
    this.entry(recordingId).end = { endedAt, reason, summary };
    void this.flush();
  }

  /**
   * Waits until what is queued for this recording now — its frames, and its end once the session ended —
   * is written, at most `timeoutMs` (the database may be away: a reader then gets what is stored). At once
   * when nothing of it is queued. A reader of a recording calls it first (recordings/service.ts
   * settleRecording), so a replay or export opened right after a session ends sees it whole.
   */
  async settle(recordingId: number, timeoutMs = SETTLE_TIMEOUT_MS): Promise<void> {
    if (!this.pending.has(recordingId)) return;
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<void>((resolve) => {
      timer = setTimeout(resolve, timeoutMs);
    });
    try {
      // A flush running now may have taken its batch before the last frames or the end: flush() then
      // queues the next one and returns it (an ended recording drains in one flush).
      await Promise.race([this.flush(), timeout]);
    } finally {
      clearTimeout(timer);
    }
  }

  /**
   * One flush at a time; a call during a flush waits for it and then flushes again, and the calls made
   * during one flush share that next flush (many sessions ending at once do not chain a flush each).
   */
  flush(): Promise<void> {
    if (this.flushing) {
      this.next ??= this.flushing.then(() => {
        this.next = null;
        return this.flush();
      });
      return this.next;
    }
    this.flushing = this.flushOnce().finally(() => {
      this.flushing = null;
    });
    return this.flushing;
  }

  /**
   * Encodes the recording's batch for storage (kept in `encoded` for its retries), then hands the batch's
   * memory back to its FrameLog: its text is not read again, a retry writes `encoded`.
   */
  private async encodeBatch(p: Pending, batch: FrameBatch): Promise<void> {
    p.encoded = await (this.encoder ? this.encoder.encode(batch) : encodeChunk(batch));
    p.frames.recycle(batch);
  }

  private async flushOnce(): Promise<void> {
    const entries = [...this.pending.values()];
    // Every recording's next chunk is encoded first, all at once: on the encoder thread they run back to
    // back, not one round trip per recording between the database writes (50 live sessions: one at a time,
    // a flush took longer than the flush interval and the queues grew). A failed encoding is left for the
    // write loop below, which tries again and counts the failure.
    for (const p of entries) p.batch ??= p.frames.take();
    await Promise.all(
      entries.map(async (p) => {
        if (!p.batch || p.encoded) return;
        try {
          await this.encodeBatch(p, p.batch);
        } catch {
          // retried below
        }
      }),
    );
    for (const p of entries) {
      try {
        while (p.batch || p.frames.length > 0) {
          // A failed batch first, exactly as it was; else everything queued now. Frames pushed during the
          // write queue behind it (and are never removed by it).
          p.batch ??= p.frames.take();
          const batch = p.batch!;
          if (!p.encoded) await this.encodeBatch(p, batch);
          await insertChunk(this.db, p.recordingId, p.nextChunk, batch.count, p.encoded!);
          p.batch = null;
          p.encoded = null;
          p.nextChunk++;
          this.chunksWritten++;
          if (!p.end) break; // one chunk per flush while live; an ended recording drains
        }
        if (p.end && p.frames.length === 0 && !p.batch) {
          const summary = p.dropped > 0 ? { ...p.end.summary, droppedFrames: p.dropped } : p.end.summary;
          await finishRecording(this.db, p.recordingId, p.end.endedAt, p.end.reason, summary);
          this.pending.delete(p.recordingId);
        }
      } catch (error) {
        this.failures++;
        // Logged and kept; the next flush retries. Never thrown into the simulation.
        console.error(`[jogwright] recording ${p.recordingId}: write failed, will retry:`, (error as Error).message);
      }
    }
    if (this.pending.size === 0 && this.timer) {
      clearInterval(this.timer);
      this.timer = null;
    }
  }

  /** Flushes until nothing is pending (or attempts run out); used on shutdown and in tests. */
  async drain(maxAttempts = 5): Promise<void> {
    for (let i = 0; i < maxAttempts && this.pending.size > 0; i++) await this.flush();
  }

  async close(): Promise<void> {
    await this.drain();
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    await this.encoder?.close();
  }
}
