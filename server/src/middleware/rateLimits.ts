import type { Request } from "express";
import { rateLimit, type RateLimitRequestHandler } from "express-rate-limit";
import type { RateLimitSettings } from "../context.ts";
import { HttpError } from "../errors.ts";

/**
 * A limiter that answers in the one error shape: per client address by default, or per whatever `key`
 * returns (e.g. the account a sign-in names). OWASP ASVS 4.0 V2.2.1 (anti-automation).
 */
export function limiter(
  settings: RateLimitSettings,
  what: string,
  options: { onlyFailures?: boolean; key?: (req: Request) => string } = {},
): RateLimitRequestHandler {
  return rateLimit({
    ...(options.key ? { keyGenerator: options.key } : {}),
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
