import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import type { AuditEntryDto, Page } from "@tidemark/shared/types/api";
import { getJson, withQuery } from "./client.ts";
import { auditKeys, type AuditQuery } from "./keys.ts";

export type { AuditQuery };

export const auditListOptions = (query: AuditQuery) =>
  queryOptions({
    queryKey: auditKeys.list(query),
    queryFn: ({ signal }) => getJson<Page<AuditEntryDto>>(withQuery("/api/audit", query), { signal }),
    placeholderData: keepPreviousData,
  });

export function useAudit(query: AuditQuery) {
  return useQuery(auditListOptions(query));
}
