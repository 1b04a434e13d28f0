import { describeError } from "../../lib/api-client.ts";
import { Loading } from "./loading.tsx";
import { Message } from "./message.tsx";

/**
 * What a page shows while its query loads or after it failed: the spinner with `loading`, or a stop
 * message titled `failed` with the server's reason. Nothing once the data is there. `isPending` overrides
 * the query's own, for a page that also waits for a second query.
 */
export function QueryStatus({
  query,
  loading,
  failed,
  isPending = query.isPending,
}: {
  query: { isPending: boolean; isError: boolean; error: unknown };
  loading: string;
  failed: string;
  isPending?: boolean;
}) {
  if (query.isError) {
    return (
      <Message tone="stop" title={failed}>
        {describeError(query.error)}
      </Message>
    );
  }
  return isPending ? <Loading label={loading} /> : null;
}
