/**
 * Query-key factories: the only place key arrays are written. Each level spreads the one above it, so
 * invalidating `fileKeys.lists()` reaches every filtered page and `fileKeys.all` reaches everything files.
 */
import type { AuditQuery, BatchQuery, FileQuery, ScanRunQuery } from "@tidemark/shared/types/api";

export const sessionKeys = {
  all: ["session"] as const,
  current: () => [...sessionKeys.all, "current"] as const,
};

export const fileKeys = {
  all: ["files"] as const,
  lists: () => [...fileKeys.all, "list"] as const,
  list: (query: FileQuery) => [...fileKeys.lists(), query] as const,
  details: () => [...fileKeys.all, "detail"] as const,
  detail: (id: number) => [...fileKeys.details(), id] as const,
  /** The file's possible-duplicate links (issue #11), read apart from the detail. */
  duplicates: (id: number) => [...fileKeys.all, "duplicates", id] as const,
  /** The overview spectrogram's level grid and the loudness curve (issue #16), fetched by URL from the detail. */
  levelGrid: (id: number) => [...fileKeys.all, "level-grid", id] as const,
  loudnessCurve: (id: number) => [...fileKeys.all, "loudness-curve", id] as const,
};

export const batchKeys = {
  all: ["batches"] as const,
  lists: () => [...batchKeys.all, "list"] as const,
  list: (query: BatchQuery) => [...batchKeys.lists(), query] as const,
  details: () => [...batchKeys.all, "detail"] as const,
  detail: (id: number) => [...batchKeys.details(), id] as const,
  overview: (id: number) => [...batchKeys.all, "overview", id] as const,
};

export const collectionKeys = {
  all: ["collections"] as const,
  list: () => [...collectionKeys.all, "list"] as const,
};

export const cliPackageKeys = {
  all: ["cli-package"] as const,
};

export const tokenKeys = {
  all: ["tokens"] as const,
  mine: () => [...tokenKeys.all, "mine"] as const,
  everyone: () => [...tokenKeys.all, "everyone"] as const,
};

export const userKeys = {
  all: ["users"] as const,
  list: () => [...userKeys.all, "list"] as const,
};

export const auditKeys = {
  all: ["audit"] as const,
  lists: () => [...auditKeys.all, "list"] as const,
  list: (query: AuditQuery) => [...auditKeys.lists(), query] as const,
};

export const runKeys = {
  all: ["runs"] as const,
  lists: () => [...runKeys.all, "list"] as const,
  list: (query: ScanRunQuery) => [...runKeys.lists(), query] as const,
  details: () => [...runKeys.all, "detail"] as const,
  detail: (id: number) => [...runKeys.details(), id] as const,
};
