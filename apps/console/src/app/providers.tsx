import type { ReactNode } from "react";
import { QueryClientProvider } from "@tanstack/react-query";
import { createQueryClient } from "../lib/query-client.ts";
import { storeSession } from "../lib/session.ts";

// Any request answered 401 "unauthenticated" means the session ended (expired, or signed out in another
// tab): mark the session signed out, and the guard sends the person to the sign-in page and back after.
const queryClient = createQueryClient({
  onUnauthenticated: () => storeSession(queryClient, { user: null, hasSignedOut: false }),
});

export function Providers({ children }: { children: ReactNode }) {
  return <QueryClientProvider client={queryClient}>{children}</QueryClientProvider>;
}
