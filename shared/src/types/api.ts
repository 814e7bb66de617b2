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

/** Query of GET /api/files (all optional). */
export interface FileQuery {
  batch?: number;
  collection?: number;
  verdict?: Verdict;
  reviewState?: ReviewState;
  finding?: FindingCode;
  q?: string;
  sort?: FileSortKey;
  order?: "asc" | "desc";
  page?: number;
  pageSize?: number;
}

/** Query of GET /api/batches (all optional). */
export interface BatchQuery {
  collection?: number;
  from?: string;
  to?: string;
  sort?: BatchSortKey;
  order?: "asc" | "desc";
  page?: number;
  pageSize?: number;
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

export interface FileDetailDto extends FileSummaryDto {
  sizeBytes: number;
  sha256: string | null;
  metadata: FileMetadata;
  metrics: FileMetrics | null;
  error: ReportError | null;
  findings: FindingDto[];
  comments: CommentDto[];
  reviewEvents: ReviewEventDto[];
  fixityHistory: FixityEntryDto[];
  /** API paths, or null when no image was uploaded. */
  spectrogramUrl: string | null;
  waveformUrl: string | null;
}

/** PATCH /api/files/:id body. */
export interface ReviewChangeRequest {
  reviewState: ReviewState;
  reason: string;
}

/** POST /api/files/review (bulk) body. */
export interface BulkReviewChangeRequest extends ReviewChangeRequest {
  ids: number[];
}

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
}

/** POST /api/tokens answer: `token` is "id:secret", shown once. */
export interface CreatedTokenDto {
  id: string;
  name: string;
  token: string;
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
