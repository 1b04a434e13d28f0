import { fn, col, Op, type Sequelize } from "sequelize";
import type { Recording } from "@jogwright/shared";
import type { RecordingRetention } from "../../config.ts";
import { modelsOf } from "../../db/models.ts";
import { recordAudit } from "../audit/service.ts";

/**
 * Recording retention (issue 11, item 8): RECORDING_RETENTION_DAYS and RECORDING_RETENTION_MAX_MB.
 *
 * A pass deletes, oldest first (start time, then id), the recordings that are neither referenced nor live
 * until both limits hold: every one that started before the age limit, then more while all recordings'
 * chunks together take more than the size limit. A recording is
 * - **referenced** when a tuning-bench run replays it (`trial_runs.recording_id`; a run attached as a
 *   version's evidence is such a run, so evidence is covered): its foreign key would refuse the delete
 *   anyway, and the run's replay needs the frames;
 * - **live** when this server still runs its session or has frames of it to write (`isLive`), or when
 *   it has no end yet (another server's live session). A recording left without an end by a crash is
 *   pruned by age only.
 * Referenced and live recordings still count towards the total size; when they alone exceed it, the pass
 * prunes what it may and says so in the log.
 *
 * Each batch of deletions is one transaction, which locks the recordings' rows (FOR UPDATE), checks again
 * that they are still unreferenced, deletes them (their chunks go with them: ON DELETE CASCADE) and writes
 * one audit entry per pruned recording (entity `recording`, action `prune`, actor none: the server), so
 * each recording's end is findable by its id on the audit page.
 */

export const PRUNE_BATCH = 50;

export interface PrunedRecording {
  id: number;
  startedAt: Date;
  bytes: number;
  reason: "age" | "size";
}

export interface PruneResult {
  pruned: PrunedRecording[];
  /** All recordings' chunks after the pass [bytes]. */
  totalBytes: number;
}

const MIB = 2 ** 20;
const mb = (bytes: number) => `${(bytes / MIB).toFixed(1)} MB`;

/** Bytes of every recording's chunks as stored, by recording (from the size index, no blob is read). */
async function storedBytesByRecording(db: Sequelize): Promise<Map<number, number>> {
  const rows = (await modelsOf(db).RecordingChunk.findAll({
    attributes: ["recordingId", [fn("SUM", col("stored_bytes")), "bytes"]],
    group: ["recordingId"],
    raw: true,
  })) as unknown as { recordingId: number; bytes: string | number }[];
  return new Map(rows.map((r) => [r.recordingId, Number(r.bytes)]));
}

/** The `where` of a prunable recording: ended (or started before `cutoff`) and replayed by no bench run. */
function prunableWhere(cutoff: Date | null) {
  return {
    [Op.or]: [{ endedAt: { [Op.ne]: null } }, ...(cutoff ? [{ startedAt: { [Op.lt]: cutoff } }] : [])],
    "$replayRuns.id$": null,
  };
}

/** One retention pass. `now` and `isLive` for the server's clock and live sessions. */
export async function pruneRecordings(
  db: Sequelize,
  limits: Pick<RecordingRetention, "maxAgeDays" | "maxBytes">,
  options: { now?: Date; isLive?: (recordingId: number) => boolean } = {},
): Promise<PruneResult> {
  const { Recording } = modelsOf(db);
  const now = options.now ?? new Date();
  const isLive = options.isLive ?? (() => false);
  const sizes = await storedBytesByRecording(db);
  let totalBytes = 0;
  for (const bytes of sizes.values()) totalBytes += bytes;
  if (limits.maxAgeDays === null && limits.maxBytes === null) return { pruned: [], totalBytes };

  const cutoff = limits.maxAgeDays === null ? null : new Date(now.getTime() - limits.maxAgeDays * 86_400_000);
  const candidates = await Recording.findAll({
    attributes: ["id", "startedAt", "endedAt"],
    where: prunableWhere(cutoff),
    include: [{ association: "replayRuns", attributes: [], required: false }],
    order: [["startedAt", "ASC"], ["id", "ASC"]],
  });
  const chosen: PrunedRecording[] = [];
  let remaining = totalBytes;
  for (const r of candidates) {
    const isOld = cutoff !== null && r.startedAt < cutoff;
    const isOverSize = limits.maxBytes !== null && remaining > limits.maxBytes && r.endedAt !== null;
    if (!isOld && !(limits.maxBytes !== null && remaining > limits.maxBytes)) break; // oldest first: nothing later qualifies
    if ((!isOld && !isOverSize) || isLive(r.id)) continue;
    const bytes = sizes.get(r.id) ?? 0;
    chosen.push({ id: r.id, startedAt: r.startedAt, bytes, reason: isOld ? "age" : "size" });
    remaining -= bytes;
  }

  const pruned: PrunedRecording[] = [];
  for (let i = 0; i < chosen.length; i += PRUNE_BATCH) {
    const batch = chosen.slice(i, i + PRUNE_BATCH);
    const done = await db.transaction(async (transaction) => {
      // Locked (only the recordings' rows: a bench run's insert waits on its foreign key's shared lock),
      // then checked again: a run may have started replaying one since the list was read. The check is
      // this transaction's first plain read, so it sees every run committed before the lock.
      await Recording.findAll({ attributes: ["id"], where: { id: batch.map((b) => b.id) }, lock: transaction.LOCK.UPDATE, transaction });
      const rows = await Recording.scope("withNames").findAll({
        where: { id: batch.map((b) => b.id), ...prunableWhere(cutoff) },
        include: [{ association: "replayRuns", attributes: [], required: false }],
        transaction,
      });
      const still = new Map(rows.map((r) => [r.id, r.toApi()]));
      const gone = batch.filter((b) => still.has(b.id) && !isLive(b.id));
      if (gone.length === 0) return gone;
      await Recording.destroy({ where: { id: gone.map((b) => b.id) }, transaction });
      for (const b of gone) {
        const recording = still.get(b.id)!;
        await recordAudit(db, transaction, {
          actorId: null,
          entity: "recording",
          entityId: b.id,
          action: "prune",
          summary: pruneSummary(recording, b, limits),
          before: recording,
        });
      }
      return gone;
    });
    pruned.push(...done);
  }
  for (const p of pruned) totalBytes -= p.bytes;
  return { pruned, totalBytes };
}

function pruneSummary(r: Recording, p: PrunedRecording, limits: Pick<RecordingRetention, "maxAgeDays" | "maxBytes">): string {
  const what = `Recording ${r.id} (${r.driverName || r.driverId} on ${r.armName || `arm ${r.armId}`}, started ${r.startedAt}, ${mb(p.bytes)})`;
  return p.reason === "age"
    ? `${what} pruned by retention: older than ${limits.maxAgeDays} days (RECORDING_RETENTION_DAYS).`
    : `${what} pruned by retention: recordings took more than ${mb(limits.maxBytes ?? 0)} (RECORDING_RETENTION_MAX_MB); it was the oldest not referenced by a bench run.`;
}

/**
 * Runs a pass at start and then every `pruneIntervalMs` (timer unref'd, one pass at a time). A failed pass
 * is logged and tried again at the next interval; nothing is thrown.
 */
export class RecordingRetentionJob {
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<void> | null = null;
  passes = 0;

  constructor(
    private readonly db: Sequelize,
    private readonly retention: RecordingRetention,
    private readonly isLive: (recordingId: number) => boolean,
  ) {}

  start(): void {
    if (this.timer) return;
    void this.runOnce();
    this.timer = setInterval(() => void this.runOnce(), this.retention.pruneIntervalMs);
    this.timer.unref();
  }

  /** One pass now (or the one under way). */
  runOnce(): Promise<void> {
    this.running ??= this.pass().finally(() => {
      this.running = null;
    });
    return this.running;
  }

  private async pass(): Promise<void> {
    try {
      const { pruned, totalBytes } = await pruneRecordings(this.db, this.retention, { isLive: this.isLive });
      this.passes++;
      if (pruned.length) {
        const bytes = pruned.reduce((s, p) => s + p.bytes, 0);
        console.log(`[jogwright] recording retention: pruned ${pruned.length} recording(s), ${mb(bytes)} (each in the audit trail).`);
      }
      if (this.retention.maxBytes !== null && totalBytes > this.retention.maxBytes) {
        console.warn(`[jogwright] recording retention: recordings take ${mb(totalBytes)}, above RECORDING_RETENTION_MAX_MB; the rest are referenced by bench runs or live.`);
      }
    } catch (error) {
      console.error("[jogwright] recording retention: the pass failed, will retry:", (error as Error).message);
    }
  }

  async stop(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    await this.running;
  }
}
