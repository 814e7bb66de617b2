/**
 * CSRF defence for cookie-authenticated writes, beside SameSite=Lax: a same-origin Origin when the browser
 * sends one, and the custom header CSRF_HEADER, which a cross-site form or fetch cannot add without a
 * CORS preflight we never grant (OWASP CSRF cheat sheet: custom request headers, verifying origin).
 * Token-authenticated requests (CLI) carry no ambient credentials and are exempt.
 */
import type { Request, RequestHandler } from "express";
import { CSRF_HEADER } from "@tidemark/shared/types/api";
import { forbidden } from "../errors.ts";

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

function requestOrigin(req: Request): string | null {
  const host = req.get("host");
  return host ? `${req.protocol}://${host}` : null;
}

export function csrfProtection(publicUrl: string): RequestHandler {
  const publicOrigin = new URL(publicUrl).origin;
  return (req, res, next) => {
    if (SAFE_METHODS.has(req.method) || res.locals.auth?.via === "token") return next();
    const origin = req.get("origin");
    if (origin !== undefined && origin !== publicOrigin && origin !== requestOrigin(req)) {
      throw forbidden(`cross-origin request from ${origin} refused`, "csrf_origin");
    }
    if (res.locals.auth?.via === "session" && !req.get(CSRF_HEADER)) {
      throw forbidden(`cookie-authenticated writes need the ${CSRF_HEADER} header`, "csrf_header");
    }
    next();
  };
}
