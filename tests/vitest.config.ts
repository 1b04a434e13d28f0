import { defineConfig } from "vitest/config";

// Browser and whole-system tests against the real server started by `npm test` (JOGWRIGHT_URL).
export default defineConfig({
  test: {
    include: ["**/*.test.ts"],
    exclude: ["node_modules/**"],
    fileParallelism: false,
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
