import { z } from "zod";

/**
 * The server's content security policy allows no eval (apps/server/src/http/security-headers.ts). Zod 4
 * compiles object parsers with `new Function` when it may, and probes for that on the first object
 * schema; under the policy the probe fails (zod then parses without compiling) but the browser reports
 * a CSP violation. Saying "jitless" before any schema exists skips the probe. main.tsx imports this
 * module first, so it runs before the shared schemas are built.
 */
z.config({ jitless: true });
