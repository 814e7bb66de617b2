import { Link, useParams } from "react-router-dom";
import type { ScanJobDto, ScanRunDetailDto } from "@tidemark/shared/types/api";
import { describeError } from "../api/client.ts";
import { useRequeueJob, useRetryJob, useRetryRun, useRun } from "../api/runs.ts";
import { useCan } from "../auth/currentUser.ts";
import { PageHeader } from "../components/PageHeader.tsx";
import { buttonClass } from "../components/fields.tsx";
import { filesLink } from "../components/files/fileQueryParams.ts";
import { JobsTable } from "../components/runs/JobsTable.tsx";
import { jobColumns } from "../components/runs/jobColumns.tsx";
import { RunProgressBar } from "../components/runs/RunProgressBar.tsx";
import { RunStateBadge } from "../components/runs/RunStateBadge.tsx";
import { formatFilesPerMinute, formatRealTime } from "../components/runs/runFormat.ts";
import { EmptyState, ErrorState, InlineError, LoadingState } from "../components/states.tsx";
import { formatDateTime } from "../format/units.ts";

function Stat({ label, value, tone = "" }: { label: string; value: string | number; tone?: string }) {
  return (
    <div className="rounded-md border border-line bg-surface px-3 py-2">
      <dt className="text-xs text-ink-muted uppercase tracking-wide">{label}</dt>
      <dd className={`text-lg font-semibold ${tone}`}>{value}</dd>
    </div>
  );
}

function FailedJobs({ run }: { run: ScanRunDetailDto }) {
  const mayRetry = useCan("review");
  const retryJob = useRetryJob(run.id);
  const retryAll = useRetryRun(run.id);
  const error = retryJob.error ?? retryAll.error;
  return (
    <section aria-labelledby="failed-jobs" className="mt-6">
      <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
        <h2 id="failed-jobs" className="text-lg">
          Failed jobs <span className="text-ink-muted">({run.counts.failed})</span>
        </h2>
        {mayRetry && run.counts.failed > 0 && (
          <button type="button" className={buttonClass.primary} disabled={retryAll.isPending} onClick={() => retryAll.mutate()}>
            Retry all {run.counts.failed} failed
          </button>
        )}
      </div>
      <p className="mb-2 text-sm text-ink-muted">Jobs whose retries are spent (dead-lettered). A retry puts the file back in the queue with a fresh set of attempts.</p>
      {error && <InlineError message={`The retry did not go through: ${describeError(error)}`} />}
      {run.failedJobs.length === 0 ? (
        <p className="text-sm">None.</p>
      ) : (
        <JobsTable
          caption="Failed jobs"
          jobs={run.failedJobs}
          columns={[jobColumns.path, jobColumns.attempts, jobColumns.lastError, jobColumns.worker, jobColumns.updatedAt]}
          action={
            mayRetry
              ? (job: ScanJobDto) => (
                  <button type="button" className={buttonClass.secondary} disabled={retryJob.isPending && retryJob.variables === job.id} onClick={() => retryJob.mutate(job.id)} aria-label={`Retry ${job.path}`}>
                    Retry
                  </button>
                )
              : undefined
          }
        />
      )}
      {run.failedJobs.length < run.counts.failed && <p className="mt-1 text-sm text-ink-muted">Showing the first {run.failedJobs.length} of {run.counts.failed}.</p>}
    </section>
  );
}

function ActiveJobs({ run }: { run: ScanRunDetailDto }) {
  const mayRequeue = useCan("review");
  const requeue = useRequeueJob(run.id);
  return (
    <section aria-labelledby="active-jobs" className="mt-6">
      <h2 id="active-jobs" className="mb-2 text-lg">
        Being scanned now <span className="text-ink-muted">({run.counts.active})</span>
      </h2>
      <p className="mb-2 text-sm text-ink-muted">
        A worker reports on each job it holds every few seconds; a job whose worker falls silent goes back to the queue by itself. Send one back by hand when its worker is known to be stuck.
      </p>
      {requeue.error && <InlineError message={`The job could not be sent back: ${describeError(requeue.error)}`} />}
      {run.activeJobs.length === 0 ? (
        <p className="text-sm">No worker holds a job of this run.</p>
      ) : (
        <JobsTable
          caption="Jobs being scanned"
          jobs={run.activeJobs}
          columns={[jobColumns.path, jobColumns.worker, jobColumns.attempts, jobColumns.claimedAt]}
          action={
            mayRequeue
              ? (job: ScanJobDto) => (
                  <button type="button" className={buttonClass.secondary} disabled={requeue.isPending && requeue.variables === job.id} onClick={() => requeue.mutate(job.id)} aria-label={`Send ${job.path} back to the queue`}>
                    Back to queue
                  </button>
                )
              : undefined
          }
        />
      )}
    </section>
  );
}

function ReturnedJobs({ run }: { run: ScanRunDetailDto }) {
  if (run.returnedJobs.length === 0) return null;
  return (
    <section aria-labelledby="returned-jobs" className="mt-6">
      <h2 id="returned-jobs" className="mb-2 text-lg">
        Back in the queue <span className="text-ink-muted">({run.returnedJobs.length})</span>
      </h2>
      <p className="mb-2 text-sm text-ink-muted">Jobs waiting for another try, and why their last attempt ended.</p>
      <JobsTable caption="Jobs back in the queue" jobs={run.returnedJobs} columns={[jobColumns.path, jobColumns.attempts, jobColumns.lastError, jobColumns.worker, jobColumns.updatedAt]} />
    </section>
  );
}

export function RunDetailPage() {
  const { runId } = useParams();
  const id = Number(runId);
  const query = useRun(id);

  if (!Number.isInteger(id) || id <= 0) return <EmptyState title="No such run">The address does not name a run.</EmptyState>;
  if (query.isPending) return <LoadingState label="Loading the run" />;
  if (query.isError) return <ErrorState title="The run could not load" message={describeError(query.error)} onRetry={() => void query.refetch()} />;
  const run = query.data;
  const { counts, throughput, verdicts } = run;

  return (
    <>
      <PageHeader
        title={
          <>
            Run #{run.id}: {run.name}
          </>
        }
        actions={
          <Link to={filesLink({ batch: run.batchId })} className={buttonClass.secondary}>
            Files of batch #{run.batchId}
          </Link>
        }
      >
        {run.collection.name} · profile <span className="font-mono">{run.profileName}</span> · created {formatDateTime(run.createdAt)} by {run.createdBy.name || run.createdBy.email}
      </PageHeader>
      <div className="mb-3 flex flex-wrap items-center gap-3">
        <RunStateBadge state={run.state} />
        <span className="font-mono text-xs break-all text-ink-muted" title="Folder on the shared storage">
          {run.root}
        </span>
      </div>
      <RunProgressBar counts={counts} className="h-3.5" />
      <dl className="mt-3 grid grid-cols-2 gap-2 sm:grid-cols-3 lg:grid-cols-6">
        <Stat label="Files" value={counts.total} />
        <Stat label="Queued" value={counts.queued} />
        <Stat label="Being scanned" value={counts.active} tone="text-harbour-strong" />
        <Stat label="Done" value={counts.done} tone="text-pass" />
        <Stat label="Failed" value={counts.failed} tone={counts.failed > 0 ? "text-fail" : ""} />
        <Stat label="Needed a retry" value={counts.retried} />
      </dl>
      <dl className="mt-2 grid grid-cols-1 gap-2 sm:grid-cols-3">
        <Stat label="Throughput, whole run" value={formatFilesPerMinute(throughput.filesPerMinute)} />
        <Stat label={`Last ${Math.round(throughput.windowSeconds / 60)} minutes${throughput.shown.basis === "whole-run" ? " (run finished)" : ""}`} value={formatFilesPerMinute(throughput.recentFilesPerMinute)} />
        <Stat label="Audio measured" value={formatRealTime(throughput.audioSecondsPerSecond)} />
      </dl>
      <p className="mt-2 text-sm text-ink-muted">
        Verdicts so far: {verdicts.pass} pass, {verdicts.warn} warn, {verdicts.fail} fail, {verdicts.error} error
        {run.lastResultAt ? ` · last result ${formatDateTime(run.lastResultAt)}` : ""}
      </p>

      <FailedJobs run={run} />

      <ActiveJobs run={run} />
      <ReturnedJobs run={run} />
    </>
  );
}
