import { useMemo } from "react";
import { Link, useSearchParams } from "react-router-dom";
import { batchQuerySchema } from "@tidemark/shared/contracts/batches";
import { pageSizeOf } from "@tidemark/shared/contracts/fields";
import { readSearchParams, toSearchParams } from "@tidemark/shared/contracts/searchParams";
import type { BatchQuery } from "@tidemark/shared/types/api";
import { useBatches, useCollections } from "../api/batches.ts";
import { describeError } from "../api/client.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { Pagination } from "../components/Pagination.tsx";
import { SortableHeader } from "../components/SortableHeader.tsx";
import { EmptyState, ErrorState, LoadingState } from "../components/states.tsx";
import { buttonClass, SelectField, TextField } from "../components/fields.tsx";
import { formatDateTime } from "../format/units.ts";
import { PAGE_SIZES, sortOrderOf } from "../components/listSearch.ts";
import { filesLink } from "../components/files/fileQueryParams.ts";

const DEFAULT_PAGE_SIZE = 25;
const batchViewSchema = batchQuerySchema.safeExtend({ pageSize: pageSizeOf(PAGE_SIZES, DEFAULT_PAGE_SIZE) });

function parseBatchQuery(params: URLSearchParams): BatchQuery {
  const query = readSearchParams(batchViewSchema, params);
  return { ...query, order: sortOrderOf(query) };
}

const toParams = (query: BatchQuery): URLSearchParams => toSearchParams(batchViewSchema, query, { omitDefaults: true });

function Count({ value, tone, label }: { value: number; tone: string; label: string }) {
  return (
    <td className={`px-2 py-1.5 text-right ${value > 0 ? `font-semibold ${tone}` : "text-ink-muted"}`}>
      <span className="sr-only">{label}: </span>
      {value}
    </td>
  );
}

export function BatchesPage() {
  const [params, setParams] = useSearchParams();
  const query = useMemo(() => parseBatchQuery(params), [params]);
  const batches = useBatches(query);
  const collections = useCollections();
  const update = (change: Partial<BatchQuery>) => setParams(toParams({ ...query, page: 1, ...change }));
  const filtered = Boolean(query.collection || query.from || query.to);

  return (
    <>
      <PageHeader title="Batches">Each batch is one scan run uploaded by the CLI. Open one to review its files.</PageHeader>
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
        <TextField label="Scanned from" type="date" value={query.from ?? ""} onChange={(e) => update({ from: e.target.value || undefined })} className="w-44" />
        <TextField label="Scanned until" type="date" value={query.to ?? ""} onChange={(e) => update({ to: e.target.value || undefined })} className="w-44" />
        <button type="button" className={`${buttonClass.secondary} ml-auto`} onClick={() => setParams(new URLSearchParams())}>
          Clear filters
        </button>
      </div>
      {batches.isPending && <LoadingState label="Loading batches" />}
      {batches.isError && <ErrorState title="The batch list could not load" message={describeError(batches.error)} onRetry={() => void batches.refetch()} />}
      {batches.data && batches.data.items.length === 0 && (
        <EmptyState title={filtered ? "No batches match these filters" : "No batches yet"}>
          {filtered ? "Try another collection or a wider date range." : "Run `tidemark scan` and `tidemark upload` to send the first one."}
        </EmptyState>
      )}
      {batches.data && batches.data.items.length > 0 && (
        <>
          <div className="overflow-x-auto rounded-md border border-line bg-surface">
            <table className={`w-full min-w-[720px] text-sm ${batches.isPlaceholderData ? "opacity-60" : ""}`}>
              <thead className="border-b border-line bg-sunken">
                <tr>
                  <th scope="col" className="px-2 py-2 text-left font-semibold">
                    Batch
                  </th>
                  <SortableHeader sortKey="collection" activeKey={query.sort} order={query.order ?? "asc"} onSort={(sort, order) => update({ sort, order })}>
                    Collection
                  </SortableHeader>
                  <th scope="col" className="px-2 py-2 text-left font-semibold">
                    Uploaded by
                  </th>
                  <SortableHeader sortKey="startedAt" activeKey={query.sort} order={query.order ?? "asc"} onSort={(sort, order) => update({ sort, order })}>
                    Scanned
                  </SortableHeader>
                  <th scope="col" className="px-2 py-2 text-left font-semibold">
                    Profile
                  </th>
                  <th scope="col" className="px-2 py-2 text-right font-semibold">
                    Files
                  </th>
                  <th scope="col" className="px-2 py-2 text-right font-semibold">
                    Pass
                  </th>
                  <th scope="col" className="px-2 py-2 text-right font-semibold">
                    Warn
                  </th>
                  <SortableHeader sortKey="failCount" activeKey={query.sort} order={query.order ?? "asc"} onSort={(sort, order) => update({ sort, order })} className="text-right">
                    Fail
                  </SortableHeader>
                  <th scope="col" className="px-2 py-2 text-right font-semibold">
                    Error
                  </th>
                </tr>
              </thead>
              <tbody>
                {batches.data.items.map((batch) => (
                  <tr key={batch.id} className="border-b border-line last:border-b-0 hover:bg-paper">
                    <td className="px-2 py-1.5">
                      <Link to={filesLink({ batch: batch.id })} className="font-medium text-harbour-strong underline-offset-2 hover:underline">
                        #{batch.id}
                      </Link>
                      {" "}
                      <Link to={`/batches/${batch.id}`} className="text-xs text-harbour underline-offset-2 hover:underline" aria-label={`Overview of batch #${batch.id}`}>
                        overview
                      </Link>
                      <span className="block max-w-48 truncate font-mono text-xs text-ink-muted" title={batch.batchKey}>
                        {batch.batchKey}
                      </span>
                    </td>
                    <td className="px-2 py-1.5">{batch.collection.name}</td>
                    <td className="px-2 py-1.5">{batch.uploader.name || batch.uploader.email}</td>
                    <td className="px-2 py-1.5 whitespace-nowrap">{formatDateTime(batch.startedAt)}</td>
                    <td className="px-2 py-1.5">
                      <span className="font-mono text-xs">{batch.profileName}</span>
                    </td>
                    <td className="px-2 py-1.5 text-right">{batch.counts.files}</td>
                    <Count value={batch.counts.pass} tone="text-pass" label="pass" />
                    <Count value={batch.counts.warn} tone="text-warn" label="warn" />
                    <Count value={batch.counts.fail} tone="text-fail" label="fail" />
                    <Count value={batch.counts.error} tone="text-error" label="error" />
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <Pagination
            page={query.page ?? 1}
            pageSize={query.pageSize ?? DEFAULT_PAGE_SIZE}
            total={batches.data.total}
            noun="batches"
            onPageChange={(page) => update({ page })}
            onPageSizeChange={(pageSize) => update({ pageSize })}
          />
        </>
      )}
    </>
  );
}
