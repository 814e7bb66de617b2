import { useBatch } from "../../api/batches.ts";
import { describeError } from "../../api/client.ts";
import { formatDateTime } from "../../format/units.ts";

/** When the table is narrowed to one batch, say which one. */
export function BatchBanner({ batchId, onClear }: { batchId: number; onClear: () => void }) {
  const batch = useBatch(batchId);
  return (
    <div className="mb-3 flex flex-wrap items-center gap-x-4 gap-y-1 rounded-md border border-line bg-surface px-3 py-2 text-sm">
      <span className="font-semibold">Batch #{batchId}</span>
      {batch.isPending && <span className="text-ink-muted">loading details…</span>}
      {batch.isError && <span className="text-fail">Batch details could not load: {describeError(batch.error)}</span>}
      {batch.data && (
        <>
          <span>{batch.data.collection.name}</span>
          <span className="text-ink-muted">profile {batch.data.profileName}</span>
          <span className="text-ink-muted">scanned {formatDateTime(batch.data.startedAt)}</span>
          <span className="text-ink-muted">by {batch.data.uploader.name || batch.data.uploader.email}</span>
        </>
      )}
      <button type="button" onClick={onClear} className="ml-auto text-harbour underline underline-offset-2">
        Show all batches
      </button>
    </div>
  );
}
