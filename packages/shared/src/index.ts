export * from "./roles.ts";
export * from "./errors.ts";
export * from "./arm.ts";
export * from "./users.ts";
export * from "./health.ts";
export * from "./units.ts";
