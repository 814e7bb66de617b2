import { Link } from "react-router-dom";
import type { DuplicateMatchDto } from "@tidemark/shared/types/api";
import { describeError } from "../../api/client.ts";
import { useFileDuplicates } from "../../api/duplicates.ts";
import { formatDuration, formatTimestamp } from "../../format/units.ts";

/** Signed seconds plus the same fact in words, since "offset" alone does not say which file starts first. */
function OffsetCell({ offsetSeconds }: { offsetSeconds: number }) {
  const signed = `${offsetSeconds >= 0 ? "+" : "\u2212"}${Math.abs(offsetSeconds).toFixed(2)} s`;
  const words =
    Math.abs(offsetSeconds) < 0.05
      ? "both start together"
      : offsetSeconds > 0
        ? `this file starts at ${formatTimestamp(offsetSeconds)} in it`
        : `it starts at ${formatTimestamp(-offsetSeconds)} in this file`;
  return (
    <>
      <span className="font-mono text-xs whitespace-nowrap">{signed}</span>
      <span className="block text-xs text-ink-muted">{words}</span>
    </>
  );
}

function MatchesTable({ items }: { items: DuplicateMatchDto[] }) {
  return (
    <table className="w-full text-sm">
      <thead>
        <tr className="border-b border-line text-ink-muted">
          <th scope="col" className="py-1 pr-2 text-left font-medium">
            File
          </th>
          <th scope="col" className="py-1 pr-2 text-right font-medium" title="Landmark hashes the two files share at one time offset">
            Score
          </th>
          <th scope="col" className="py-1 text-left font-medium">
            Offset
          </th>
        </tr>
      </thead>
      <tbody>
        {items.map((m) => (
          <tr key={m.fileResultId} className="border-b border-line align-top last:border-b-0">
            <td className="py-1 pr-2">
              <Link to={`/files/${m.fileResultId}`} className="break-all text-harbour underline underline-offset-2">
                {m.path}
              </Link>
              <span className="block text-xs text-ink-muted">
                {m.collection.name} · batch #{m.batchId} · {formatDuration(m.durationSeconds)}
              </span>
            </td>
            <td className="py-1 pr-2 text-right tabular-nums">{m.score}</td>
            <td className="py-1">
              <OffsetCell offsetSeconds={m.offsetSeconds} />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Other file results that hold the same audio, found by the fingerprint at ingest (possible duplicates). */
export function SameRecordingPanel({ fileId }: { fileId: number }) {
  const duplicates = useFileDuplicates(fileId);
  let body;
  if (duplicates.isPending) {
    body = <p className="text-sm text-ink-muted">Looking for copies…</p>;
  } else if (duplicates.isError) {
    body = (
      <p role="alert" className="text-sm text-fail">
        The list of copies could not load: {describeError(duplicates.error)}{" "}
        <button type="button" onClick={() => void duplicates.refetch()} className="underline">
          Try again
        </button>
      </p>
    );
  } else if (duplicates.data.items.length > 0) {
    body = <MatchesTable items={duplicates.data.items} />;
  } else if (duplicates.data.hasFingerprint) {
    body = <p className="text-sm text-ink-muted">No other file in the archive holds this recording.</p>;
  } else {
    body = (
      <p className="text-sm text-ink-muted">
        This scan carries no fingerprint of the current version (it was scanned by an older tidemark, or could not be read), so it was not
        compared. Re-scan the file to check it.
      </p>
    );
  }
  return (
    <section aria-labelledby="same-recording-heading" className="rounded-md border border-line bg-surface p-3">
      <h3 id="same-recording-heading" className="mb-1 text-base">
        Same recording elsewhere
      </h3>
      {body}
    </section>
  );
}
