import { defineConfig } from "vitest/config";

// Pure functions and schemas, no global state: the test files share their worker's module cache
// (isolate: false) instead of importing everything again per file (measured for `npm test`, 4 Dec 2026:
// kinematics 17 → 7 CPU-seconds, mathjs and ml-matrix loaded once per worker instead of once per file).
export default defineConfig({ test: { isolate: false } });
