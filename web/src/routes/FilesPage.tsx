import { useCallback, useEffect, useMemo, useState } from "react";
import { useNavigate, useSearchParams } from "react-router-dom";
import { useQueryClient } from "@tanstack/react-query";
import type { FileQuery } from "@tidemark/shared/types/api";
import { describeError } from "../api/client.ts";
import { adjacentFileQuery, fileListOptions, useFiles } from "../api/files.ts";
import { useCan } from "../auth/currentUser.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { Pagination } from "../components/Pagination.tsx";
import { EmptyState, ErrorState, LoadingState } from "../components/states.tsx";
import { BatchBanner } from "../components/files/BatchBanner.tsx";
import { BulkReviewBar } from "../components/files/BulkReviewBar.tsx";
import { FileFilters } from "../components/files/FileFilters.tsx";
import { FileTable } from "../components/files/FileTable.tsx";
import { fileQueryToParams, hasFilters, parseFileQuery } from "../components/files/fileQueryParams.ts";
import { useListKeyboard } from "../hooks/useListKeyboard.ts";

/** State that belongs to one page of results; it resets by itself when the view changes. */
interface ViewState<T> {
  view: string;
  value: T;
}

function focusRowLink(index: number) {
  document.querySelectorAll<HTMLElement>("[data-list-row]")[index]?.querySelector<HTMLElement>("a")?.focus();
}

export function FilesPage() {
  const [params, setParams] = useSearchParams();
  const query = useMemo(() => parseFileQuery(params), [params]);
  const view = params.toString();
  // The file page keeps the list's query (without defaults), so its previous/next walk this same list.
  const listSearch = fileQueryToParams(query).toString();
  const linkSearch = listSearch ? `?${listSearch}` : "";
  const files = useFiles(query);
  const canReview = useCan("review");
  const navigate = useNavigate();
  const client = useQueryClient();

  const [active, setActive] = useState<ViewState<number>>({ view, value: -1 });
  const [selected, setSelected] = useState<ViewState<ReadonlySet<number>>>({ view, value: new Set() });
  const activeIndex = active.view === view ? active.value : -1;
  const selectedIds = selected.view === view ? selected.value : new Set<number>();
  const items = useMemo(() => files.data?.items ?? [], [files.data]);

  const page = query.page ?? 1;
  const pageSize = query.pageSize ?? 50;
  const total = files.data?.total ?? 0;
  // The page shown may be the previous view's while the new one loads (placeholder): its cursors belong to it.
  const pageData = files.isPlaceholderData ? undefined : files.data;
  const nextQuery = pageData ? adjacentFileQuery(query, pageData, 1) : null;
  const previousQuery = pageData ? adjacentFileQuery(query, pageData, -1) : null;

  // Warm the next page so "Next" (or j past the last row) feels instant.
  useEffect(() => {
    if (nextQuery) void client.prefetchQuery(fileListOptions(nextQuery));
  }, [client, nextQuery]);

  // A new filter, sort or page size starts again at page 1, without the old view's cursor.
  const update = (change: Partial<FileQuery>) => setParams(fileQueryToParams({ ...query, page: 1, after: undefined, before: undefined, ...change }));
  const goTo = (target: FileQuery | null) => {
    if (target) setParams(fileQueryToParams(target));
  };

  const move = useCallback(
    (index: number) => {
      setActive({ view, value: index });
      focusRowLink(index);
    },
    [view],
  );
  const toggle = useCallback(
    (id: number) =>
      setSelected((current) => {
        const next = new Set(current.view === view ? current.value : []);
        if (next.has(id)) next.delete(id);
        else next.add(id);
        return { view, value: next };
      }),
    [view],
  );
  const open = useCallback(
    (index: number) => {
      const file = items[index];
      if (file) void navigate(`/files/${file.id}${linkSearch}`);
    },
    [items, navigate, linkSearch],
  );
  const toggleAt = useCallback(
    (index: number) => {
      const file = items[index];
      if (file) toggle(file.id);
    },
    [items, toggle],
  );
  useListKeyboard({ count: items.length, activeIndex, onMove: move, onOpen: open, onToggle: canReview ? toggleAt : undefined });

  const toggleAll = () => {
    const everyOne = items.length > 0 && items.every((f) => selectedIds.has(f.id));
    setSelected({ view, value: everyOne ? new Set() : new Set(items.map((f) => f.id)) });
  };
  const clearSelection = () => setSelected({ view, value: new Set() });

  return (
    <>
      <PageHeader title="Files">
        <span className="text-sm">
          Keys: <kbd className="rounded border border-line-strong bg-surface px-1 font-mono">j</kbd> /{" "}
          <kbd className="rounded border border-line-strong bg-surface px-1 font-mono">k</kbd> move,{" "}
          <kbd className="rounded border border-line-strong bg-surface px-1 font-mono">Enter</kbd> opens
          {canReview && (
            <>
              , <kbd className="rounded border border-line-strong bg-surface px-1 font-mono">x</kbd> selects
            </>
          )}
          .
        </span>
      </PageHeader>
      {query.batch && <BatchBanner batchId={query.batch} onClear={() => update({ batch: undefined })} />}
      <FileFilters query={query} onChange={update} onClear={() => setParams(new URLSearchParams())} />
      {canReview && selectedIds.size > 0 && <BulkReviewBar ids={[...selectedIds]} onDone={clearSelection} onClear={clearSelection} />}
      {files.isPending && <LoadingState label="Loading files" />}
      {files.isError && <ErrorState title="The file list could not load" message={describeError(files.error)} onRetry={() => void files.refetch()} />}
      {files.data && items.length === 0 && (
        <EmptyState title={hasFilters(query) ? "No files match these filters" : "No files yet"}>
          {hasFilters(query) ? "Loosen a filter or clear them all." : "Files appear here once a batch has been uploaded with the tidemark CLI."}
        </EmptyState>
      )}
      {files.data && items.length > 0 && (
        <>
          <FileTable
            items={items}
            activeIndex={activeIndex}
            onActivate={(index) => setActive({ view, value: index })}
            sort={query.sort}
            order={query.order ?? "asc"}
            onSort={(sort, order) => update({ sort, order })}
            selection={canReview ? { ids: selectedIds, onToggle: toggle, onToggleAll: toggleAll } : undefined}
            isRefreshing={files.isPlaceholderData}
            linkSearch={linkSearch}
          />
          <Pagination
            page={page}
            pageSize={pageSize}
            total={total}
            totalIsEstimate={files.data.totalIsEstimate}
            hasNext={nextQuery !== null}
            itemCount={items.length}
            noun="files"
            onPageChange={(p) => goTo(p < page ? previousQuery : nextQuery)}
            onPageSizeChange={(size) => update({ pageSize: size })}
          />
        </>
      )}
    </>
  );
}
