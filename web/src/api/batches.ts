import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { batchQuerySchema } from "@tidemark/shared/contracts/batches";
import type { BatchDto, BatchOverviewDto, BatchQuery, CollectionDto, Page } from "@tidemark/shared/types/api";
import { getJson, requestUrl } from "./client.ts";
import { batchKeys, collectionKeys } from "./keys.ts";

export const batchListOptions = (query: BatchQuery) =>
  queryOptions({
    queryKey: batchKeys.list(query),
    queryFn: ({ signal }) => getJson<Page<BatchDto>>(requestUrl("/api/batches", batchQuerySchema, query), { signal }),
    placeholderData: keepPreviousData,
  });

export const batchDetailOptions = (id: number) =>
  queryOptions({
    queryKey: batchKeys.detail(id),
    queryFn: ({ signal }) => getJson<BatchDto>(`/api/batches/${id}`, { signal }),
  });

export const collectionListOptions = () =>
  queryOptions({
    queryKey: collectionKeys.list(),
    queryFn: ({ signal }) => getJson<CollectionDto[]>("/api/collections", { signal }),
    staleTime: 5 * 60_000,
  });

export function useBatches(query: BatchQuery) {
  return useQuery(batchListOptions(query));
}

export function useBatch(id: number | undefined) {
  return useQuery({ ...batchDetailOptions(id ?? 0), enabled: id !== undefined });
}

export function useCollections() {
  return useQuery(collectionListOptions());
}

export const batchOverviewOptions = (id: number) =>
  queryOptions({
    queryKey: batchKeys.overview(id),
    queryFn: ({ signal }) => getJson<BatchOverviewDto>(`/api/batches/${id}/overview`, { signal }),
  });

export function useBatchOverview(id: number) {
  return useQuery({ ...batchOverviewOptions(id), enabled: Number.isInteger(id) && id > 0 });
}
