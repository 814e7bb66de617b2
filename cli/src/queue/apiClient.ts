/**
 * JSON and multipart calls to the server's run and job endpoints with the CLI's API token. Network
 * errors, timeouts and 5xx are retried with exponential backoff (the same policy as uploads); a 4xx is
 * final and carries the server's `{error:{code,message}}` as an UploadRejectedError.
 */
import type { ApiErrorBody } from "@tidemark/shared/types/api";
import { ServerUnreachableError, UploadRejectedError, type RetryPolicy } from "../upload/ingestClient.ts";

export { ServerUnreachableError, UploadRejectedError };

export interface ApiAnswer<T> {
  status: number;
  body: T;
}

export interface ApiClient {
  readonly server: string;
  getJson<T>(path: string): Promise<ApiAnswer<T>>;
  postJson<T>(path: string, body: unknown): Promise<ApiAnswer<T>>;
  /** `form` is built afresh for each attempt (a sent FormData body cannot be sent again). */
  postForm<T>(path: string, form: () => FormData): Promise<ApiAnswer<T>>;
}

async function errorOf(response: Response): Promise<{ code: string; message: string }> {
  const text = await response.text().catch(() => "");
  try {
    const body = JSON.parse(text) as Partial<ApiErrorBody>;
    if (body.error && typeof body.error.message === "string") return { code: String(body.error.code ?? `http-${response.status}`), message: body.error.message };
  } catch {
    // Not our JSON error shape: the status line and the start of the body say what happened.
  }
  return { code: `http-${response.status}`, message: text.replace(/\s+/g, " ").trim().slice(0, 200) || response.statusText || "no message" };
}

function networkProblem(error: unknown): string {
  const cause = (error as { cause?: { code?: string } } | null)?.cause;
  if (cause?.code) return cause.code;
  if (error instanceof Error && error.name === "TimeoutError") return "timed out";
  return error instanceof Error ? error.message : String(error);
}

const sleep = (ms: number): Promise<void> => new Promise((resolve) => setTimeout(resolve, ms));

export function createApiClient(
  server: string,
  token: string,
  policy: RetryPolicy,
  onRetry: (attempt: number, problem: string, delayMs: number) => void = () => undefined,
): ApiClient {
  const send = async <T>(method: "GET" | "POST", path: string, body: () => string | FormData | undefined, contentType: string | null): Promise<ApiAnswer<T>> => {
    const url = `${server}${path}`;
    let last = "";
    for (let attempt = 1; attempt <= policy.maxAttempts; attempt++) {
      let response: Response | null = null;
      try {
        const headers: Record<string, string> = { authorization: `Bearer ${token}`, accept: "application/json" };
        if (contentType) headers["content-type"] = contentType;
        response = await fetch(url, { method, headers, body: body(), signal: AbortSignal.timeout(policy.attemptTimeoutMs) });
      } catch (error) {
        last = networkProblem(error);
      }
      if (response) {
        if (response.ok) {
          const text = await response.text();
          return { status: response.status, body: (text ? JSON.parse(text) : null) as T };
        }
        const { code, message } = await errorOf(response);
        if (response.status < 500) throw new UploadRejectedError(response.status, code, `${response.status} ${code}: ${message}`);
        last = `${response.status} ${code}: ${message}`;
      }
      if (attempt < policy.maxAttempts) {
        const delayMs = policy.baseDelayMs * 2 ** (attempt - 1);
        onRetry(attempt, last, delayMs);
        await sleep(delayMs);
      }
    }
    throw new ServerUnreachableError(`${url} did not answer after ${policy.maxAttempts} attempts (last: ${last})`);
  };
  return {
    server,
    getJson: (path) => send("GET", path, () => undefined, null),
    postJson: (path, body) => send("POST", path, () => JSON.stringify(body), "application/json"),
    postForm: (path, form) => send("POST", path, form, null),
  };
}
