/**
 * Runs of distributed scanning: the list and one run's progress, refreshed while work is going on, and
 * the supervisor's retry of dead-lettered jobs (one, or all of a run's) and release of a held job.
 */
import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { runQuerySchema } from "@tidemark/shared/contracts/runs";
import type { JobStateDto, Page, RetryRunResultDto, ScanRunDetailDto, ScanRunDto, ScanRunQuery } from "@tidemark/shared/types/api";
import { getJson, requestUrl, sendJson } from "./client.ts";
import { auditKeys, batchKeys, runKeys } from "./keys.ts";

/** How often a run with work left is read again. */
export const RUN_REFRESH_MS = 5_000;

const busy = (run: ScanRunDto): boolean => run.state === "running" || run.state === "waiting";

export const runListOptions = (query: ScanRunQuery) =>
  queryOptions({
    queryKey: runKeys.list(query),
    queryFn: ({ signal }) => getJson<Page<ScanRunDto>>(requestUrl("/api/runs", runQuerySchema, query), { signal }),
    placeholderData: keepPreviousData,
    refetchInterval: (q) => (q.state.data?.items.some(busy) ? RUN_REFRESH_MS : false),
  });

export const runDetailOptions = (id: number) =>
  queryOptions({
    queryKey: runKeys.detail(id),
    queryFn: ({ signal }) => getJson<ScanRunDetailDto>(`/api/runs/${id}`, { signal }),
    refetchInterval: (q) => (q.state.data && busy(q.state.data) ? RUN_REFRESH_MS : false),
  });

export function useRuns(query: ScanRunQuery) {
  return useQuery(runListOptions(query));
}

export function useRun(id: number) {
  return useQuery({ ...runDetailOptions(id), enabled: Number.isInteger(id) && id > 0 });
}

/** After a retry the run's counts, the list, its batch (finished again later) and the audit trail change. */
function useAfterRetry(runId: number) {
  const client = useQueryClient();
  return () =>
    Promise.all([
      client.invalidateQueries({ queryKey: runKeys.detail(runId) }),
      client.invalidateQueries({ queryKey: runKeys.lists() }),
      client.invalidateQueries({ queryKey: batchKeys.all }),
      client.invalidateQueries({ queryKey: auditKeys.all }),
    ]);
}

export function useRetryJob(runId: number) {
  const settle = useAfterRetry(runId);
  return useMutation({
    mutationFn: (jobId: number) => sendJson<JobStateDto>("POST", `/api/jobs/${jobId}/retry`),
    onSettled: settle,
  });
}

/** A supervisor sends a job a worker holds (stuck, or its worker gone) back to the queue; no retry is spent. */
export function useRequeueJob(runId: number) {
  const settle = useAfterRetry(runId);
  return useMutation({
    mutationFn: (jobId: number) => sendJson<JobStateDto>("POST", `/api/jobs/${jobId}/requeue`),
    onSettled: settle,
  });
}

export function useRetryRun(runId: number) {
  const settle = useAfterRetry(runId);
  return useMutation({
    mutationFn: () => sendJson<RetryRunResultDto>("POST", `/api/runs/${runId}/retry`),
    onSettled: settle,
  });
}
