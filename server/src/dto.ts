/** Models → the DTOs of shared/src/types/api.ts, in one place. */
import type {
  AuditEntryDto,
  BatchDto,
  CloseupDto,
  CollectionDto,
  CommentDto,
  FileDetailDto,
  FileSummaryDto,
  FindingDto,
  FixityCheckDto,
  FixityEntryDto,
  ProfileLimitsDto,
  ReviewEventDto,
  TokenDto,
  UserDto,
  UserRefDto,
} from "@tidemark/shared/types/api";
import { closeupImageUrl, fileImageUrl } from "./fileImageUrls.ts";
import type { FileListRow } from "./services/fileList.ts";
import type { ApiToken, AuditEntry, Batch, Collection, Comment, FileResult, Finding, FixityCheck, ReviewEvent, User } from "./models/index.ts";

const iso = (d: Date): string => d.toISOString();

/** Associations are loaded by the caller; a missing one is a programming error, not bad input. */
function required<T>(value: T | null | undefined, what: string): T {
  if (value === null || value === undefined) throw new Error(`${what} was not loaded`);
  return value;
}

export const toUserRefDto = (u: User): UserRefDto => ({ id: u.id, email: u.email, name: u.name });

export const toUserDto = (u: User): UserDto => ({ ...toUserRefDto(u), role: u.role, disabled: u.disabled, createdAt: iso(u.createdAt) });

export const toCollectionDto = (c: Collection): CollectionDto => ({ id: c.id, name: c.name });

export const toBatchDto = (b: Batch): BatchDto => ({
  id: b.id,
  collection: toCollectionDto(required(b.collection, "batch.collection")),
  uploader: toUserRefDto(required(b.uploader, "batch.uploader")),
  batchKey: b.batchKey,
  profileName: b.profileName,
  profileHash: b.profileHash,
  toolVersion: b.toolVersion,
  startedAt: iso(b.startedAt),
  finishedAt: iso(b.finishedAt),
  createdAt: iso(b.createdAt),
  counts: { files: b.fileCount, pass: b.passCount, warn: b.warnCount, fail: b.failCount, error: b.errorCount },
});

export const toFileSummaryDto = (f: FileResult): FileSummaryDto => ({
  id: f.id,
  batchId: f.batchId,
  collection: toCollectionDto(required(f.collection, "file.collection")),
  path: f.path,
  durationSeconds: f.durationSeconds,
  format: f.format,
  verdict: f.verdict,
  reviewState: f.reviewState,
  worstFindings: f.worstFindings,
  integratedLufs: f.integratedLufs,
  truePeakDbtp: f.truePeakDbtp,
  hasSpectrogram: f.spectrogramKey !== null,
  createdAt: iso(f.createdAt),
});

/** The list query's raw row (services/fileList.ts) → the same DTO. */
export const toFileSummaryDtoFromRow = (r: FileListRow): FileSummaryDto => ({
  id: r.id,
  batchId: r.batch_id,
  collection: { id: r.collection_id, name: r.collection_name },
  path: r.path,
  durationSeconds: r.duration_seconds,
  format: r.format,
  verdict: r.verdict,
  reviewState: r.review_state,
  worstFindings: r.worst_findings,
  integratedLufs: r.integrated_lufs,
  truePeakDbtp: r.true_peak_dbtp,
  hasSpectrogram: r.has_spectrogram,
  createdAt: iso(r.created_at),
});

export const toFindingDto = (f: Finding): FindingDto => ({
  id: f.id,
  code: f.code,
  severity: f.severity,
  channel: f.channel,
  startSeconds: f.startSeconds,
  endSeconds: f.endSeconds,
  message: f.message,
});

export const toCommentDto = (c: Comment): CommentDto => ({
  id: c.id,
  author: toUserRefDto(required(c.author, "comment.author")),
  body: c.body,
  createdAt: iso(c.createdAt),
  atSeconds: c.atSeconds ?? null,
  channel: c.channel ?? null,
});

export const toReviewEventDto = (e: ReviewEvent): ReviewEventDto => ({
  id: e.id,
  actor: toUserRefDto(required(e.actor, "reviewEvent.actor")),
  fromState: e.fromState,
  toState: e.toState,
  reason: e.reason,
  createdAt: iso(e.createdAt),
});

export const toFixityCheckDto = (c: FixityCheck): FixityCheckDto => ({
  id: c.id,
  checkedAt: iso(c.checkedAt),
  outcome: c.outcome,
  expectedSha256: c.expectedSha256,
  actualSha256: c.actualSha256,
  movedTo: c.movedTo,
  detail: c.detail,
  by: toUserRefDto(required(c.user, "fixityCheck.user")),
  tokenName: c.token?.name ?? null,
});

export interface FileDetailParts {
  findings: Finding[];
  comments: Comment[];
  reviewEvents: ReviewEvent[];
  fixityHistory: FixityEntryDto[];
  fixityChecks: FixityCheck[];
  /** The batch's profile limits (the file page draws the loudness target band from them). */
  profileLimits: ProfileLimitsDto | null;
}

/**
 * Report finding indexes → finding ids. The report's findings are inserted first and in order, so they
 * are the file's first rows by id (fixity and duplicate findings the server adds come after them).
 */
const findingIdAt = (findings: Finding[], index: number): number | null => findings[index]?.id ?? null;

export const toCloseupDtos = (f: FileResult, findings: Finding[]): CloseupDto[] =>
  (f.closeups ?? []).map((c) => ({
    index: c.index,
    findingIds: c.findings.map((i) => findingIdAt(findings, i)).filter((id): id is number => id !== null),
    startSeconds: c.startSeconds,
    endSeconds: c.endSeconds,
    secondsPerColumn: c.secondsPerColumn,
    spectrogramUrl: closeupImageUrl(f.id, c.index, "spectrogram"),
    waveformUrl: closeupImageUrl(f.id, c.index, "waveform"),
    excerptUrl: c.excerptKey ? `/api/files/${f.id}/closeups/${c.index}/excerpt` : null,
    excerptMediaType: c.excerptKey ? c.excerptMediaType : null,
  }));

export const toFileDetailDto = (f: FileResult, parts: FileDetailParts): FileDetailDto => ({
  ...toFileSummaryDto(f),
  ...(f.pathBytes ? { pathBytes: f.pathBytes } : {}),
  sizeBytes: Number(f.sizeBytes),
  sha256: f.sha256,
  metadata: f.metadata,
  metrics: f.metrics,
  error: f.error,
  findings: parts.findings.map(toFindingDto),
  comments: parts.comments.map(toCommentDto),
  reviewEvents: parts.reviewEvents.map(toReviewEventDto),
  fixityHistory: parts.fixityHistory,
  fixityChecks: parts.fixityChecks.map(toFixityCheckDto),
  spectrogramUrl: f.spectrogramKey ? fileImageUrl(f.id, "spectrogram") : null,
  waveformUrl: f.waveformKey ? fileImageUrl(f.id, "waveform") : null,
  closeups: toCloseupDtos(f, parts.findings),
  closeupsOmitted: (f.closeupsOmitted ?? []).flatMap((o) => {
    const findingId = findingIdAt(parts.findings, o.finding);
    return findingId === null ? [] : [{ findingId, reason: o.reason }];
  }),
  levelGridUrl: f.levelGridKey ? `/api/files/${f.id}/level-grid` : null,
  loudnessCurveUrl: f.loudnessCurveKey ? `/api/files/${f.id}/loudness-curve` : null,
  profileLimits: parts.profileLimits,
});

/** TokenDto plus `owner`, which admins need in the all-tokens list (a contract addition). */
export type TokenWithOwnerDto = TokenDto & { owner?: UserRefDto };

export const toTokenDto = (t: ApiToken): TokenWithOwnerDto => ({
  id: t.id,
  name: t.name,
  createdAt: iso(t.createdAt),
  lastUsedAt: t.lastUsedAt ? iso(t.lastUsedAt) : null,
  revokedAt: t.revokedAt ? iso(t.revokedAt) : null,
  expiresAt: iso(t.expiresAt),
  ...(t.owner ? { owner: toUserRefDto(t.owner) } : {}),
});

export const toAuditEntryDto = (a: AuditEntry): AuditEntryDto => ({
  id: a.id,
  actor: a.actor ? toUserRefDto(a.actor) : null,
  action: a.action,
  targetType: a.targetType,
  targetId: a.targetId,
  requestId: a.requestId,
  details: a.details,
  createdAt: iso(a.createdAt),
});
