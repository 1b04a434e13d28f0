import { defineConfig } from "vite";
import react from "@vitejs/plugin-react";
import tailwindcss from "@tailwindcss/vite";

// The Express server (apps/server) listens on 127.0.0.1:3000 and serves dist/ with an SPA fallback.
// In development Vite serves the console and forwards /api and the /ws socket to it. The Host header is
// kept (changeOrigin false) so the browser's Origin and the Host the server sees still agree.
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
    sourcemap: true,
  },
});
