import { MutationCache, QueryCache, QueryClient, type DefaultOptions } from "@tanstack/react-query";
import { ApiError, isUnauthorized } from "./client.ts";
import { sessionKeys } from "./keys.ts";
import { markSessionExpired } from "./session.ts";

/** Retry only what may pass on a second try: network trouble and 5xx, never 4xx. */
function shouldRetry(failureCount: number, error: unknown): boolean {
  if (error instanceof ApiError && error.status >= 400 && error.status < 500) return false;
  return failureCount < 2;
}

/**
 * One client per app (and per test). A 401 from any query or mutation ends the session in the cache,
 * which sends the user to sign-in; the session query itself maps 401 to "signed out" and never lands here.
 */
export function createQueryClient(overrides: DefaultOptions["queries"] = {}): QueryClient {
  const client: QueryClient = new QueryClient({
    queryCache: new QueryCache({
      onError: (error, query) => {
        if (isUnauthorized(error) && query.queryKey[0] !== sessionKeys.all[0]) markSessionExpired(client);
      },
    }),
    mutationCache: new MutationCache({
      onError: (error, _vars, _ctx, mutation) => {
        // A wrong password on the sign-in form is also a 401, but the session did not "expire".
        if (isUnauthorized(error) && mutation.options.meta?.isSignIn !== true) markSessionExpired(client);
      },
    }),
    defaultOptions: {
      queries: { staleTime: 30_000, retry: shouldRetry, ...overrides },
      mutations: { retry: false },
    },
  });
  return client;
}
