import { defineConfig } from "vitest/config";

// API tests share one real MariaDB database (DATABASE_URL, set by `npm test`): files run one at a time.
export default defineConfig({
  test: {
    include: ["src/**/*.test.ts"],
    fileParallelism: false,
    globalSetup: ["src/test/global-setup.ts"],
    testTimeout: 20_000,
    hookTimeout: 30_000,
  },
});
