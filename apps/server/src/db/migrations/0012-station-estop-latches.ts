import { primaryKey, string, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, schemaStep, timeNow } from "./columns.ts";

/**
 * The emergency-stop latch of each operator station (user and arm), so a latch survives a server
 * restart. A row means latched; the reset deletes it. The jog hub's memory is authoritative while it runs
 * (modules/jog/station-latches.ts); latches and resets are audited as entity "session",
 * id "station:<user id>:<arm id>".
 */
export const up = schemaStep(async (qi) => {
  await qi.createTable("station_estop_latches", {
    user_id: primaryKey(userRef()),
    arm_id: primaryKey(unsigned()),
    latched_at: timeNow(),
    latched_by_session: string(64),
  });
  await addForeignKeys(qi, "station_estop_latches", { user_id: "users", arm_id: "arms" });
});

export const down = schemaStep((qi) => qi.dropTable("station_estop_latches"));
