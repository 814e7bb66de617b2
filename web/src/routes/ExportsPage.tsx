import { useState, type ReactNode } from "react";
import { useBatches, useCollections } from "../api/batches.ts";
import { describeError } from "../api/client.ts";
import { exportUrls } from "../api/exports.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { SelectField, TextField } from "../components/fields.tsx";
import { DownloadIcon } from "../components/icons.tsx";
import { InlineError } from "../components/states.tsx";
import { formatDate } from "../format/units.ts";

const downloadClass =
  "inline-flex items-center gap-1.5 rounded bg-harbour px-3.5 py-1.5 font-medium text-white hover:bg-harbour-strong aria-disabled:pointer-events-none aria-disabled:opacity-50";

function DownloadLink({ href, children, disabled = false }: { href: string; children: string; disabled?: boolean }) {
  if (disabled) {
    return (
      <span aria-disabled="true" className={downloadClass}>
        <DownloadIcon /> {children}
      </span>
    );
  }
  return (
    <a href={href} download className={downloadClass}>
      <DownloadIcon /> {children}
    </a>
  );
}

function Card({ title, children, description }: { title: string; description: string; children: ReactNode }) {
  return (
    <section aria-label={title} className="rounded-md border border-line bg-surface p-4">
      <h2 className="text-lg">{title}</h2>
      <p className="mb-3 text-sm text-ink-muted">{description}</p>
      {children}
    </section>
  );
}

function FilesCsvCard() {
  const collections = useCollections();
  const [collection, setCollection] = useState<number | undefined>(undefined);
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const badRange = Boolean(from && to && from > to);
  return (
    <Card title="File results (CSV)" description="One row per file result with verdict, review state, key measurements and findings.">
      <div className="flex flex-wrap items-end gap-3">
        <SelectField label="Collection" value={collection ?? ""} onChange={(e) => setCollection(e.target.value ? Number(e.target.value) : undefined)} className="w-60">
          <option value="">All collections</option>
          {collections.data?.map((c) => (
            <option key={c.id} value={c.id}>
              {c.name}
            </option>
          ))}
        </SelectField>
        <TextField label="Scanned from" type="date" value={from} onChange={(e) => setFrom(e.target.value)} className="w-44" />
        <TextField label="Scanned until" type="date" value={to} onChange={(e) => setTo(e.target.value)} className="w-44" />
        <DownloadLink href={exportUrls.filesCsv({ collection, from: from || undefined, to: to || undefined })} disabled={badRange}>
          Download CSV
        </DownloadLink>
      </div>
      {collections.isError && <InlineError message={`The collection list could not load: ${describeError(collections.error)}`} />}
      {badRange && <InlineError message="The start date is after the end date." />}
    </Card>
  );
}

function BatchReportCard() {
  const batches = useBatches({ page: 1, pageSize: 100, sort: "startedAt", order: "desc" });
  const [batchId, setBatchId] = useState<number | undefined>(undefined);
  return (
    <Card title="Batch report (JSON or PDF)" description="Everything recorded for one scan run: profile, tool version, every file and finding.">
      <div className="flex flex-wrap items-end gap-3">
        <SelectField label="Batch" value={batchId ?? ""} onChange={(e) => setBatchId(e.target.value ? Number(e.target.value) : undefined)} className="w-96 max-w-full" disabled={batches.isPending}>
          <option value="">{batches.isPending ? "Loading batches…" : "Choose a batch"}</option>
          {batches.data?.items.map((b) => (
            <option key={b.id} value={b.id}>
              #{b.id} · {b.collection.name} · {formatDate(b.startedAt)} · {b.counts.fail} failing
            </option>
          ))}
        </SelectField>
        <DownloadLink href={batchId ? exportUrls.batchJson(batchId) : "#"} disabled={!batchId}>
          JSON
        </DownloadLink>
        <DownloadLink href={batchId ? exportUrls.batchPdf(batchId) : "#"} disabled={!batchId}>
          PDF
        </DownloadLink>
      </div>
      {batches.isError && <InlineError message={`The batch list could not load: ${describeError(batches.error)}`} />}
      {batches.data && batches.data.items.length === 0 && <p className="mt-2 text-sm text-ink-muted">No batches have been uploaded yet.</p>}
    </Card>
  );
}

function AuditCsvCard() {
  return (
    <Card title="Audit trail (CSV)" description="Every write the server recorded: who, what, when, with the request id.">
      <DownloadLink href={exportUrls.auditCsv()}>Download audit CSV</DownloadLink>
    </Card>
  );
}

export function ExportsPage() {
  return (
    <>
      <PageHeader title="Exports">Reports for the archive's records. Downloads include only what your role may see.</PageHeader>
      <div className="grid gap-4 xl:grid-cols-2">
        <FilesCsvCard />
        <BatchReportCard />
        <AuditCsvCard />
      </div>
    </>
  );
}
