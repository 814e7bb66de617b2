import { useCallback, useMemo, useRef, useState } from "react";
import { Link, useNavigate, useParams, useSearchParams } from "react-router-dom";
import type { FileDetailDto, FindingDto } from "@tidemark/shared/types/api";
import { ApiError, describeError } from "../api/client.ts";
import { useFile, useLevelGrid, useLoudnessCurve } from "../api/files.ts";
import { ReviewStateBadge, VerdictBadge } from "../components/badges.tsx";
import { PageHeader } from "../components/PageHeader.tsx";
import { EmptyState, ErrorState, LoadingState } from "../components/states.tsx";
import { BandEnergyChart } from "../components/file/BandEnergyChart.tsx";
import { CommentsThread } from "../components/file/CommentsThread.tsx";
import { FindingsTable } from "../components/file/FindingsTable.tsx";
import { ListeningCaution } from "../components/file/ListeningCaution.tsx";
import { FixityHistory } from "../components/file/FixityHistory.tsx";
import { MetricsPanels } from "../components/file/MetricsPanels.tsx";
import { MetadataPanel } from "../components/file/MetadataPanel.tsx";
import { ReviewPanel } from "../components/file/ReviewPanel.tsx";
import { SameRecordingPanel } from "../components/file/SameRecordingPanel.tsx";
import { SpectrogramView } from "../components/file/SpectrogramView.tsx";
import { CloseupView, type CloseupHandle, type CloseupJump } from "../components/file/CloseupView.tsx";
import { LoudnessCurveChart } from "../components/file/LoudnessCurveChart.tsx";
import type { CommentAnchor } from "../components/file/CommentsThread.tsx";
import type { ReviewHandle } from "../components/file/ReviewPanel.tsx";
import { fileQueryToParams, parseFileQuery } from "../components/files/fileQueryParams.ts";
import { formatAudioFormat, formatDuration, formatTimestamp } from "../format/units.ts";
import { FILE_SHORTCUTS, useFileShortcuts } from "../hooks/useFileShortcuts.ts";
import { useFileNeighbours, type Neighbour } from "../hooks/useFileNeighbours.ts";
import { useWarmCloseups } from "../hooks/useWarmCloseups.ts";
import { roughly } from "../format/approximate.ts";

const OMITTED_REASON: Record<FileDetailDto["closeupsOmitted"][number]["reason"], string> = {
  cap: "The profile keeps close-ups for the most severe findings only, and this one was past the cap.",
  budget: "The per-file budget for close-ups was spent before this finding.",
  "not-timed": "This finding concerns the whole file, so it has no window to show.",
};

/** Findings on the time axis in order, for next/previous. */
function timedInOrder(findings: FindingDto[]): FindingDto[] {
  return findings.filter((f) => f.startSeconds !== null).sort((a, b) => (a.startSeconds as number) - (b.startSeconds as number) || a.id - b.id);
}

function neighbourHref(n: Neighbour): string {
  const search = fileQueryToParams(n.query).toString();
  return `/files/${n.id}${search ? `?${search}` : ""}`;
}

function ShortcutHelp({ onClose }: { onClose: () => void }) {
  return (
    <section role="dialog" aria-labelledby="shortcut-help-title" className="mb-3 rounded-md border border-harbour/40 bg-harbour-soft p-3 text-sm">
      <div className="flex items-start justify-between gap-2">
        <h2 id="shortcut-help-title" className="text-base">
          Keyboard shortcuts
        </h2>
        <button type="button" onClick={onClose} className="rounded border border-line-strong bg-surface px-2 py-0.5" aria-label="Close the shortcut help">
          Close
        </button>
      </div>
      <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1">
        {FILE_SHORTCUTS.map((s) => (
          <div key={s.keys.join()} className="contents">
            <dt>
              {s.keys.map((k) => (
                <kbd key={k} className="rounded border border-line-strong bg-surface px-1 font-mono">
                  {k}
                </kbd>
              ))}
            </dt>
            <dd>{s.does}</dd>
          </div>
        ))}
      </dl>
      <p className="mt-2 text-ink-muted">Keys do nothing while you type in a box; Escape closes this help.</p>
    </section>
  );
}

export function FileDetailPage() {
  const { fileId } = useParams();
  const id = Number(fileId);
  const file = useFile(id);

  if (!Number.isInteger(id) || id <= 0 || (file.error instanceof ApiError && file.error.status === 404)) {
    return (
      <EmptyState title="No such file">
        There is no file result #{fileId}. <Link to="/files" className="text-harbour underline">Back to the files</Link>
      </EmptyState>
    );
  }
  if (file.isPending) return <LoadingState label="Loading the file" />;
  if (file.isError) return <ErrorState title="The file could not load" message={describeError(file.error)} onRetry={() => void file.refetch()} />;
  // Keyed by file, so moving to the next file starts with nothing selected and a fresh player.
  return <FileReview key={file.data.id} f={file.data} />;
}

function FileReview({ f }: { f: FileDetailDto }) {
  const [params] = useSearchParams();
  const listQuery = useMemo(() => parseFileQuery(params), [params]);
  const listSearch = fileQueryToParams(listQuery).toString();
  const neighbours = useFileNeighbours(f.id, listQuery);
  const navigate = useNavigate();
  const levelGrid = useLevelGrid(f.id, f.levelGridUrl ?? null);
  const curve = useLoudnessCurve(f.id, f.loudnessCurveUrl ?? null);
  const closeups = useMemo(() => f.closeups ?? [], [f.closeups]);
  useWarmCloseups(closeups);

  const [selectedFindingId, setSelectedFindingId] = useState<number | null>(null);
  /** Set by a comment link: which close-up to open and where to put the playhead. */
  const [jump, setJump] = useState<{ closeupIndex: number; target: CloseupJump } | null>(null);
  const [helpOpen, setHelpOpen] = useState(false);
  const [anchor, setAnchor] = useState<CommentAnchor | null>(null);
  const closeupRef = useRef<CloseupHandle>(null);
  const reviewRef = useRef<ReviewHandle>(null);

  const openCloseup =
    jump !== null
      ? closeups.find((c) => c.index === jump.closeupIndex)
      : selectedFindingId !== null
        ? closeups.find((c) => c.findingIds.includes(selectedFindingId))
        : undefined;
  const selectedFinding = f.findings.find((x) => x.id === selectedFindingId) ?? null;
  const omitted = selectedFindingId !== null ? (f.closeupsOmitted ?? []).find((o) => o.findingId === selectedFindingId) : undefined;

  const selectFinding = useCallback((findingId: number) => {
    setSelectedFindingId(findingId);
    setJump(null);
    setAnchor(null);
    document.getElementById("closeup-heading")?.scrollIntoView?.({ block: "nearest" });
  }, []);

  const jumpTo = useCallback(
    (seconds: number, channel: number | null) => {
      const containing = closeups.filter((c) => c.startSeconds <= seconds && seconds <= c.endSeconds);
      if (containing.length === 0) return;
      // The window whose centre is nearest, so the moment sits well inside the picture.
      const best = containing.reduce((a, b) => (Math.abs((a.startSeconds + a.endSeconds) / 2 - seconds) <= Math.abs((b.startSeconds + b.endSeconds) / 2 - seconds) ? a : b));
      const finding = f.findings.find((x) => best.findingIds.includes(x.id) && x.startSeconds !== null && x.startSeconds <= seconds && seconds <= (x.endSeconds ?? x.startSeconds));
      setSelectedFindingId(finding?.id ?? best.findingIds[0] ?? null);
      setJump({ closeupIndex: best.index, target: { seconds, channel } });
      document.getElementById("closeup-heading")?.scrollIntoView?.({ block: "nearest" });
    },
    [closeups, f.findings],
  );

  const ordered = useMemo(() => timedInOrder(f.findings), [f.findings]);
  const stepFinding = useCallback(
    (step: 1 | -1) => {
      if (ordered.length === 0) return;
      const at = ordered.findIndex((x) => x.id === selectedFindingId);
      const nextIndex = at === -1 ? (step === 1 ? 0 : ordered.length - 1) : Math.min(ordered.length - 1, Math.max(0, at + step));
      selectFinding(ordered[nextIndex].id);
    },
    [ordered, selectedFindingId, selectFinding],
  );

  const { previous, next } = neighbours;
  const shortcuts = useMemo(
    () => ({
      togglePlay: () => {
        if (!closeupRef.current) return false;
        closeupRef.current.togglePlay();
        return true;
      },
      nextFinding: () => stepFinding(1),
      previousFinding: () => stepFinding(-1),
      accept: () => reviewRef.current?.start("accepted"),
      flag: () => reviewRef.current?.start("flagged"),
      toggleLoop: () => closeupRef.current?.toggleLoop(),
      nudge: (seconds: number) => closeupRef.current?.nudge(seconds),
      previousFile: () => {
        if (previous) void navigate(neighbourHref(previous));
      },
      nextFile: () => {
        if (next) void navigate(neighbourHref(next));
      },
      toggleHelp: () => setHelpOpen((open) => !open),
      closeHelp: () => setHelpOpen(false),
    }),
    [stepFinding, navigate, previous, next],
  );
  useFileShortcuts(shortcuts);

  const onPosition = useCallback((position: CommentAnchor) => setAnchor(position), []);
  const channels = f.format?.channels ?? 1;

  return (
    <>
      <nav aria-label="Breadcrumb" className="mb-2 flex flex-wrap items-center gap-x-1.5 text-sm">
        <Link to={`/files${listSearch ? `?${listSearch}` : ""}`} className="text-harbour underline underline-offset-2">
          Files
        </Link>
        <span aria-hidden="true" className="text-ink-muted">/</span>
        <Link to={`/batches/${f.batchId}`} className="text-harbour underline underline-offset-2">
          Batch #{f.batchId}
        </Link>
        <span className="ml-auto flex items-center gap-2">
          {neighbours.position && (
            <span className="text-ink-muted">
              {neighbours.position.index} of{" "}
              {neighbours.position.totalIsEstimate ? `about ${roughly(neighbours.position.total)}` : neighbours.position.total} in the list
            </span>
          )}
          {previous ? (
            <Link to={neighbourHref(previous)} className="rounded border border-line-strong bg-surface px-2 py-0.5" aria-keyshortcuts="[" title={previous.path}>
              ← Previous file
            </Link>
          ) : (
            <span className="rounded border border-line px-2 py-0.5 text-ink-muted" aria-disabled="true">
              ← Previous file
            </span>
          )}
          {next ? (
            <Link to={neighbourHref(next)} className="rounded border border-line-strong bg-surface px-2 py-0.5" aria-keyshortcuts="]" title={next.path}>
              Next file →
            </Link>
          ) : (
            <span className="rounded border border-line px-2 py-0.5 text-ink-muted" aria-disabled="true">
              Next file →
            </span>
          )}
          <button type="button" onClick={() => setHelpOpen((o) => !o)} aria-expanded={helpOpen} aria-keyshortcuts="?" className="rounded border border-line-strong bg-surface px-2 py-0.5" aria-label="Keyboard shortcuts">
            ?
          </button>
        </span>
      </nav>
      {helpOpen && <ShortcutHelp onClose={() => setHelpOpen(false)} />}
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
            onSelect={selectFinding}
            levelGrid={levelGrid.data ?? null}
            focus={openCloseup ? { startSeconds: openCloseup.startSeconds, endSeconds: openCloseup.endSeconds, playheadSeconds: anchor?.seconds ?? null } : null}
          />
          {levelGrid.isError && <p className="mt-1 text-sm text-fail">The level read-out is unavailable: {describeError(levelGrid.error)}</p>}
        </section>
        <section aria-labelledby="closeup-heading" className="min-w-0 lg:col-start-1">
          <h2 id="closeup-heading" className="mb-2 text-lg">
            Close-up
            {selectedFinding && (
              <span className="font-sans text-sm font-normal text-ink-muted">
                {" "}
                · {selectedFinding.code} at {formatTimestamp(selectedFinding.startSeconds)}
                {selectedFinding.channel !== null ? `, channel ${selectedFinding.channel + 1}` : ""}
              </span>
            )}
          </h2>
          <ListeningCaution findings={f.findings} />
          {openCloseup ? (
            <CloseupView
              key={openCloseup.index}
              ref={closeupRef}
              closeup={openCloseup}
              findings={f.findings}
              selectedFindingId={selectedFindingId}
              channels={channels}
              path={f.path}
              jump={jump?.closeupIndex === openCloseup.index ? jump.target : null}
              onPosition={onPosition}
            />
          ) : (
            <p className="rounded-md border border-dashed border-line-strong bg-surface px-4 py-4 text-sm text-ink-muted">
              {selectedFindingId === null
                ? closeups.length > 0
                  ? "Pick a finding (in the table, on the spectrogram, or with n) to see and hear it up close."
                  : ordered.length === 0
                    ? "No finding has a time in this file, so there is nothing to zoom into."
                    : "This scan has no close-ups: it was made with --no-closeups or by an older version of the scanner."
                : omitted
                  ? `No close-up for this finding. ${OMITTED_REASON[omitted.reason]}`
                  : "No close-up was made for this finding."}
            </p>
          )}
        </section>
        <section aria-labelledby="findings-heading" className="min-w-0 lg:col-start-1">
          <h2 id="findings-heading" className="mb-2 text-lg">
            Findings <span className="font-sans text-sm font-normal text-ink-muted">({f.findings.length})</span>
          </h2>
          <FindingsTable findings={f.findings} selectedId={selectedFindingId} onSelect={selectFinding} />
        </section>
        <aside className="space-y-4 md:grid md:grid-cols-2 md:gap-4 md:space-y-0 lg:col-start-2 lg:row-span-6 lg:row-start-1 lg:block lg:space-y-4" aria-label="Review and comments">
          <ReviewPanel file={f} ref={reviewRef} />
          <CommentsThread
            fileId={f.id}
            comments={f.comments}
            anchor={openCloseup ? anchor : null}
            onJump={jumpTo}
            canJump={(seconds) => closeups.some((c) => c.startSeconds <= seconds && seconds <= c.endSeconds)}
          />
        </aside>
        {f.loudnessCurveUrl && (
          <section aria-labelledby="loudness-heading" className="min-w-0 rounded-md border border-line bg-surface p-3 lg:col-start-1">
            <h2 id="loudness-heading" className="mb-2 text-lg">
              Loudness over time
            </h2>
            {curve.isPending && <LoadingState label="Loading the loudness curve" />}
            {curve.isError && <p className="text-sm text-fail">The loudness curve could not load: {describeError(curve.error)}</p>}
            {curve.data && <LoudnessCurveChart curve={curve.data} limits={f.profileLimits ?? null} findings={f.findings} selectedId={selectedFindingId} />}
          </section>
        )}
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
        <MetadataPanel file={f} />
        <div className="min-w-0 lg:col-start-1">
          <SameRecordingPanel fileId={f.id} />
        </div>
      </div>
    </>
  );
}
