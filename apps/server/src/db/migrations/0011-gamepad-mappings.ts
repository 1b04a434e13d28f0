import { json, primaryKey, userRef } from "../columns.ts";
import { addForeignKeys, schemaStep, timeNowOnUpdate } from "./columns.ts";

/** One saved gamepad mapping per user (shared gamepadMappingSchema as JSON); absent → the default mapping. */
export const up = schemaStep(async (qi) => {
  await qi.createTable("gamepad_mappings", {
    user_id: primaryKey(userRef()),
    mapping: json(),
    updated_at: timeNowOnUpdate(),
  });
  await addForeignKeys(qi, "gamepad_mappings", { user_id: "users" }, { onDelete: "CASCADE" });
});

export const down = schemaStep((qi) => qi.dropTable("gamepad_mappings"));
