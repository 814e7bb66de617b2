import { Link, useParams } from "react-router-dom";
import { useBatch, useBatchOverview } from "../api/batches.ts";
import { ApiError, describeError } from "../api/client.ts";
import { BatchOverviewStrip } from "../components/batches/BatchOverviewStrip.tsx";
import { filesLink } from "../components/files/fileQueryParams.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { EmptyState, ErrorState, LoadingState } from "../components/states.tsx";
import { formatDateTime } from "../format/units.ts";

/** One batch: what was scanned, with which profile, and the at-a-glance strip linking into its files. */
export function BatchDetailPage() {
  const { batchId } = useParams();
  const id = Number(batchId);
  const valid = Number.isInteger(id) && id > 0;
  const batch = useBatch(valid ? id : undefined);
  const overview = useBatchOverview(valid ? id : 0);

  if (!valid || (batch.error instanceof ApiError && batch.error.status === 404)) {
    return (
      <EmptyState title="No such batch">
        There is no batch #{batchId}. <Link to="/batches" className="text-harbour underline">Back to the batches</Link>
      </EmptyState>
    );
  }
  if (batch.isPending) return <LoadingState label="Loading the batch" />;
  if (batch.isError) return <ErrorState title="The batch could not load" message={describeError(batch.error)} onRetry={() => void batch.refetch()} />;
  const b = batch.data;
  return (
    <>
      <nav aria-label="Breadcrumb" className="mb-2 text-sm">
        <Link to="/batches" className="text-harbour underline underline-offset-2">
          Batches
        </Link>
      </nav>
      <PageHeader title={`Batch #${b.id}`}>
        <span className="flex flex-wrap items-center gap-x-3 gap-y-1 text-sm">
          <span>{b.collection.name}</span>
          <span>
            profile <span className="font-mono text-xs">{b.profileName}</span>
          </span>
          <span>scanned {formatDateTime(b.startedAt)}</span>
          <span>by {b.uploader.name || b.uploader.email}</span>
          <span>
            {b.counts.files} files: {b.counts.pass} pass, {b.counts.warn} warn, {b.counts.fail} fail, {b.counts.error} error
          </span>
          <Link to={filesLink({ batch: b.id })} className="font-medium text-harbour-strong underline underline-offset-2">
            Review its files
          </Link>
        </span>
      </PageHeader>
      {overview.isPending && <LoadingState label="Loading the overview" />}
      {overview.isError && <ErrorState title="The overview could not load" message={describeError(overview.error)} onRetry={() => void overview.refetch()} />}
      {overview.data && <BatchOverviewStrip overview={overview.data} />}
    </>
  );
}
