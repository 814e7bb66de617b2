/**
 * JSON shapes of the server's HTTP API (/api/*), shared by server, portal and CLI.
 * DTOs are what goes over the wire; server models map onto them in one place (server/src/dto.ts).
 */
import type {
  AudioFormat,
  FileMetadata,
  FileMetrics,
  FindingCode,
  ReportError,
  ReportSummary,
  Severity,
  Verdict,
} from "./report.ts";
import type { RunProfileDto } from "../contracts/runs.ts";

// Request shapes (queries and bodies) are inferred from the zod contracts in shared/src/contracts/, which
// the server validates with and the portal reads and writes its URLs with.
export type { AuditCsvQuery, AuditQuery } from "../contracts/audit.ts";
export type { BatchQuery } from "../contracts/batches.ts";
export type { FilesCsvQuery } from "../contracts/exports.ts";
export type { BulkReviewChangeRequest, CreateCommentRequest, FileQuery, ReviewChangeRequest } from "../contracts/files.ts";
export type { FixityCheckUploadRequest } from "../contracts/fixityChecks.ts";
export type { ClaimJobsRequest, FailJobRequest, JobHeartbeatRequest, ReleaseJobRequest } from "../contracts/jobs.ts";
export type { CreateRunRequest, EnqueueFileDto, EnqueueFilesRequest, RunProfileDto, ScanJobQuery, ScanRunQuery } from "../contracts/runs.ts";
export type { PasswordResetConfirmRequest, PasswordResetRequest, SignInRequest } from "../contracts/session.ts";
export type { CreateTokenDto } from "../contracts/tokens.ts";
export type { CreateUserRequest, UpdateUserRequest } from "../contracts/users.ts";

export const ROLES = ["admin", "supervisor", "technician", "auditor"] as const;
export type Role = (typeof ROLES)[number];

export const REVIEW_STATES = ["pending", "accepted", "flagged", "retransfer"] as const;
export type ReviewState = (typeof REVIEW_STATES)[number];

/** Every error response: `{ error: { code, message } }`. */
export interface ApiErrorBody {
  error: { code: string; message: string; details?: unknown };
}

export interface Page<T> {
  items: T[];
  total: number;
  page: number;
  pageSize: number;
}

/**
 * Cookie-authenticated writes must carry this header (CSRF defence beside SameSite=Lax);
 * token-authenticated requests (CLI) need not.
 */
export const CSRF_HEADER = "x-tidemark-request" as const;

export interface UserRefDto {
  id: number;
  email: string;
  name: string;
}

export interface UserDto extends UserRefDto {
  role: Role;
  disabled: boolean;
  createdAt: string;
}

export interface SessionDto {
  user: UserDto;
}

export interface CollectionDto {
  id: number;
  name: string;
}

export interface BatchDto {
  id: number;
  collection: CollectionDto;
  uploader: UserRefDto;
  batchKey: string;
  profileName: string;
  profileHash: string | null;
  toolVersion: string;
  startedAt: string;
  finishedAt: string;
  createdAt: string;
  counts: ReportSummary;
}

export const FILE_SORT_KEYS = [
  "path",
  "durationSeconds",
  "verdict",
  "reviewState",
  "integratedLufs",
  "truePeakDbtp",
  "createdAt",
] as const;
export type FileSortKey = (typeof FILE_SORT_KEYS)[number];

export const BATCH_SORT_KEYS = ["createdAt", "startedAt", "collection", "failCount"] as const;
export type BatchSortKey = (typeof BATCH_SORT_KEYS)[number];

/** GET /api/files: a page, cursors to its neighbours (null at either end) and how exact `total` is. */
export interface FilePage extends Page<FileSummaryDto> {
  /** true: `total` is the database's estimate (a large count not yet made since the data changed). */
  totalIsEstimate: boolean;
  nextCursor: string | null;
  prevCursor: string | null;
}

export interface FindingSummaryDto {
  code: FindingCode;
  severity: Severity;
  count: number;
}

/** One row of the Files table. */
export interface FileSummaryDto {
  id: number;
  batchId: number;
  collection: CollectionDto;
  path: string;
  durationSeconds: number | null;
  format: AudioFormat | null;
  verdict: Verdict;
  reviewState: ReviewState;
  /** Most severe findings first, one entry per code. */
  worstFindings: FindingSummaryDto[];
  integratedLufs: number | null;
  truePeakDbtp: number | null;
  hasSpectrogram: boolean;
  createdAt: string;
}

export interface FindingDto {
  id: number;
  code: FindingCode;
  severity: Severity;
  channel: number | null;
  startSeconds: number | null;
  endSeconds: number | null;
  message: string;
}

export interface CommentDto {
  id: number;
  author: UserRefDto;
  body: string;
  createdAt: string;
  /** Where in the file the comment points (seconds from the start), or null. */
  atSeconds: number | null;
  /** 0-based channel the comment points at, or null for all channels. */
  channel: number | null;
}

/** The scan profile's loudness and peak limits, as the report carried them (null where it set none). */
export interface ProfileLimitsDto {
  integratedLufs: { target: number; warnToleranceLu: number; failToleranceLu: number } | null;
  truePeakMaxDbtp: number | null;
}

export type CloseupOmittedReason = "cap" | "budget" | "not-timed";
export type { ExcerptMediaType } from "./codes.ts";
import type { ExcerptMediaType } from "./codes.ts";

/** One close-up of a file: a detailed window around one or more findings (issue #16). */
export interface CloseupDto {
  /** The close-up's index in the report (`k` in its URLs). */
  index: number;
  findingIds: number[];
  startSeconds: number;
  endSeconds: number;
  secondsPerColumn: number;
  spectrogramUrl: string;
  waveformUrl: string;
  excerptUrl: string | null;
  excerptMediaType: ExcerptMediaType | null;
}

export interface CloseupOmittedDto {
  findingId: number;
  reason: CloseupOmittedReason;
}

export interface ReviewEventDto {
  id: number;
  actor: UserRefDto;
  fromState: ReviewState;
  toState: ReviewState;
  reason: string;
  createdAt: string;
}

/** One earlier (or later) scan of the same path in the same collection. */
export interface FixityEntryDto {
  fileResultId: number;
  batchId: number;
  sha256: string | null;
  scannedAt: string;
  /** True when this sha256 differs from the scan before it. */
  changed: boolean;
}

export const FIXITY_OUTCOMES = ["unchanged", "changed", "missing", "unreadable", "moved"] as const;
export type FixityOutcome = (typeof FIXITY_OUTCOMES)[number];

/** One check of the file by `tidemark verify --upload`: when, by whom (which token), and what it found. */
export interface FixityCheckDto {
  id: number;
  checkedAt: string;
  outcome: FixityOutcome;
  expectedSha256: string | null;
  actualSha256: string | null;
  movedTo: string | null;
  detail: string;
  by: UserRefDto;
  /** Name of the API token the check was sent with, or null when the token is gone. */
  tokenName: string | null;
}

export interface FixityCheckUploadResultDto {
  stored: number;
  /** Paths the collection has never had a scan of (stored all the same, without a file link). */
  unknownPaths: number;
  changed: number;
}

export interface FileDetailDto extends FileSummaryDto {
  /** Exact bytes of a path that is not UTF-8, base64 (`path` shows U+FFFD for them); absent otherwise. */
  pathBytes?: string;
  sizeBytes: number;
  sha256: string | null;
  metadata: FileMetadata;
  metrics: FileMetrics | null;
  error: ReportError | null;
  findings: FindingDto[];
  comments: CommentDto[];
  reviewEvents: ReviewEventDto[];
  fixityHistory: FixityEntryDto[];
  /** Checks of this path by `tidemark verify --upload`, oldest first. */
  fixityChecks: FixityCheckDto[];
  /** API paths, or null when no image was uploaded. */
  spectrogramUrl: string | null;
  waveformUrl: string | null;
  closeups: CloseupDto[];
  closeupsOmitted: CloseupOmittedDto[];
  levelGridUrl: string | null;
  loudnessCurveUrl: string | null;
  profileLimits: ProfileLimitsDto | null;
}

/** GET /api/batches/:id/overview: the batch page's at-a-glance strip. */
export interface BatchOverviewDto {
  batchId: number;
  profileLimits: ProfileLimitsDto | null;
  /** At most BATCH_OVERVIEW_MAX_FILES, most recent first. */
  files: Array<{ id: number; path: string; verdict: Verdict; integratedLufs: number | null; truePeakDbtp: number | null }>;
  /** Over the whole batch: per code and severity, how many files and how many findings. */
  findingCounts: Array<{ code: FindingCode; severity: Severity; files: number; findings: number }>;
}

export const BATCH_OVERVIEW_MAX_FILES = 5000;

/** Another file result holding the same recording, found by its fingerprint (issue #11). */
export interface FingerprintMatchDto {
  fileResultId: number;
  batchId: number;
  collection: CollectionDto;
  path: string;
  durationSeconds: number | null;
  /** Landmark hashes the two files share at one time offset (the offset-histogram peak). */
  score: number;
  /** Where this file's (or the query's) t = 0 falls in the other file, seconds; negative: before its start. */
  offsetSeconds: number;
}

/** A stored `possible-duplicate` link, seen from one of its two files. */
export interface DuplicateMatchDto extends FingerprintMatchDto {
  detectedAt: string;
}

/** GET /api/files/:id/duplicates answer, best score first. */
export interface DuplicateListDto {
  items: DuplicateMatchDto[];
  /** False when this scan's report carried no fingerprint of the server's version: it was never compared. */
  hasFingerprint: boolean;
}

/** POST /api/duplicates/lookup answer (body: the encoded fingerprint as text/plain), best first. */
export interface FingerprintLookupDto {
  matches: FingerprintMatchDto[];
}

/** Review states that need a (non-blank) reason; the server answers 400 `reason_required` otherwise. */
export const REASON_REQUIRED_STATES = ["flagged", "retransfer"] as const satisfies readonly ReviewState[];

/** POST /api/files/review answer. */
export interface BulkReviewChangeResultDto {
  items: FileSummaryDto[];
  changed: number;
}

/** POST /api/password-reset answer (202, whether or not the address exists). */
export interface PasswordResetAcceptedDto {
  accepted: true;
  message: string;
}

export interface TokenDto {
  id: string;
  name: string;
  /** Filled for an admin's GET /api/tokens?all=1. */
  owner?: UserRefDto;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
  /** The token is refused from this moment on (chosen at creation, default one year). */
  expiresAt: string;
}

/** POST /api/tokens answer: `token` is "id:secret", shown once. */
export interface CreatedTokenDto {
  id: string;
  name: string;
  token: string;
  expiresAt: string;
}

export interface AuditEntryDto {
  id: number;
  actor: UserRefDto | null;
  action: string;
  targetType: string;
  targetId: string | null;
  requestId: string | null;
  details: Record<string, unknown> | null;
  createdAt: string;
}

/** POST /api/ingest answer. */
export interface IngestResultDto {
  batchId: number;
  /** False when the (uploader, batch key) pair was already ingested: nothing new was stored. */
  created: boolean;
  files: number;
}

export interface HealthDto {
  ok: boolean;
  db: "up" | "down";
}

/** The self-contained CLI tarball the server offers (`npm run pack:cli`), for the API-tokens page. */
export interface CliPackageDto {
  version: string;
  sizeBytes: number;
  /** Absolute URL of the tarball, as `npm install -g` takes it. */
  url: string;
  installCommand: string;
}

// ---- Distributed scanning: runs of queued file jobs (issue #10) ----

/**
 * A job's state as the portal shows it. `failed` means dead-lettered: the retry limit is spent, and only
 * a supervisor's retry (or a re-enqueue) puts it back in the queue.
 */
export const SCAN_JOB_STATES = ["queued", "active", "done", "failed"] as const;
export type ScanJobState = (typeof SCAN_JOB_STATES)[number];

/** `waiting`: nothing claimed yet; `done`/`failed`: nothing left to do, with or without dead-lettered jobs. */
export const SCAN_RUN_STATES = ["waiting", "running", "done", "failed"] as const;
export type ScanRunState = (typeof SCAN_RUN_STATES)[number];

export interface ScanRunCountsDto {
  total: number;
  queued: number;
  active: number;
  done: number;
  failed: number;
  /** Jobs that needed more than one attempt (a worker died, a job expired, or failed and was retried). */
  retried: number;
}

export interface ScanRunThroughputDto {
  /** Done files per minute, from the first claim to the last result (null before the first result). */
  filesPerMinute: number | null;
  /**
   * The rate to show as "the" throughput: the whole run's once it has finished, the recent rate while it
   * runs (null when nothing finished in the window), with which one it is.
   */
  shown: { basis: "whole-run" | "recent"; filesPerMinute: number | null };
  /** Done files per minute over the last `windowSeconds` (null when nothing finished in it). */
  recentFilesPerMinute: number | null;
  /** Seconds of audio measured per second of wall-clock time (null before the first result). */
  audioSecondsPerSecond: number | null;
  windowSeconds: number;
}

export interface ScanRunDto {
  id: number;
  name: string;
  collection: CollectionDto;
  /** Folder on the shared storage that every job's path is relative to. */
  root: string;
  profileName: string;
  profileHash: string;
  /** The batch the run's file results are appended to (Files and Batches views). */
  batchId: number;
  createdBy: UserRefDto;
  createdAt: string;
  firstClaimAt: string | null;
  lastResultAt: string | null;
  state: ScanRunState;
  counts: ScanRunCountsDto;
  /** Verdicts of the results so far (the batch's counts). */
  verdicts: ReportSummary;
  throughput: ScanRunThroughputDto;
}

export interface ScanJobDto {
  id: number;
  runId: number;
  path: string;
  sizeBytes: number;
  state: ScanJobState;
  attempts: number;
  /** Who holds (or last held) the job. */
  worker: string | null;
  lastError: string | null;
  fileResultId: number | null;
  claimedAt: string | null;
  doneAt: string | null;
  updatedAt: string;
}

export interface ScanRunDetailDto extends ScanRunDto {
  /** Dead-lettered jobs, oldest first (at most 200; the jobs list pages through all). */
  failedJobs: ScanJobDto[];
  /** Jobs a worker holds now. */
  activeJobs: ScanJobDto[];
  /** Queued jobs that went back to the queue (worker silent, file unreachable, failed, sent back by hand), latest first, with why. */
  returnedJobs: ScanJobDto[];
}

/** POST /api/runs answer (201 created, 200 found). */
export interface CreateRunResultDto {
  run: ScanRunDto;
  created: boolean;
}

export interface EnqueueFilesResultDto {
  /** New jobs. */
  added: number;
  /** Dead-lettered jobs put back in the queue. */
  requeued: number;
  /** Done with the same size and mtime: skipped. */
  alreadyDone: number;
  /** Queued or being scanned already: skipped. */
  pending: number;
  /** Done, but size or mtime changed since: not queued in this run (enqueue them into a new run). */
  changed: string[];
}

export interface ClaimedJobDto {
  id: number;
  /** Which attempt this claim is; fail and release must name it. */
  attempt: number;
  runId: number;
  collection: string;
  /** Report path, relative to the run's root. */
  path: string;
  /** The relative path's exact bytes, base64, when they are not UTF-8: the worker opens root + these bytes. */
  pathBytes?: string;
  /** Where the file is on the shared storage (as shown: a name that is not UTF-8 has U+FFFD here). */
  absPath: string;
  sizeBytes: number;
  mtimeMs: number;
  /** The job goes back to the queue if no result arrives by then (the visibility timeout). */
  expiresAt: string;
  profile: RunProfileDto;
}

export interface ClaimJobsResultDto {
  jobs: ClaimedJobDto[];
  /** How often to POST /api/jobs/heartbeat while holding jobs; a job silent past the server's limit goes back to the queue. */
  heartbeatIntervalSeconds: number;
}

/** `lost`: jobs this worker no longer holds (taken back, or not claimed with this token): drop them. */
export interface JobHeartbeatResultDto {
  held: number[];
  lost: number[];
}

/** POST /api/jobs/:id/result answer (201 stored, 200 already stored by an earlier attempt). */
export interface JobResultDto {
  jobId: number;
  runId: number;
  batchId: number;
  fileResultId: number;
  created: boolean;
}

/** Answer of fail, release and retry. */
export interface JobStateDto {
  jobId: number;
  state: ScanJobState;
  attempts: number;
}

/** POST /api/runs/:id/retry answer. */
export interface RetryRunResultDto {
  retried: number;
}
