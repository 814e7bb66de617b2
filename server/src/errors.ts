/**
 * HTTP errors with a stable machine-readable code. Every error response has the one shape
 * `{ error: { code, message } }` (ApiErrorBody in shared/src/types/api.ts).
 */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.name = "HttpError";
  }
}

export const badRequest = (message: string, code = "bad_request", details?: unknown): HttpError =>
  new HttpError(400, code, message, details);

export const unauthorized = (message = "sign in or send an API token", code = "unauthenticated"): HttpError =>
  new HttpError(401, code, message);

export const forbidden = (message = "your role does not allow this", code = "forbidden"): HttpError =>
  new HttpError(403, code, message);

export const notFound = (entity: string, id?: string | number): HttpError =>
  new HttpError(404, "not_found", id === undefined ? `${entity} not found` : `${entity} ${id} not found`);

export const conflict = (message: string, code = "conflict"): HttpError => new HttpError(409, code, message);

export const payloadTooLarge = (message: string): HttpError => new HttpError(413, "payload_too_large", message);

export const unprocessable = (message: string, code = "invalid_report", details?: unknown): HttpError =>
  new HttpError(422, code, message, details);

export const serviceUnavailable = (message: string): HttpError => new HttpError(503, "unavailable", message);
