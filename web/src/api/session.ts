import { queryOptions, useMutation, useQuery, useQueryClient, type QueryClient } from "@tanstack/react-query";
import type { PasswordResetConfirmRequest, PasswordResetRequest, SessionDto, SignInRequest, UserDto } from "@tidemark/shared/types/api";
import { passwordResetConfirmSchema, passwordResetRequestSchema, signInSchema } from "@tidemark/shared/contracts/session";
import { checkedBody, getJson, isUnauthorized, sendJson } from "./client.ts";
import { sessionKeys } from "./keys.ts";

/** `expired` is set when a request was refused with 401 while the portal believed it was signed in. */
export type SessionState = { user: UserDto; expired?: undefined } | { user: null; expired: boolean };

export const sessionOptions = () =>
  queryOptions({
    queryKey: sessionKeys.current(),
    queryFn: async ({ signal, client, queryKey }): Promise<SessionState> => {
      try {
        const session = await getJson<SessionDto>("/api/session", { signal });
        return { user: session.user };
      } catch (e) {
        // Not being signed in is an answer, not an error; it is an expiry if someone was signed in.
        if (isUnauthorized(e)) return { user: null, expired: Boolean(client.getQueryData<SessionState>(queryKey)?.user) };
        throw e;
      }
    },
    staleTime: 5 * 60_000,
  });

export function useSession() {
  return useQuery(sessionOptions());
}

/** Marks the session as ended; the route guard then sends the user to sign-in and back afterwards. */
export function markSessionExpired(client: QueryClient): void {
  const current = client.getQueryData(sessionOptions().queryKey);
  if (current && current.user === null) return;
  client.setQueryData(sessionOptions().queryKey, { user: null, expired: true });
}

/** Data of the previous user must not leak into the next one's screens. */
function forgetEverythingButSession(client: QueryClient): void {
  client.removeQueries({ predicate: (query) => query.queryKey[0] !== sessionKeys.all[0] });
}

export function useSignIn() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (body: SignInRequest) => sendJson<SessionDto>("POST", "/api/session", checkedBody(signInSchema, body)),
    meta: { isSignIn: true },
    onSuccess: (session) => {
      forgetEverythingButSession(client);
      client.setQueryData(sessionOptions().queryKey, { user: session.user });
    },
  });
}

export function useSignOut() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: () => sendJson<void>("DELETE", "/api/session"),
    onSettled: () => {
      forgetEverythingButSession(client);
      client.setQueryData(sessionOptions().queryKey, { user: null, expired: false });
    },
  });
}

export function useRequestPasswordReset() {
  return useMutation({
    mutationFn: (body: PasswordResetRequest) => sendJson<void>("POST", "/api/password-reset", checkedBody(passwordResetRequestSchema, body)),
  });
}

export function useConfirmPasswordReset() {
  return useMutation({
    mutationFn: (body: PasswordResetConfirmRequest) => sendJson<void>("POST", "/api/password-reset/confirm", checkedBody(passwordResetConfirmSchema, body)),
  });
}
