import { rateLimit, type RateLimitRequestHandler } from "express-rate-limit";
import type { RateLimitSettings } from "../context.ts";
import { HttpError } from "../errors.ts";

/** A per-client-address limiter that answers in the one error shape. */
export function limiter(settings: RateLimitSettings, what: string, options: { onlyFailures?: boolean } = {}): RateLimitRequestHandler {
  return rateLimit({
    windowMs: settings.windowMs,
    limit: settings.limit,
    skipSuccessfulRequests: options.onlyFailures ?? false,
    standardHeaders: "draft-7",
    legacyHeaders: false,
    handler: (_req, _res, next) => {
      const minutes = Math.ceil(settings.windowMs / 60_000);
      next(new HttpError(429, "rate_limited", `too many ${what}; try again in ${minutes} minute${minutes === 1 ? "" : "s"}`));
    },
  });
}
