import { defineConfig } from "vite";
import react from "@vitejs/plugin-react";
import tailwindcss from "@tailwindcss/vite";

// The Express server (apps/server) listens on 127.0.0.1:3000 and serves dist/ with an SPA fallback.
// In development Vite serves the console and forwards /api and the /ws socket to it; the server checks the
// browser's Origin against PUBLIC_ORIGIN and ALLOWED_ORIGINS (never the Host header), so start it with
// ALLOWED_ORIGINS=http://localhost:5173 (DEVELOPERS.md, "Running each part").
const apiTarget = "http://127.0.0.1:3000";

export default defineConfig({
  plugins: [react(), tailwindcss()],
  server: {
    port: 5173,
    strictPort: true,
    proxy: {
      "/api": { target: apiTarget, changeOrigin: false },
      "/ws": { target: apiTarget, changeOrigin: false, ws: true },
    },
  },
  build: {
    outDir: "dist",
    emptyOutDir: true,
    // The font files are a few tens of kB each; keep them as separate cacheable files, never inlined.
    assetsInlineLimit: 0,
    // Maps are written for reading production stack traces, but the bundles do not point at them and the
    // server never serves *.map (apps/server/src/app.ts): the shipped console does not publish its source.
    sourcemap: "hidden",
    // Module bodies run in source order across chunks, so src/lib/zod-jitless.ts (main.tsx's first import)
    // configures zod before the shared schemas in other chunks are built; without it the chunk holding
    // the schemas runs first and zod's eval probe trips the server's content security policy. About
    // 1.5 % more script (measured: 1.70 → 1.72 MB over all chunks).
    rolldownOptions: { output: { strictExecutionOrder: true } },
  },
});
