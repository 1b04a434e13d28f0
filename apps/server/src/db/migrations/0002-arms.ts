import { json, serialId, string, text } from "../columns.ts";
import { schemaStep, timeNow, timeNowOnUpdate } from "./columns.ts";

/**
 * Arms: the DH model as JSON (SI units, the arm JSON of PRODUCT.md) and the ready pose in radians.
 * MariaDB's JSON is LONGTEXT (utf8mb4_bin) with a CHECK (JSON_VALID(column)) it adds itself.
 */
export const up = schemaStep(async (qi) => {
  await qi.createTable("arms", {
    id: serialId(),
    slug: string(60),
    name: string(120),
    description: text(),
    model: json(),
    ready_pose: json(),
    created_at: timeNow(),
    updated_at: timeNowOnUpdate(),
  });
  await qi.addConstraint("arms", { type: "unique", name: "arms_slug_unique", fields: ["slug"] });
});

export const down = schemaStep((qi) => qi.dropTable("arms"));
