import { defineConfig, mergeConfig } from "vitest/config";
import viteConfig from "./vite.config.ts";

// The console's unit tests (codecs, formats, the jog socket's logic; node environment, no DOM) share their
// worker's module cache (isolate: false) instead of importing the shared schemas and React again per file:
// 13 → 3.5 CPU-seconds (measured 4 Dec 2026). A test that stubs a global must restore it in its own hooks.
export default mergeConfig(viteConfig, defineConfig({ test: { isolate: false } }));
