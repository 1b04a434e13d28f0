import type { Sequelize } from "sequelize";
import type { User } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";
import { recordAudit } from "../audit/service.ts";

/**
 * The emergency-stop latch of each operator station: one person (user id) at one arm (arm id). It belongs
 * to the station, not to a session (PRODUCT.md, "The control step", step 2; ISO 13850:2015 principle, from
 * memory): a new `start` (even on the same socket), a version switch, a reconnect and a page reload all
 * find it latched, until a deliberate reset — and the reset itself never restarts motion (the enabling
 * control must be released and pressed again, which the simulation enforces).
 *
 * The in-memory map is authoritative. Every latch and reset is also written to station_estop_latches
 * (migration 0012), so a latch survives a server restart, and audited — but after the fact, in order, and a
 * failed write is logged, never thrown: a database failure must never prevent or delay latching.
 * If the stored latches could not be read (yet), a station this server knows nothing about counts as
 * latched: the operator resets it deliberately rather than a lost row silently unlatching it.
 */

export interface Station {
  userId: string;
  armId: number;
}

/** What the audit trail says about one latch or reset. */
export interface StationEvent {
  /** Who pressed it: the driver, or a safety officer watching the driver's session (latch only). */
  actor: Pick<User, "id" | "displayName">;
  /** The station's person. */
  driver: Pick<User, "id" | "displayName">;
  armName: string;
  sessionId: string;
  versionId: number;
  /** The version as people name it: its profile and number ("Pack opening" v6), for the audit summary. */
  versionName: string;
}

/** Where the latches are kept between restarts. */
export interface StationLatchStore {
  loadLatched(): Promise<Station[]>;
  saveLatched(station: Station, event: StationEvent): Promise<void>;
  saveReset(station: Station, event: StationEvent): Promise<void>;
}

const stationAuditId = (s: Station) => `station:${s.userId}:${s.armId}`;
/** " by <name>, watching the session" when someone other than the driver pressed it. */
const byWatcher = (e: StationEvent) => (e.actor.id === e.driver.id ? "" : ` by ${e.actor.displayName}, watching the session as safety officer`);

/** The store on the app's database: one row per latched station, the latch and the reset audited with it. */
export function sqlStationLatchStore(db: Sequelize): StationLatchStore {
  return {
    async loadLatched() {
      const rows = await modelsOf(db).StationLatch.findAll({ attributes: ["userId", "armId"] });
      return rows.map((r) => ({ userId: r.userId, armId: Number(r.armId) }));
    },
    async saveLatched(station, event) {
      await db.transaction(async (t) => {
        // Latched again: the row is refreshed (INSERT … ON DUPLICATE KEY UPDATE).
        await modelsOf(db).StationLatch.bulkCreate(
          [{ userId: station.userId, armId: station.armId, latchedBySession: event.sessionId, latchedAt: new Date() }],
          { updateOnDuplicate: ["latchedAt", "latchedBySession"], transaction: t },
        );
        await recordAudit(db, t, {
          actorId: event.actor.id,
          entity: "session",
          entityId: stationAuditId(station),
          action: "estop-latch",
          summary: `emergency stop latched at ${event.driver.displayName}'s station on ${event.armName}${byWatcher(event)} driving ${event.versionName}; it stays latched until reset`,
          after: { ...station, isLatched: true, latchedBy: event.actor.id },
        });
      });
    },
    async saveReset(station, event) {
      await db.transaction(async (t) => {
        await modelsOf(db).StationLatch.destroy({ where: { userId: station.userId, armId: station.armId }, transaction: t });
        await recordAudit(db, t, {
          actorId: event.actor.id,
          entity: "session",
          entityId: stationAuditId(station),
          action: "estop-reset",
          summary: `emergency stop reset at ${event.driver.displayName}'s station on ${event.armName} driving ${event.versionName}; motion needs the enabling control released and pressed again`,
          before: { ...station, isLatched: true },
          after: { ...station, isLatched: false },
        });
      });
    },
  };
}

const keyOf = (s: Station) => `${s.userId}\u0000${s.armId}`;

export class StationLatches {
  /** true: latched; false: known to be reset. Absent: whatever the store said (see isLatched). */
  private readonly known = new Map<string, boolean>();
  private isLoaded = false;
  private loading: Promise<void> | null = null;
  /** Writes to the store, one after the other, so a reset never overtakes its latch. */
  private writes: Promise<void> = Promise.resolve();

  constructor(public store: StationLatchStore) {}

  /** Reads the stored latches, once; again after a failure. Never rejects. */
  ready(): Promise<void> {
    if (this.isLoaded) return Promise.resolve();
    this.loading ??= this.store.loadLatched().then(
      (stations) => {
        // What happened in memory since start-up is newer than the table.
        for (const s of stations) if (!this.known.has(keyOf(s))) this.known.set(keyOf(s), true);
        this.isLoaded = true;
        this.loading = null;
      },
      (error: unknown) => {
        console.error("[jogwright] could not read the stations' emergency-stop latches; unknown stations count as latched:", (error as Error).message);
        this.loading = null;
      },
    );
    return this.loading;
  }

  isLatched(station: Station): boolean {
    return this.known.get(keyOf(station)) ?? !this.isLoaded;
  }

  /** Latches the station at once (in memory); the stored row and the audit entry follow. */
  latch(station: Station, event: StationEvent): void {
    this.known.set(keyOf(station), true);
    this.persist("latch", () => this.store.saveLatched(station, event));
  }

  /** Clears the station's latch at once (in memory); the stored row and the audit entry follow. */
  reset(station: Station, event: StationEvent): void {
    this.known.set(keyOf(station), false);
    this.persist("reset", () => this.store.saveReset(station, event));
  }

  /** Resolves when every write queued so far has finished (or failed and been logged). */
  settled(): Promise<void> {
    return this.writes;
  }

  private persist(what: string, write: () => Promise<void>): void {
    this.writes = this.writes.then(write).catch((error: unknown) => {
      console.error(`[jogwright] could not store the emergency-stop ${what} (it holds in memory):`, (error as Error).message);
    });
  }
}
