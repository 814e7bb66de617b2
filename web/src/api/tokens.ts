import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreatedTokenDto, TokenDto } from "@tidemark/shared/types/api";
import { getJson, sendJson } from "./client.ts";
import { auditKeys, tokenKeys } from "./keys.ts";

export const myTokensOptions = () =>
  queryOptions({
    queryKey: tokenKeys.mine(),
    queryFn: ({ signal }) => getJson<TokenDto[]>("/api/tokens", { signal }),
  });

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
    onSettled: () =>
      Promise.all([
        client.invalidateQueries({ queryKey: myTokensOptions().queryKey }),
        client.invalidateQueries({ queryKey: auditKeys.all }),
      ]),
  });
}
