import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreatedTokenDto, TokenDto, UserRefDto } from "@tidemark/shared/types/api";
import { getJson, sendJson } from "./client.ts";
import { auditKeys, tokenKeys } from "./keys.ts";

export const myTokensOptions = () =>
  queryOptions({
    queryKey: tokenKeys.mine(),
    queryFn: ({ signal }) => getJson<TokenDto[]>("/api/tokens", { signal }),
  });

/** GET /api/tokens?all=1 (admin) adds each token's owner. */
export type OwnedTokenDto = TokenDto & { owner?: UserRefDto };

export const allTokensOptions = () =>
  queryOptions({
    queryKey: tokenKeys.everyone(),
    queryFn: ({ signal }) => getJson<OwnedTokenDto[]>("/api/tokens?all=1", { signal }),
  });

export function useAllTokens() {
  return useQuery(allTokensOptions());
}

export function useMyTokens() {
  return useQuery(myTokensOptions());
}

export function useCreateToken() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (body: { name: string }) => sendJson<CreatedTokenDto>("POST", "/api/tokens", body),
    onSettled: () =>
      Promise.all([
        client.invalidateQueries({ queryKey: myTokensOptions().queryKey }),
        client.invalidateQueries({ queryKey: auditKeys.all }),
      ]),
  });
}

export function useRevokeToken() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => sendJson<void>("DELETE", `/api/tokens/${encodeURIComponent(id)}`),
    // The token may be on the admin's list of everyone's tokens as well as on its owner's.
    onSettled: () =>
      Promise.all([
        client.invalidateQueries({ queryKey: tokenKeys.all }),
        client.invalidateQueries({ queryKey: auditKeys.all }),
      ]),
  });
}
