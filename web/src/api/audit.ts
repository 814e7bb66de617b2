import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { auditQuerySchema } from "@tidemark/shared/contracts/audit";
import type { AuditEntryDto, AuditQuery, Page } from "@tidemark/shared/types/api";
import { getJson, requestUrl } from "./client.ts";
import { auditKeys } from "./keys.ts";

export const auditListOptions = (query: AuditQuery) =>
  queryOptions({
    queryKey: auditKeys.list(query),
    queryFn: ({ signal }) => getJson<Page<AuditEntryDto>>(requestUrl("/api/audit", auditQuerySchema, query), { signal }),
    placeholderData: keepPreviousData,
  });

export function useAudit(query: AuditQuery) {
  return useQuery(auditListOptions(query));
}
