import { useMemo, useState, type FormEvent } from "react";
import { useSearchParams } from "react-router-dom";
import { auditQuerySchema } from "@tidemark/shared/contracts/audit";
import { readSearchParams, toSearchParams } from "@tidemark/shared/contracts/searchParams";
import type { AuditQuery } from "@tidemark/shared/types/api";
import { useAudit } from "../api/audit.ts";
import { describeError } from "../api/client.ts";
import { exportUrls } from "../api/exports.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { Pagination } from "../components/Pagination.tsx";
import { buttonClass, TextField } from "../components/fields.tsx";
import { EmptyState, ErrorState, LoadingState } from "../components/states.tsx";
import { formatDateTime } from "../format/units.ts";

const PAGE_SIZE = 50;
/** The trail shows PAGE_SIZE entries a page; the address bar carries the filters and the page. */
const auditViewSchema = auditQuerySchema.omit({ pageSize: true });

const parseAuditQuery = (params: URLSearchParams): AuditQuery => ({ ...readSearchParams(auditViewSchema, params), pageSize: PAGE_SIZE });
const toParams = (query: AuditQuery): URLSearchParams => toSearchParams(auditViewSchema, query, { omitDefaults: true });

function AuditFilters({ query, onApply }: { query: AuditQuery; onApply: (q: AuditQuery) => void }) {
  const [actor, setActor] = useState(query.actor ?? "");
  const [action, setAction] = useState(query.action ?? "");
  const [from, setFrom] = useState(query.from ?? "");
  const [to, setTo] = useState(query.to ?? "");
  function submit(event: FormEvent) {
    event.preventDefault();
    onApply({ actor: actor.trim() || undefined, action: action.trim() || undefined, from: from || undefined, to: to || undefined, page: 1, pageSize: PAGE_SIZE });
  }
  return (
    <form onSubmit={submit} aria-label="Filter the audit trail" className="mb-3 flex flex-wrap items-end gap-3 rounded-md border border-line bg-surface p-3">
      <TextField label="Actor" hint="(e-mail or user id)" value={actor} onChange={(e) => setActor(e.target.value)} className="w-60" />
      <TextField label="Action" placeholder="e.g. file. or token.create" value={action} onChange={(e) => setAction(e.target.value)} className="w-48" />
      <TextField label="From" type="date" value={from} onChange={(e) => setFrom(e.target.value)} className="w-44" />
      <TextField label="Until" type="date" value={to} onChange={(e) => setTo(e.target.value)} className="w-44" />
      <button type="submit" className={buttonClass.primary}>
        Apply filters
      </button>
    </form>
  );
}

export function AuditPage() {
  const [params, setParams] = useSearchParams();
  const query = useMemo(() => parseAuditQuery(params), [params]);
  const audit = useAudit(query);
  const filtered = Boolean(query.actor || query.action || query.from || query.to);

  return (
    <>
      <PageHeader
        title="Audit trail"
        actions={
          <a href={exportUrls.auditCsv({ actor: query.actor, action: query.action, from: query.from, to: query.to })} download className={buttonClass.secondary}>
            {filtered ? "Download these entries as CSV" : "Download as CSV"}
          </a>
        }
      >
        Every write to the server, newest first.
      </PageHeader>
      <AuditFilters key={params.toString()} query={query} onApply={(q) => setParams(toParams(q))} />
      {audit.isPending && <LoadingState label="Loading the audit trail" />}
      {audit.isError && <ErrorState title="The audit trail could not load" message={describeError(audit.error)} onRetry={() => void audit.refetch()} />}
      {audit.data && audit.data.items.length === 0 && <EmptyState title={filtered ? "No entries match these filters" : "No audit entries yet"} />}
      {audit.data && audit.data.items.length > 0 && (
        <>
          <div className="overflow-x-auto rounded-md border border-line bg-surface">
            <table className="w-full min-w-[720px] text-sm">
              <thead className="border-b border-line bg-sunken">
                <tr>
                  {["When", "Actor", "Action", "Target", "Details", "Request"].map((h) => (
                    <th key={h} scope="col" className="px-2 py-2 text-left font-semibold">
                      {h}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {audit.data.items.map((entry) => (
                  <tr key={entry.id} className="border-b border-line align-top last:border-b-0">
                    <td className="px-2 py-1.5 whitespace-nowrap">{formatDateTime(entry.createdAt)}</td>
                    <td className="px-2 py-1.5">{entry.actor ? entry.actor.email : <span className="text-ink-muted">system</span>}</td>
                    <td className="px-2 py-1.5 font-mono text-xs">{entry.action}</td>
                    <td className="px-2 py-1.5">
                      {entry.targetType}
                      {entry.targetId && <span className="text-ink-muted"> #{entry.targetId}</span>}
                    </td>
                    <td className="max-w-80 px-2 py-1.5 font-mono text-xs break-all text-ink-muted">{entry.details ? JSON.stringify(entry.details) : ""}</td>
                    <td className="px-2 py-1.5 font-mono text-xs text-ink-muted">{entry.requestId?.slice(0, 8) ?? ""}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <Pagination page={query.page ?? 1} pageSize={PAGE_SIZE} total={audit.data.total} noun="entries" onPageChange={(page) => setParams(toParams({ ...query, page }))} />
        </>
      )}
    </>
  );
}
