import { Link } from "react-router-dom";
import type { FileDetailDto, FixityCheckDto } from "@tidemark/shared/types/api";
import { formatDateTime } from "../../format/units.ts";

const OUTCOME_TEXT: Record<FixityCheckDto["outcome"], string> = {
  unchanged: "same",
  changed: "changed",
  missing: "missing",
  unreadable: "unreadable",
  moved: "moved",
};

/** `tidemark verify --upload` runs over this path: when, by whom and with which token, and the outcome. */
function FixityChecks({ checks }: { checks: FixityCheckDto[] }) {
  if (checks.length === 0) return <p className="mt-2 text-sm text-ink-muted">No fixity check (tidemark verify --upload) has reported on this path yet.</p>;
  return (
    <table className="mt-2 w-full text-sm" aria-label="Fixity checks">
      <caption className="mb-1 text-left font-semibold">Checks by tidemark verify</caption>
      <thead>
        <tr className="border-b border-line text-ink-muted">
          <th scope="col" className="py-1 text-left font-medium">
            Checked
          </th>
          <th scope="col" className="py-1 text-left font-medium">
            By
          </th>
          <th scope="col" className="py-1 text-left font-medium">
            Outcome
          </th>
        </tr>
      </thead>
      <tbody>
        {checks.map((c) => (
          <tr key={c.id} className="border-b border-line last:border-b-0">
            <td className="py-1 whitespace-nowrap">{formatDateTime(c.checkedAt)}</td>
            <td className="py-1">
              {c.by.name}
              <span className="text-ink-muted">{c.tokenName ? ` (token “${c.tokenName}”)` : ""}</span>
            </td>
            <td className={`py-1 ${c.outcome === "unchanged" ? "text-pass" : c.outcome === "moved" ? "" : "font-semibold text-fail"}`} title={c.actualSha256 ?? c.detail ?? undefined}>
              {OUTCOME_TEXT[c.outcome]}
              {c.movedTo ? ` to ${c.movedTo}` : ""}
              {c.detail ? <span className="text-ink-muted"> ({c.detail})</span> : null}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Every scan of this path in its collection; a changed checksum is the one thing an auditor must not miss. */
export function FixityHistory({ file }: { file: FileDetailDto }) {
  const entries = file.fixityHistory;
  const changes = entries.filter((e) => e.changed).length;
  return (
    <section aria-labelledby="fixity-heading" className="rounded-md border border-line bg-surface p-3">
      <h3 id="fixity-heading" className="mb-1 text-base">
        Fixity history
      </h3>
      <p className="mb-2 text-sm break-all">
        <span className="text-ink-muted">SHA-256 now: </span>
        <code className="font-mono text-xs">{file.sha256 ?? "not computed"}</code>
      </p>
      {entries.length <= 1 ? (
        <p className="text-sm text-ink-muted">This is the only scan of this path so far.</p>
      ) : (
        <>
          {changes > 0 && (
            <p role="status" className="mb-2 rounded bg-fail-soft px-2 py-1 text-sm font-semibold text-fail">
              The checksum changed {changes} {changes === 1 ? "time" : "times"} between scans.
            </p>
          )}
          <table className="w-full text-sm">
            <thead>
              <tr className="border-b border-line text-ink-muted">
                <th scope="col" className="py-1 text-left font-medium">
                  Scanned
                </th>
                <th scope="col" className="py-1 text-left font-medium">
                  Batch
                </th>
                <th scope="col" className="py-1 text-left font-medium">
                  SHA-256
                </th>
                <th scope="col" className="py-1 text-left font-medium">
                  Fixity
                </th>
              </tr>
            </thead>
            <tbody>
              {entries.map((entry) => (
                <tr key={entry.fileResultId} className={`border-b border-line last:border-b-0 ${entry.fileResultId === file.id ? "font-semibold" : ""}`}>
                  <td className="py-1 whitespace-nowrap">{formatDateTime(entry.scannedAt)}</td>
                  <td className="py-1">
                    {entry.fileResultId === file.id ? (
                      `#${entry.batchId} (this one)`
                    ) : (
                      <Link to={`/files/${entry.fileResultId}`} className="text-harbour underline underline-offset-2">
                        #{entry.batchId}
                      </Link>
                    )}
                  </td>
                  <td className="py-1 font-mono text-xs" title={entry.sha256 ?? undefined}>
                    {entry.sha256 ? `${entry.sha256.slice(0, 12)}…` : "—"}
                  </td>
                  <td className={`py-1 ${entry.changed ? "font-semibold text-fail" : "text-pass"}`}>{entry.changed ? "changed" : "same"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      )}
      <FixityChecks checks={file.fixityChecks} />
    </section>
  );
}
