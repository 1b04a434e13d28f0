// First: zod's settings must be in place before any schema is built (see the module).
import "./lib/zod-jitless.ts";
import { StrictMode } from "react";
import { createRoot } from "react-dom/client";
import { Providers } from "./app/providers.tsx";
import { AppRouter } from "./app/router.tsx";
import "./styles/index.css";

const container = document.getElementById("root");
if (!container) throw new Error("index.html has no #root element.");

createRoot(container).render(
  <StrictMode>
    <Providers>
      <AppRouter />
    </Providers>
  </StrictMode>,
);
