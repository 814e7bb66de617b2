/**
 * The CLI's one HTTP client for the Tidemark server, used by upload, enqueue, worker, match and login.
 * - Network errors, timeouts and 5xx are retried with exponential backoff, a bounded number of times
 *   (5) or for a bounded time (TIDEMARK_RETRY_SECONDS); a 4xx is never retried.
 * - Every refusal is an ApiError carrying the server's `{error:{code,message}}`.
 * - A TLS or HTTP protocol error, or an answer that is not JSON (a foreign web server, the wrong port),
 *   stops at once with a WrongServerError naming the URL and the likely mistake: retrying cannot help.
 *   A gateway's 502/503/504 page is the exception: a proxy whose server is restarting, so it is retried.
 */
import type { ApiErrorBody } from "@tidemark/shared/types/api";

export interface RetryPolicy {
  maxAttempts: number;
  /** First delay; each retry doubles it, up to maxDelayMs. */
  baseDelayMs: number;
  maxDelayMs: number;
  /** Per-attempt limit, so a stalled connection counts as a failed attempt. */
  attemptTimeoutMs: number;
  /** No retry starts after this long since the first attempt. */
  totalMs: number;
}

/** Default total retry time of one request. */
export const DEFAULT_RETRY_SECONDS = 60;

/** Attempts of one request unless TIDEMARK_RETRY_SECONDS asks for a time bound instead (about 7.5 s with the default delays). */
export const DEFAULT_ATTEMPTS = 5;

const setNumber = (raw: string | undefined): number | null => {
  if (raw === undefined || raw.trim() === "") return null;
  const n = Number(raw);
  return Number.isFinite(n) && n >= 0 ? n : null;
};

/**
 * From the environment: TIDEMARK_RETRY_BASE_MS (first delay, default 500; tests shorten it) and
 * TIDEMARK_RETRY_SECONDS (retry one request for up to this long instead of 5 attempts; at most 60 s
 * by default either way).
 */
export function retryPolicyFrom(env: NodeJS.ProcessEnv): RetryPolicy {
  const base = setNumber(env.TIDEMARK_RETRY_BASE_MS);
  const total = setNumber(env.TIDEMARK_RETRY_SECONDS);
  return {
    maxAttempts: total === null ? DEFAULT_ATTEMPTS : Number.POSITIVE_INFINITY,
    baseDelayMs: base ?? 500,
    maxDelayMs: 15_000,
    attemptTimeoutMs: 120_000,
    totalMs: (total ?? DEFAULT_RETRY_SECONDS) * 1000,
  };
}

/** The server answered 4xx: retrying cannot help. `code` and the message are the server's own. */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly url: string;

  constructor(status: number, code: string, message: string, url: string) {
    super(message);
    this.name = "ApiError";
    this.status = status;
    this.code = code;
    this.url = url;
  }
}

/** Every attempt, for the whole retry time, met a network error, a timeout or a 5xx. */
export class ServerUnreachableError extends Error {
  /** The last problem met (an error code such as ECONNREFUSED, "timed out", or a 5xx line). */
  readonly last: string;

  constructor(message: string, last = "") {
    super(message);
    this.name = "ServerUnreachableError";
    this.last = last;
  }
}

/** Whatever answered is not a Tidemark server, or not spoken to in the right protocol. */
export class WrongServerError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "WrongServerError";
  }
}

export interface ApiAnswer<T> {
  status: number;
  headers: Headers;
  body: T;
}

export interface RequestOptions {
  method?: "GET" | "POST" | "PUT" | "DELETE";
  /** Built afresh for each attempt (a sent FormData body cannot be sent again). */
  body?: () => string | FormData | undefined;
  contentType?: string;
  headers?: Record<string, string>;
  /** false: one attempt only (the caller has its own loop, as the worker does). */
  retry?: boolean;
  /** This request's per-attempt limit instead of the policy's (a heartbeat must not hang for minutes). */
  timeoutMs?: number;
  /** Aborts the request (a worker stopping while its claim waits on the server). */
  signal?: AbortSignal;
}

export interface ApiClient {
  readonly server: string;
  request<T>(path: string, options?: RequestOptions): Promise<ApiAnswer<T>>;
  getJson<T>(path: string): Promise<ApiAnswer<T>>;
  postJson<T>(path: string, body: unknown, options?: Pick<RequestOptions, "retry" | "timeoutMs" | "signal">): Promise<ApiAnswer<T>>;
  postForm<T>(path: string, form: () => FormData, options?: Pick<RequestOptions, "retry" | "timeoutMs">): Promise<ApiAnswer<T>>;
}

export type OnRetry = (attempt: number, problem: string, delayMs: number) => void;

interface NetworkCause {
  code?: string;
  message?: string;
}

function causeOf(error: unknown): NetworkCause {
  const cause = (error as { cause?: NetworkCause } | null)?.cause;
  return cause && typeof cause === "object" ? cause : {};
}

const TLS_CODE = /^(ERR_SSL_|ERR_TLS_|EPROTO$|CERT_|UNABLE_TO_|DEPTH_ZERO_SELF_SIGNED_CERT|SELF_SIGNED_CERT_IN_CHAIN|ERR_SSL)/;

/** A TLS or HTTP protocol failure: the URL's scheme or port is wrong, not the network. */
function protocolMistake(url: string, error: unknown): string | null {
  const { code = "", message = "" } = causeOf(error);
  const https = url.startsWith("https:");
  if (TLS_CODE.test(code) || /wrong version number|ssl|tls/i.test(message)) {
    if (/CERT|UNABLE_TO|SELF_SIGNED/.test(code)) return `${url}: the server's TLS certificate was not accepted (${code}): check the host name, or trust its certificate authority (NODE_EXTRA_CA_CERTS)`;
    return https
      ? `${url}: the TLS handshake failed (${code || message}): the server probably speaks plain HTTP there; try http:// instead of https://`
      : `${url}: TLS error (${code || message}): check the URL's scheme`;
  }
  if (code.startsWith("HPE_")) {
    return `${url}: the answer was not HTTP (${code}): ${https ? "is this the right port?" : "the server probably speaks HTTPS there; try https:// instead of http://, or check the port"}`;
  }
  return null;
}

/** The one wording for network errors: the error code, and what it means. */
export function describeNetworkError(error: unknown): string {
  const { code, message } = causeOf(error);
  if (error instanceof Error && (error.name === "TimeoutError" || error.name === "AbortError")) return "timed out";
  if (code) return code;
  if (message) return message;
  return error instanceof Error ? error.message : String(error);
}

const NETWORK_HINT: Record<string, string> = {
  ECONNREFUSED: "nothing is listening at that address and port; is the server running, and is the URL right?",
  ENOTFOUND: "no such host name; check the URL",
  EAI_AGAIN: "the host name could not be looked up (DNS); check the network",
  ECONNRESET: "the connection was dropped",
  ETIMEDOUT: "no answer from that address",
  EHOSTUNREACH: "no route to that host",
  ENETUNREACH: "no route to that network",
  "timed out": "no answer in time",
};

export function networkHint(problem: string): string {
  return NETWORK_HINT[problem] ?? (/^5\d\d /.test(problem) ? "the server had a problem; see its log" : "check the URL and the network");
}

async function errorOf(response: Response, text: string): Promise<{ code: string; message: string }> {
  try {
    const body = JSON.parse(text) as Partial<ApiErrorBody>;
    if (body.error && typeof body.error.message === "string") return { code: String(body.error.code ?? `http-${response.status}`), message: body.error.message };
  } catch {
    // Not our JSON error shape: the caller decides (isJson is false).
  }
  return { code: `http-${response.status}`, message: text.replace(/\s+/g, " ").trim().slice(0, 200) || response.statusText || "no message" };
}

const isJson = (response: Response): boolean => /^application\/([\w.+-]*\+)?json\b/i.test(response.headers.get("content-type") ?? "");
const GATEWAY = new Set([502, 503, 504]);
const sleep = (ms: number): Promise<void> => new Promise((resolve) => setTimeout(resolve, ms));

export function createApiClient(server: string, token: string | null, policy: RetryPolicy, onRetry: OnRetry = () => undefined): ApiClient {
  const origin = server.replace(/\/+$/, "");
  const abortSignal = (options: RequestOptions): AbortSignal => {
    const timeout = AbortSignal.timeout(options.timeoutMs ?? policy.attemptTimeoutMs);
    return options.signal ? AbortSignal.any([timeout, options.signal]) : timeout;
  };
  const request = async <T>(path: string, options: RequestOptions = {}): Promise<ApiAnswer<T>> => {
    const url = `${origin}${path}`;
    const method = options.method ?? "GET";
    const maxAttempts = options.retry === false ? 1 : policy.maxAttempts;
    const started = Date.now();
    let last = "";
    let attempt = 0;
    for (;;) {
      attempt += 1;
      let response: Response | null = null;
      try {
        const headers: Record<string, string> = { accept: "application/json", ...options.headers };
        if (token) headers.authorization = `Bearer ${token}`;
        if (options.contentType) headers["content-type"] = options.contentType;
        response = await fetch(url, { method, headers, body: options.body?.(), signal: abortSignal(options) });
      } catch (error) {
        if (options.signal?.aborted) throw error;
        const mistake = protocolMistake(url, error);
        if (mistake) throw new WrongServerError(mistake);
        last = describeNetworkError(error);
      }
      if (response) {
        const text = await response.text().catch(() => "");
        if (response.ok) {
          if (!isJson(response) && !(text === "" && response.status === 204)) {
            throw new WrongServerError(`${url} answered ${response.status} with ${response.headers.get("content-type") ?? "no content type"}, not JSON: is ${origin} the Tidemark server (not the portal's web server, a proxy page or another site)?`);
          }
          try {
            return { status: response.status, headers: response.headers, body: (text ? JSON.parse(text) : null) as T };
          } catch {
            throw new WrongServerError(`${url} answered ${response.status} with JSON that does not parse: is ${origin} the Tidemark server?`);
          }
        }
        const json = isJson(response);
        if (!json && !GATEWAY.has(response.status)) {
          const snippet = text.replace(/<[^>]*>/g, " ").replace(/\s+/g, " ").trim().slice(0, 80);
          throw new WrongServerError(
            `${url} answered ${response.status} ${response.statusText || ""} with ${response.headers.get("content-type") ?? "no content type"}${snippet ? ` ("${snippet}")` : ""}, not Tidemark's JSON: is ${origin} the Tidemark server's address and port?`.replace("  ", " "),
          );
        }
        const { code, message } = await errorOf(response, text);
        if (response.status < 500) throw new ApiError(response.status, code, `${response.status} ${code}: ${message}`, url);
        last = `${response.status} ${code}: ${message}`;
      }
      const delayMs = Math.min(policy.maxDelayMs, policy.baseDelayMs * 2 ** (attempt - 1));
      const elapsed = Date.now() - started;
      if (attempt >= maxAttempts || elapsed + delayMs > policy.totalMs) {
        const over = attempt > 1 ? ` over ${(elapsed / 1000).toFixed(1)} s` : "";
        throw new ServerUnreachableError(`${url} did not answer after ${attempt} attempt${attempt === 1 ? "" : "s"} (last: ${last})${over}: ${networkHint(last)}`, last);
      }
      onRetry(attempt, last, delayMs);
      await sleep(delayMs);
    }
  };
  return {
    server: origin,
    request,
    getJson: (path) => request(path),
    postJson: (path, body, options) => request(path, { ...options, method: "POST", body: () => JSON.stringify(body), contentType: "application/json" }),
    postForm: (path, form, options) => request(path, { ...options, method: "POST", body: form }),
  };
}
