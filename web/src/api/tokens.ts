import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CliPackageDto, CreatedTokenDto, CreateTokenDto, TokenDto, UserRefDto } from "@tidemark/shared/types/api";
import { createTokenSchema } from "@tidemark/shared/contracts/tokens";
import { ApiError, checkedBody, getJson, sendJson } from "./client.ts";
import { auditKeys, cliPackageKeys, tokenKeys } from "./keys.ts";

/** GET /api/cli-package: the CLI tarball this server offers, or null when it offers none (404). */
export const cliPackageOptions = () =>
  queryOptions({
    queryKey: cliPackageKeys.all,
    queryFn: ({ signal }) =>
      getJson<CliPackageDto>("/api/cli-package", { signal }).catch((error: unknown) => {
        if (error instanceof ApiError && error.status === 404) return null;
        throw error;
      }),
    staleTime: 5 * 60_000,
  });

export function useCliPackage() {
  return useQuery(cliPackageOptions());
}

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
    mutationFn: (body: CreateTokenDto) => sendJson<CreatedTokenDto>("POST", "/api/tokens", checkedBody(createTokenSchema, body)),
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
