/**
 * The one place the portal talks HTTP. Every response that is not ok becomes an ApiError carrying the
 * server's `{ error: { code, message } }`, so screens can say in plain words what went wrong.
 */
import { checkContract, parseContract, type ContractSchema, type InputOf } from "@tidemark/shared/contracts/checkContract";
import type { QueryOf, QuerySchema } from "@tidemark/shared/contracts/searchParams";
import { CSRF_HEADER, type ApiErrorBody } from "@tidemark/shared/types/api";

export class ApiError extends Error {
  readonly status: number;
  readonly code: string;

  constructor(status: number, code: string, message: string) {
    super(message);
    this.name = "ApiError";
    this.status = status;
    this.code = code;
  }
}

export interface RequestOptions {
  signal?: AbortSignal;
}

type Method = "POST" | "PATCH" | "DELETE";

function isErrorBody(body: unknown): body is ApiErrorBody {
  if (typeof body !== "object" || body === null || !("error" in body)) return false;
  const error = (body as { error: unknown }).error;
  return typeof error === "object" && error !== null && typeof (error as { message?: unknown }).message === "string";
}

/** Fallback wording when the server (or a proxy in front of it) did not send our JSON error shape. */
function messageForStatus(status: number): string {
  if (status === 401) return "Your session has ended. Please sign in again.";
  if (status === 403) return "Your role does not allow this.";
  if (status === 404) return "This item does not exist (or no longer does).";
  if (status === 429) return "Too many attempts in a short time. Wait a minute and try again.";
  if (status >= 500) return "The server ran into a problem. Try again in a moment.";
  return `The request was refused (HTTP ${status}).`;
}

async function toApiError(res: Response): Promise<ApiError> {
  let body: unknown = null;
  try {
    body = await res.json();
  } catch {
    // Not JSON (an HTML error page, an empty body): fall back to a message for the status.
  }
  if (isErrorBody(body)) return new ApiError(res.status, body.error.code, body.error.message);
  return new ApiError(res.status, `http-${res.status}`, messageForStatus(res.status));
}

async function request(path: string, init: RequestInit): Promise<Response> {
  let res: Response;
  try {
    res = await fetch(path, { credentials: "same-origin", ...init });
  } catch (e) {
    if (e instanceof DOMException && e.name === "AbortError") throw e;
    throw new ApiError(0, "network", "The server could not be reached. Check that it is running and try again.");
  }
  if (!res.ok) throw await toApiError(res);
  return res;
}

async function readJson<T>(res: Response): Promise<T> {
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  return (text ? JSON.parse(text) : undefined) as T;
}

export async function getJson<T>(path: string, { signal }: RequestOptions = {}): Promise<T> {
  const res = await request(path, { method: "GET", headers: { accept: "application/json" }, signal });
  return readJson<T>(res);
}

/** Writes always carry the CSRF header the server demands of cookie-authenticated requests. */
export async function sendJson<T>(method: Method, path: string, body?: unknown, { signal }: RequestOptions = {}): Promise<T> {
  const headers: Record<string, string> = { accept: "application/json", [CSRF_HEADER]: "1" };
  if (body !== undefined) headers["content-type"] = "application/json";
  const res = await request(path, {
    method,
    headers,
    body: body === undefined ? undefined : JSON.stringify(body),
    signal,
  });
  return readJson<T>(res);
}

/**
 * A write's body, checked first against the contract the server validates it with: a body the server
 * would refuse is refused here with the same 400 and message, without the round trip. It goes as given;
 * the server applies the contract's defaults and trimming itself.
 */
export function checkedBody<S extends ContractSchema>(schema: S, body: InputOf<S>): InputOf<S> {
  const result = checkContract(schema, body, schema.description ?? "request");
  if (!result.ok) throw new ApiError(400, "invalid_request", result.message);
  return body;
}

/** Builds `path?query`, leaving out empty values so keys and URLs stay short and stable. */
export function withQuery(path: string, query: object): string {
  const params = new URLSearchParams();
  for (const [name, value] of Object.entries(query)) {
    if (value === undefined || value === null || value === "") continue;
    params.set(name, String(value));
  }
  const search = params.toString();
  return search ? `${path}?${search}` : path;
}

/**
 * `path?query` for a request, the query checked against the same contract the server validates with
 * (a ContractError names each bad field: a bug here, not the user's) and complete with its defaults.
 */
export function requestUrl<S extends QuerySchema>(path: string, schema: S, query: QueryOf<S>): string {
  return withQuery(path, parseContract(schema, query, `query of ${path}`));
}

export function isUnauthorized(error: unknown): boolean {
  return error instanceof ApiError && error.status === 401;
}

/** Words for an error state: the server's message when it sent one, otherwise something general. */
export function describeError(error: unknown): string {
  if (error instanceof ApiError) return error.message;
  if (error instanceof Error && error.message) return `Something went wrong: ${error.message}`;
  return "Something went wrong.";
}
