import { useState } from "react";
import { Link, useParams } from "react-router";
import { ApiError, describeError } from "../api/client.ts";
import { useFile } from "../api/files.ts";
import { ReviewStateBadge, VerdictBadge } from "../components/badges.tsx";
import { PageHeader } from "../components/PageHeader.tsx";
import { EmptyState, ErrorState, LoadingState } from "../components/states.tsx";
import { BandEnergyChart } from "../components/file/BandEnergyChart.tsx";
import { CommentsThread } from "../components/file/CommentsThread.tsx";
import { FindingsTable } from "../components/file/FindingsTable.tsx";
import { ListeningCaution } from "../components/file/ListeningCaution.tsx";
import { FixityHistory } from "../components/file/FixityHistory.tsx";
import { MetricsPanels } from "../components/file/MetricsPanels.tsx";
import { ReviewPanel } from "../components/file/ReviewPanel.tsx";
import { SameRecordingPanel } from "../components/file/SameRecordingPanel.tsx";
import { SpectrogramView } from "../components/file/SpectrogramView.tsx";
import { formatAudioFormat, formatDuration } from "../format/units.ts";

export function FileDetailPage() {
  const { fileId } = useParams();
  const id = Number(fileId);
  const file = useFile(id);
  const [selectedFindingId, setSelectedFindingId] = useState<number | null>(null);

  if (!Number.isInteger(id) || id <= 0 || (file.error instanceof ApiError && file.error.status === 404)) {
    return (
      <EmptyState title="No such file">
        There is no file result #{fileId}. <Link to="/files" className="text-harbour underline">Back to the files</Link>
      </EmptyState>
    );
  }
  if (file.isPending) return <LoadingState label="Loading the file" />;
  if (file.isError) return <ErrorState title="The file could not load" message={describeError(file.error)} onRetry={() => void file.refetch()} />;

  const f = file.data;
  return (
    <>
      <nav aria-label="Breadcrumb" className="mb-2 text-sm">
        <Link to="/files" className="text-harbour underline underline-offset-2">
          Files
        </Link>
        <span aria-hidden="true" className="mx-1.5 text-ink-muted">/</span>
        <Link to={`/files?batch=${f.batchId}`} className="text-harbour underline underline-offset-2">
          Batch #{f.batchId}
        </Link>
      </nav>
      <PageHeader title={<span className="break-all">{f.path}</span>}>
        <span className="flex flex-wrap items-center gap-x-3 gap-y-1 text-sm">
          <VerdictBadge verdict={f.verdict} />
          <ReviewStateBadge state={f.reviewState} />
          <span>{f.collection.name}</span>
          <span>{formatAudioFormat(f.format)}</span>
          <span>{formatDuration(f.durationSeconds)}</span>
        </span>
      </PageHeader>
      {f.error && (
        <p role="alert" className="mb-3 rounded border border-error/40 bg-error-soft px-3 py-2 text-sm">
          <strong>The scan could not read this file:</strong> {f.error.message} <span className="font-mono text-xs">({f.error.code})</span>
        </p>
      )}
      {/* One grid: on wide screens review and comments sit in a side column; narrower, they follow the
          findings, so a reviewer on a tablet reaches the controls before the long measurement panels. */}
      <div className="grid content-start items-start gap-4 lg:grid-cols-[minmax(0,1fr)_20rem]">
        <section aria-labelledby="plot-heading" className="min-w-0 lg:col-start-1">
          <h2 id="plot-heading" className="mb-2 text-lg">
            Spectrogram and waveform
          </h2>
          <SpectrogramView
            spectrogramUrl={f.spectrogramUrl}
            waveformUrl={f.waveformUrl}
            path={f.path}
            durationSeconds={f.durationSeconds}
            findings={f.findings}
            selectedId={selectedFindingId}
            onSelect={setSelectedFindingId}
          />
        </section>
        <section aria-labelledby="findings-heading" className="min-w-0 lg:col-start-1">
          <h2 id="findings-heading" className="mb-2 text-lg">
            Findings <span className="font-sans text-sm font-normal text-ink-muted">({f.findings.length})</span>
          </h2>
          <ListeningCaution findings={f.findings} />
          <FindingsTable findings={f.findings} selectedId={selectedFindingId} onSelect={setSelectedFindingId} />
        </section>
        <aside className="space-y-4 md:grid md:grid-cols-2 md:gap-4 md:space-y-0 lg:col-start-2 lg:row-span-5 lg:row-start-1 lg:block lg:space-y-4" aria-label="Review and comments">
          <ReviewPanel file={f} />
          <CommentsThread fileId={f.id} comments={f.comments} />
        </aside>
        <section aria-labelledby="metrics-heading" className="min-w-0 lg:col-start-1">
          <h2 id="metrics-heading" className="mb-2 text-lg">
            Measurements
          </h2>
          <MetricsPanels file={f} />
        </section>
        {f.metrics && (
          <section aria-labelledby="bands-heading" className="min-w-0 rounded-md border border-line bg-surface p-3 lg:col-start-1">
            <h2 id="bands-heading" className="mb-2 text-lg">
              Band energy
            </h2>
            <BandEnergyChart bands={f.metrics.bands} />
          </section>
        )}
        <div className="min-w-0 lg:col-start-1">
          <FixityHistory file={f} />
        </div>
        <div className="min-w-0 lg:col-start-1">
          <SameRecordingPanel fileId={f.id} />
        </div>
      </div>
    </>
  );
}
