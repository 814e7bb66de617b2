import { useMemo } from "react";
import { Link, useSearchParams } from "react-router-dom";
import { pageSizeOf } from "@tidemark/shared/contracts/fields";
import { runQuerySchema } from "@tidemark/shared/contracts/runs";
import { readSearchParams, toSearchParams } from "@tidemark/shared/contracts/searchParams";
import type { ScanRunQuery } from "@tidemark/shared/types/api";
import { useCollections } from "../api/batches.ts";
import { describeError } from "../api/client.ts";
import { useRuns } from "../api/runs.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { Pagination } from "../components/Pagination.tsx";
import { PAGE_SIZES } from "../components/listSearch.ts";
import { SelectField } from "../components/fields.tsx";
import { RunProgressBar } from "../components/runs/RunProgressBar.tsx";
import { RunStateBadge } from "../components/runs/RunStateBadge.tsx";
import { formatFilesPerMinute, throughputBasisLabel } from "../components/runs/runFormat.ts";
import { EmptyState, ErrorState, LoadingState } from "../components/states.tsx";
import { formatDateTime } from "../format/units.ts";

const DEFAULT_PAGE_SIZE = 25;
const runViewSchema = runQuerySchema.safeExtend({ pageSize: pageSizeOf(PAGE_SIZES, DEFAULT_PAGE_SIZE) });

const parseRunQuery = (params: URLSearchParams): ScanRunQuery => readSearchParams(runViewSchema, params);
const toParams = (query: ScanRunQuery): URLSearchParams => toSearchParams(runViewSchema, query, { omitDefaults: true });

export function RunsPage() {
  const [params, setParams] = useSearchParams();
  const query = useMemo(() => parseRunQuery(params), [params]);
  const runs = useRuns(query);
  const collections = useCollections();
  const update = (change: Partial<ScanRunQuery>) => setParams(toParams({ ...query, page: 1, ...change }));

  return (
    <>
      <PageHeader title="Runs">
        Files queued with <code>tidemark enqueue</code> and scanned by <code>tidemark worker</code> processes; each run fills one batch.
      </PageHeader>
      <div className="mb-3 flex flex-wrap items-end gap-3 rounded-md border border-line bg-surface p-3">
        <SelectField
          label="Collection"
          value={query.collection ?? ""}
          onChange={(e) => update({ collection: e.target.value ? Number(e.target.value) : undefined })}
          className="w-60"
        >
          <option value="">{collections.isError ? "All (list could not load)" : "All collections"}</option>
          {collections.data?.map((c) => (
            <option key={c.id} value={c.id}>
              {c.name}
            </option>
          ))}
        </SelectField>
      </div>
      {runs.isPending && <LoadingState label="Loading runs" />}
      {runs.isError && <ErrorState title="The run list could not load" message={describeError(runs.error)} onRetry={() => void runs.refetch()} />}
      {runs.data && runs.data.items.length === 0 && (
        <EmptyState title={query.collection ? "No runs in this collection" : "No runs yet"}>
          Queue a folder on the shared storage with <code>tidemark enqueue FOLDER --collection NAME</code>, then start <code>tidemark worker</code> on each scanning machine.
        </EmptyState>
      )}
      {runs.data && runs.data.items.length > 0 && (
        <>
          <div className="overflow-x-auto rounded-md border border-line bg-surface">
            <table className={`w-full min-w-[860px] text-sm ${runs.isPlaceholderData ? "opacity-60" : ""}`}>
              <thead className="border-b border-line bg-sunken">
                <tr>
                  <th scope="col" className="px-2 py-2 text-left font-semibold">Run</th>
                  <th scope="col" className="px-2 py-2 text-left font-semibold">Collection</th>
                  <th scope="col" className="px-2 py-2 text-left font-semibold">State</th>
                  <th scope="col" className="w-64 px-2 py-2 text-left font-semibold">Progress</th>
                  <th scope="col" className="px-2 py-2 text-right font-semibold">Failed jobs</th>
                  <th scope="col" className="px-2 py-2 text-right font-semibold">Throughput</th>
                  <th scope="col" className="px-2 py-2 text-left font-semibold">Created</th>
                </tr>
              </thead>
              <tbody>
                {runs.data.items.map((run) => (
                  <tr key={run.id} className="border-b border-line last:border-b-0 hover:bg-paper">
                    <td className="px-2 py-1.5">
                      <Link to={`/runs/${run.id}`} className="font-medium text-harbour-strong underline-offset-2 hover:underline">
                        #{run.id}
                      </Link>
                      <span className="block max-w-64 truncate text-xs text-ink-muted" title={run.name}>
                        {run.name}
                      </span>
                    </td>
                    <td className="px-2 py-1.5">
                      {run.collection.name}
                      <span className="block font-mono text-xs text-ink-muted">{run.profileName}</span>
                    </td>
                    <td className="px-2 py-1.5">
                      <RunStateBadge state={run.state} />
                    </td>
                    <td className="px-2 py-1.5">
                      <RunProgressBar counts={run.counts} />
                      <span className="mt-0.5 block text-xs text-ink-muted">
                        {run.counts.done + run.counts.failed} of {run.counts.total} finished
                        {run.counts.active > 0 ? `, ${run.counts.active} being scanned` : ""}
                      </span>
                    </td>
                    <td className={`px-2 py-1.5 text-right ${run.counts.failed > 0 ? "font-semibold text-fail" : "text-ink-muted"}`}>{run.counts.failed}</td>
                    <td className="px-2 py-1.5 text-right whitespace-nowrap">
                      {formatFilesPerMinute(run.throughput.shown.filesPerMinute)}
                      <span className="block text-xs text-ink-muted">{throughputBasisLabel(run.throughput.shown.basis, run.throughput.windowSeconds)}</span>
                    </td>
                    <td className="px-2 py-1.5 whitespace-nowrap">{formatDateTime(run.createdAt)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <Pagination
            page={query.page ?? 1}
            pageSize={query.pageSize ?? DEFAULT_PAGE_SIZE}
            total={runs.data.total}
            noun="runs"
            onPageChange={(page) => update({ page })}
            onPageSizeChange={(pageSize) => update({ pageSize })}
          />
        </>
      )}
    </>
  );
}
