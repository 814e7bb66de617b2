import { useState, type ReactNode } from "react";
import { useBatches, useCollections } from "../api/batches.ts";
import { describeError } from "../api/client.ts";
import { exportUrls } from "../api/exports.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { Pagination } from "../components/Pagination.tsx";
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

const BATCH_PAGE_SIZE = 10;

/** Finds any batch: text search (number, key, collection), collection and date filters, paged on the server. */
function BatchReportCard() {
  const collections = useCollections();
  const [q, setQ] = useState("");
  const [collection, setCollection] = useState<number | undefined>(undefined);
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const [page, setPage] = useState(1);
  const badRange = Boolean(from && to && from > to);
  const batches = useBatches({
    q: q.trim() || undefined,
    collection,
    from: badRange ? undefined : from || undefined,
    to: badRange ? undefined : to || undefined,
    page,
    pageSize: BATCH_PAGE_SIZE,
    sort: "startedAt",
    order: "desc",
  });
  const [batchId, setBatchId] = useState<number | undefined>(undefined);
  const filter = <T,>(set: (v: T) => void) => (v: T) => {
    set(v);
    setPage(1);
  };
  return (
    <Card title="Batch report (JSON, PDF or PREMIS)" description="Everything recorded for one scan run: profile, tool version, every file and finding; PREMIS 3.0 for preservation systems.">
      <div className="flex flex-wrap items-end gap-3">
        <TextField label="Find a batch" placeholder="number, batch key or collection" value={q} onChange={(e) => filter(setQ)(e.target.value)} className="w-64" />
        <SelectField label="Collection" value={collection ?? ""} onChange={(e) => filter(setCollection)(e.target.value ? Number(e.target.value) : undefined)} className="w-52">
          <option value="">All collections</option>
          {collections.data?.map((c) => (
            <option key={c.id} value={c.id}>
              {c.name}
            </option>
          ))}
        </SelectField>
        <TextField label="Scanned from" type="date" value={from} onChange={(e) => filter(setFrom)(e.target.value)} className="w-40" />
        <TextField label="Scanned until" type="date" value={to} onChange={(e) => filter(setTo)(e.target.value)} className="w-40" />
      </div>
      {badRange && <InlineError message="The start date is after the end date." />}
      {batches.isError && <InlineError message={`The batch list could not load: ${describeError(batches.error)}`} />}
      {batches.data && batches.data.total === 0 && <p className="mt-2 text-sm text-ink-muted">No batch matches.</p>}
      {batches.data && batches.data.items.length > 0 && (
        <fieldset className="mt-3">
          <legend className="sr-only">Batch</legend>
          <ul className="divide-y divide-line rounded border border-line">
            {batches.data.items.map((b) => (
              <li key={b.id}>
                <label className="flex cursor-pointer items-center gap-2 px-3 py-1.5 text-sm">
                  <input type="radio" name="export-batch" value={b.id} checked={batchId === b.id} onChange={() => setBatchId(b.id)} />
                  <span>
                    #{b.id} · {b.batchKey} · {b.collection.name} · {formatDate(b.startedAt)} · {b.counts.fail} failing
                  </span>
                </label>
              </li>
            ))}
          </ul>
          <Pagination page={batches.data.page} pageSize={batches.data.pageSize} total={batches.data.total} noun="batches" onPageChange={setPage} />
        </fieldset>
      )}
      <div className="flex flex-wrap items-end gap-3">
        <DownloadLink href={batchId ? exportUrls.batchJson(batchId) : "#"} disabled={!batchId}>
          JSON
        </DownloadLink>
        <DownloadLink href={batchId ? exportUrls.batchPdf(batchId) : "#"} disabled={!batchId}>
          PDF
        </DownloadLink>
        <DownloadLink href={batchId ? exportUrls.batchPremis(batchId) : "#"} disabled={!batchId}>
          PREMIS XML
        </DownloadLink>
      </div>
    </Card>
  );
}

function CollectionExportCard() {
  const collections = useCollections();
  const [collection, setCollection] = useState<number | undefined>(undefined);
  return (
    <Card title="Whole collection" description="Every batch of one collection: all scans as JSON, every file result as CSV, or PREMIS 3.0 with each file's fixity history.">
      <div className="flex flex-wrap items-end gap-3">
        <SelectField label="Collection" value={collection ?? ""} onChange={(e) => setCollection(e.target.value ? Number(e.target.value) : undefined)} className="w-60">
          <option value="">Choose a collection</option>
          {collections.data?.map((c) => (
            <option key={c.id} value={c.id}>
              {c.name}
            </option>
          ))}
        </SelectField>
        <DownloadLink href={collection ? exportUrls.collectionJson(collection) : "#"} disabled={!collection}>
          JSON
        </DownloadLink>
        <DownloadLink href={collection ? exportUrls.collectionCsv(collection) : "#"} disabled={!collection}>
          CSV
        </DownloadLink>
        <DownloadLink href={collection ? exportUrls.collectionPremis(collection) : "#"} disabled={!collection}>
          PREMIS XML
        </DownloadLink>
      </div>
      {collections.isError && <InlineError message={`The collection list could not load: ${describeError(collections.error)}`} />}
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
        <CollectionExportCard />
        <AuditCsvCard />
      </div>
    </>
  );
}
