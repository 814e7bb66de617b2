/**
 * Sends one batch to the server: `POST {server}/api/ingest`, multipart/form-data with the text fields
 * `collection` and `batchKey`, the JSON report as file part `report`, and the files it points at
 * (reportImages.ts names them: `spectrogram` / `waveform` `<n>.png`, and per CONTRACT-16 `levelGrid` /
 * `loudnessCurve` `<n>.json`, `closeupSpectrogram` / `closeupWaveform` `<n>.<k>.png`, `excerpt` `<n>.<k>.wav`). Retries network errors and 5xx with
 * exponential backoff (bounded); a 4xx is final and carries the server's `{error:{code,message}}`.
 */
import type { ApiErrorBody, IngestResultDto } from "@tidemark/shared/types/api";

export type PartField = "spectrogram" | "waveform" | "levelGrid" | "loudnessCurve" | "closeupSpectrogram" | "closeupWaveform" | "excerpt";

/** One file sent beside the report (named for ingest by reportImages.ts). */
export interface ImagePart {
  field: PartField;
  fileIndex: number;
  bytes: Uint8Array;
  /** The part's file name, e.g. `3.png`, `3.0.wav`; `<fileIndex>.png` when absent. */
  name?: string;
  /** `image/png` when absent. */
  mediaType?: string;
}

export interface IngestBatch {
  reportJson: string;
  collection: string;
  batchKey: string;
  images: ImagePart[];
}

export interface RetryPolicy {
  maxAttempts: number;
  /** First delay; each retry doubles it. */
  baseDelayMs: number;
  /** Per-attempt limit, so a stalled connection counts as a failed attempt. */
  attemptTimeoutMs: number;
}

/** Five attempts over about 7.5 s; TIDEMARK_RETRY_BASE_MS shortens the delays (tests). */
export function retryPolicyFrom(env: NodeJS.ProcessEnv): RetryPolicy {
  const base = Number(env.TIDEMARK_RETRY_BASE_MS);
  return { maxAttempts: 5, baseDelayMs: Number.isFinite(base) && base >= 0 ? base : 500, attemptTimeoutMs: 120_000 };
}

/** The server answered 4xx: retrying cannot help. */
export class UploadRejectedError extends Error {
  readonly status: number;
  readonly code: string;

  constructor(status: number, code: string, message: string) {
    super(message);
    this.name = "UploadRejectedError";
    this.status = status;
    this.code = code;
  }
}

/** Every attempt met a network error, a timeout or a 5xx. */
export class ServerUnreachableError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ServerUnreachableError";
  }
}

function formFor(batch: IngestBatch): FormData {
  const form = new FormData();
  // Text fields first, so a streaming server knows the collection before the files arrive.
  form.append("collection", batch.collection);
  form.append("batchKey", batch.batchKey);
  form.append("report", new Blob([batch.reportJson], { type: "application/json" }), "report.json");
  for (const image of batch.images) {
    form.append(image.field, new Blob([image.bytes], { type: image.mediaType ?? "image/png" }), image.name ?? `${image.fileIndex}.png`);
  }
  return form;
}

async function errorBodyOf(response: Response): Promise<{ code: string; message: string }> {
  const text = await response.text().catch(() => "");
  try {
    const body = JSON.parse(text) as Partial<ApiErrorBody>;
    if (body.error && typeof body.error.message === "string") {
      return { code: String(body.error.code ?? `http-${response.status}`), message: body.error.message };
    }
  } catch {
    // Not JSON: fall back to the status line and the start of the body.
  }
  const snippet = text.replace(/\s+/g, " ").trim().slice(0, 200);
  return { code: `http-${response.status}`, message: snippet || response.statusText || "no message" };
}

const sleep = (ms: number): Promise<void> => new Promise((resolve) => setTimeout(resolve, ms));

function describeNetworkError(error: unknown): string {
  const cause = (error as { cause?: { code?: string; message?: string } } | null)?.cause;
  if (cause?.code) return cause.code;
  if (error instanceof Error && error.name === "TimeoutError") return "timed out";
  return error instanceof Error ? error.message : String(error);
}

export async function postBatch(
  server: string,
  token: string,
  batch: IngestBatch,
  policy: RetryPolicy,
  onRetry: (attempt: number, problem: string, delayMs: number) => void = () => undefined,
): Promise<IngestResultDto> {
  const url = `${server}/api/ingest`;
  let lastProblem = "";
  for (let attempt = 1; attempt <= policy.maxAttempts; attempt++) {
    let response: Response | null = null;
    try {
      response = await fetch(url, {
        method: "POST",
        headers: { authorization: `Bearer ${token}`, accept: "application/json" },
        body: formFor(batch),
        signal: AbortSignal.timeout(policy.attemptTimeoutMs),
      });
    } catch (error) {
      lastProblem = describeNetworkError(error);
    }
    if (response) {
      if (response.status === 200 || response.status === 201) {
        const body = (await response.json().catch(() => null)) as IngestResultDto | null;
        if (!body || typeof body.batchId !== "number") {
          throw new UploadRejectedError(response.status, "bad-answer", `the server answered ${response.status} without a batch id`);
        }
        return body;
      }
      const { code, message } = await errorBodyOf(response);
      if (response.status < 500) throw new UploadRejectedError(response.status, code, `${response.status} ${code}: ${message}`);
      lastProblem = `${response.status} ${code}: ${message}`;
    }
    if (attempt < policy.maxAttempts) {
      const delayMs = policy.baseDelayMs * 2 ** (attempt - 1);
      onRetry(attempt, lastProblem, delayMs);
      await sleep(delayMs);
    }
  }
  throw new ServerUnreachableError(`${url} did not take the batch after ${policy.maxAttempts} attempts (last: ${lastProblem})`);
}
