import { defineConfig } from "vitest/config";

// Schemas and pure functions, no global state: the test files share their worker's module cache
// (isolate: false) instead of importing zod and the schemas again per file (2.5 → 1.2 CPU-seconds).
export default defineConfig({ test: { isolate: false } });
