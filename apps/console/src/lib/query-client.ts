import { MutationCache, QueryCache, QueryClient } from "@tanstack/react-query";
import { ApiRequestError } from "./api-client.ts";

interface QueryClientHooks {
  /** Called when any request is answered 401 "unauthenticated" (the session ended or expired). */
  onUnauthenticated: () => void;
}

function isSessionGone(error: unknown): boolean {
  return error instanceof ApiRequestError && error.status === 401 && error.code === "unauthenticated";
}

export function createQueryClient({ onUnauthenticated }: QueryClientHooks): QueryClient {
  return new QueryClient({
    queryCache: new QueryCache({
      onError: (error) => {
        if (isSessionGone(error)) onUnauthenticated();
      },
    }),
    mutationCache: new MutationCache({
      onError: (error) => {
        if (isSessionGone(error)) onUnauthenticated();
      },
    }),
    defaultOptions: {
      queries: {
        staleTime: 30_000,
        // A 4xx will not get better by asking again; network trouble and 5xx get two more tries.
        retry: (failureCount, error) =>
          !(error instanceof ApiRequestError && error.status >= 400 && error.status < 500) && failureCount < 2,
      },
      mutations: { retry: false },
    },
  });
}
