import { useQuery } from "@tanstack/react-query";
import { DatabaseZap } from "lucide-react";
import { healthSchema } from "@jogwright/shared";
import { apiRequest } from "../../lib/api-client.ts";
import { useIsDatabaseUnavailable } from "../../lib/database-status.ts";

export const DATABASE_UNAVAILABLE_TEXT = "Database unavailable — jogging continues, saving is paused";
/** How often the shell asks whether the database is back while the banner shows (common practice, no source). */
const RECHECK_INTERVAL_MS = 5000;

/**
 * Shown while the server answers `database_unavailable` (lib/database-status.ts). While it shows, the
 * health endpoint is asked every few seconds in the background; its first success (through the API
 * client) clears the banner.
 */
export function DatabaseBanner() {
  const isUnavailable = useIsDatabaseUnavailable();
  useQuery({
    queryKey: ["health"],
    queryFn: ({ signal }) => apiRequest("/api/health", { schema: healthSchema, signal, isBackground: true }),
    enabled: isUnavailable,
    refetchInterval: RECHECK_INTERVAL_MS,
    retry: false,
    staleTime: 0,
  });
  if (!isUnavailable) return null;
  return (
    <section
      role="status"
      aria-label="Database status"
      className="flex items-center gap-3 border-b border-stop-400/40 bg-stop-950 px-4 py-2 text-sm font-semibold text-ink-100"
    >
      <DatabaseZap aria-hidden className="size-4 shrink-0 text-stop-400" />
      <p className="min-w-0 flex-1">{DATABASE_UNAVAILABLE_TEXT}</p>
    </section>
  );
}
