/**
 * Last in the chain: every error becomes `{ error: { code, message } }` with a fitting status.
 * 5xx are logged with their stack and answered without it; 4xx are logged in one line.
 */
import type { ErrorRequestHandler, RequestHandler } from "express";
import { ConnectionAcquireTimeoutError, ConnectionError } from "sequelize";
import { HttpError } from "../errors.ts";
import type { Logger } from "../logger.ts";

interface BodyParserError {
  type?: string;
  status?: number;
  expose?: boolean;
  message: string;
}

const MALFORMED_MULTIPART = /Unexpected end of form|Boundary not found|Malformed part header|Multipart:/;

// Connection refused or reset, the server shutting down (SQLSTATE 57P01–57P03), pool timeouts.
const DB_DOWN_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EPIPE", "57P01", "57P02", "57P03"]);
const DB_DOWN_MESSAGE = /ECONNREFUSED|Connection terminated|terminating connection|timeout exceeded when trying to connect|the database system is (starting up|shutting down)/;

/** Sequelize wraps driver errors; the session store (plain pg) does not. Both mean "try again later". */
export function isDatabaseUnavailable(err: unknown): boolean {
  if (err instanceof ConnectionError || err instanceof ConnectionAcquireTimeoutError) return true;
  const candidates = [err, (err as { parent?: unknown })?.parent, (err as { original?: unknown })?.original];
  return candidates.some((e) => {
    if (!e || typeof e !== "object") return false;
    const { code, message } = e as { code?: unknown; message?: unknown };
    return (typeof code === "string" && DB_DOWN_CODES.has(code)) || (typeof message === "string" && DB_DOWN_MESSAGE.test(message));
  });
}

function toHttpError(err: unknown): HttpError {
  if (err instanceof HttpError) return err;
  if (isDatabaseUnavailable(err)) return new HttpError(503, "database_unavailable", "the database is not reachable; try again shortly");
  const bp = err as BodyParserError;
  if (bp && typeof bp === "object") {
    if (bp.type === "entity.too.large") return new HttpError(413, "payload_too_large", "request body too large");
    if (bp.type === "entity.parse.failed") return new HttpError(400, "invalid_json", "request body is not valid JSON");
    if (typeof bp.message === "string" && MALFORMED_MULTIPART.test(bp.message)) return new HttpError(400, "bad_upload", `malformed multipart body: ${bp.message}`);
    if (typeof bp.status === "number" && bp.status >= 400 && bp.status < 500 && bp.expose) {
      return new HttpError(bp.status, "bad_request", bp.message);
    }
  }
  return new HttpError(500, "internal_error", "internal error");
}

/** Name, message, the driver's own message (Sequelize wraps pg errors) and the stack, for the log. */
function describeForLog(err: unknown): string {
  if (!(err instanceof Error)) return String(err);
  const parent = (err as { parent?: { message?: string; detail?: string } }).parent;
  const cause = parent?.message ? ` (${parent.message}${parent.detail ? `; ${parent.detail}` : ""})` : "";
  const stack = err.stack?.split("\n").slice(1).join("\n") ?? "";
  return `${err.name}: ${err.message}${cause}\n${stack}`;
}

export function errorHandler(logger: Logger): ErrorRequestHandler {
  return (err, req, res, next) => {
    if (res.headersSent) return next(err);
    const http = toHttpError(err);
    const requestId = res.locals.requestId;
    if (http.status >= 500) {
      logger.error(`${req.method} ${req.originalUrl} → ${http.status} [${requestId}]: ${describeForLog(err)}`);
    } else {
      logger.info(`${req.method} ${req.originalUrl} → ${http.status} ${http.code}: ${http.message}`);
    }
    const message = http.status === 500 ? `internal error (request id ${requestId})` : http.message;
    res.status(http.status).json({ error: { code: http.code, message, ...(http.details !== undefined ? { details: http.details } : {}) } });
  };
}

/** Reached when no route matched. */
export const notFoundHandler: RequestHandler = (req, res) => {
  res.status(404).json({ error: { code: "route_not_found", message: `no route for ${req.method} ${req.path}` } });
};
