import { enumOf, flag, primaryKey, string, time, userRef } from "../columns.ts";
import { addForeignKeys, schemaStep, timeNow, timeNowOnUpdate } from "./columns.ts";

/** Users, their roles (a user may hold several) and lucia's sessions. */
export const up = schemaStep(async (qi) => {
  await qi.createTable("users", {
    id: primaryKey(string(40)),
    username: string(40),
    display_name: string(80),
    email: string(120),
    password_hash: string(255),
    is_active: flag(true),
    created_at: timeNow(),
    updated_at: timeNowOnUpdate(),
  });
  await qi.addConstraint("users", { type: "unique", name: "users_username_unique", fields: ["username"] });

  await qi.createTable("user_roles", {
    user_id: primaryKey(userRef()),
    role: primaryKey(enumOf(["operator", "engineer", "safety_officer", "admin"])),
  });
  await qi.addIndex("user_roles", ["role"], { name: "user_roles_role" });
  await addForeignKeys(qi, "user_roles", { user_id: "users" }, { onDelete: "CASCADE" });

  await qi.createTable("sessions", {
    id: primaryKey(string(64)),
    user_id: userRef(),
    expires_at: time(),
  });
  await qi.addIndex("sessions", ["user_id"], { name: "sessions_user" });
  await qi.addIndex("sessions", ["expires_at"], { name: "sessions_expires" });
  await addForeignKeys(qi, "sessions", { user_id: "users" }, { onDelete: "CASCADE" });
});

export const down = schemaStep(async (qi) => {
  await qi.dropTable("sessions");
  await qi.dropTable("user_roles");
  await qi.dropTable("users");
});
