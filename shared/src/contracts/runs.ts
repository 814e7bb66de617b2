/**
 * Runs of distributed scanning: GET /api/runs and /api/runs/:id/jobs, POST /api/runs (find or create a
 * run) and POST /api/runs/:id/files (enqueue). The run's profile is checked against the profile contract
 * by the server afterwards (422), so a worker never receives one it cannot use.
 */
import { z } from "zod";
import { SCAN_JOB_STATES } from "../types/api.ts";
import { label, optionalEnum, optionalId, pageParams } from "./fields.ts";
import type { QueryOf } from "./searchParams.ts";

export const runQuerySchema = z.object({ collection: optionalId, ...pageParams }).strict();
export type ScanRunListQuery = z.output<typeof runQuerySchema>;
export type ScanRunQuery = QueryOf<typeof runQuerySchema>;

export const jobQuerySchema = z.object({ state: optionalEnum(SCAN_JOB_STATES), ...pageParams }).strict();
export type ScanJobListQuery = z.output<typeof jobQuerySchema>;
export type ScanJobQuery = QueryOf<typeof jobQuerySchema>;

export const MAX_FILES_PER_ENQUEUE = 1000;

export const noControl = (s: string): boolean => !/\p{Cc}/u.test(s);

/** A report path: relative, forward slashes, no empty, "." or ".." segments (it is joined to the run's root). */
const relativePath = z
  .string()
  .min(1)
  .max(4096)
  .refine(noControl, "must not contain control characters")
  .refine((p) => !p.startsWith("/") && !p.includes("\\") && p.split("/").every((s) => s !== "" && s !== "." && s !== ".."), {
    message: 'must be relative to the run\'s root, with "/" between folder names and no "." or ".." parts',
  });

/**
 * A relative path's exact bytes, base64 (RFC 4648), sent only when they are not UTF-8. That they are the
 * bytes `path` shows is checked by the server (server/src/services/runsValidation.ts: it needs Node's decoder).
 */
const pathBytes = z
  .string()
  .min(4)
  .max(8192)
  .regex(/^(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/]{2}==|[A-Za-z0-9+/]{3}=)?$/, "must be base64 (RFC 4648)");

/** The run's profile as the enqueuing CLI resolved it; workers measure with exactly this. */
export const runProfileSchema = z.object({
  name: z.string().min(1).max(64),
  /** SHA-256 of the profile's canonical JSON. */
  hash: z.string().regex(/^[0-9a-f]{64}$/, "must be a SHA-256 in lower-case hex"),
  /** The validated profile object (built-in or custom). */
  definition: z.record(z.string(), z.unknown()),
});
export type RunProfileDto = z.input<typeof runProfileSchema>;

/** POST /api/runs body: find or create the run named `name` in `collection`. */
export const createRunSchema = z
  .object({
    collection: label(200),
    name: label(200),
    /** Folder on the shared storage that every job's path is relative to. */
    root: z.string().min(1).max(4096).refine(noControl, "must not contain control characters").refine((r) => r.startsWith("/") || /^[A-Za-z]:[\\/]/.test(r), "must be an absolute path"),
    profile: runProfileSchema,
    /** The enqueuing CLI; the batch shows the version of the workers that report results. */
    tool: z.object({ name: label(100), version: label(100) }),
  })
  .strict()
  .describe("run");
export type CreateRunRequest = z.input<typeof createRunSchema>;

export const enqueueFileSchema = z
  .object({
    /** Relative to the run's root, forward slashes (the report path). */
    path: relativePath,
    /** The relative path's exact bytes, base64, when they are not UTF-8 (`path` then shows U+FFFD). */
    pathBytes: pathBytes.optional(),
    sizeBytes: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER),
    mtimeMs: z.number().finite().min(0),
  })
  .strict();
export type EnqueueFileDto = z.input<typeof enqueueFileSchema>;

/** POST /api/runs/:id/files body (at most MAX_FILES_PER_ENQUEUE files a request). */
export const enqueueFilesSchema = z
  .object({
    files: z
      .array(enqueueFileSchema)
      .min(1)
      .max(MAX_FILES_PER_ENQUEUE, `at most ${MAX_FILES_PER_ENQUEUE} files a request; send the rest in further requests`),
  })
  .strict()
  .describe("files");
export type EnqueueFilesRequest = z.input<typeof enqueueFilesSchema>;
