/**
 * Who is calling: an API token (`Authorization: Bearer id:secret`, or HTTP Basic with user = token id and
 * password = secret) or the session cookie. Disabled users are rejected on every request, whichever way.
 */
import basicAuth from "basic-auth";
import type { Request, RequestHandler } from "express";
import type { Role } from "@tidemark/shared/types/api";
import { forbidden, unauthorized } from "../errors.ts";
import { User } from "../models/index.ts";
import { can, type Permission } from "../permissions.ts";
import { splitToken, verifyApiToken } from "../services/apiTokens.ts";
import { sessionUserOf } from "./sessionStore.ts";

type Credentials = { id: string; secret: string } | "malformed" | null;

function tokenCredentials(req: Request): Credentials {
  const header = req.get("authorization");
  if (!header) return null;
  const bearer = /^Bearer\s+(\S+)$/i.exec(header);
  if (bearer) return splitToken(bearer[1]) ?? "malformed";
  const basic = basicAuth(req);
  if (basic) return basic.name && basic.pass ? { id: basic.name, secret: basic.pass } : "malformed";
  return "malformed";
}

export const authenticate: RequestHandler = async (req, res, next) => {
  const credentials = tokenCredentials(req);
  if (credentials) {
    const token = credentials === "malformed" ? null : await verifyApiToken(credentials.id, credentials.secret);
    // One message for unknown, wrong, revoked and disabled: no hint which.
    if (!token?.owner || token.owner.disabled) throw unauthorized("the API token is not valid", "invalid_token");
    res.locals.auth = { user: token.owner, via: "token", tokenId: token.id };
    return next();
  }
  const userId = req.session?.userId;
  if (userId !== undefined) {
    // Loaded with the session in one query; read apart only when the store did not.
    const loaded = sessionUserOf(req, userId);
    const user = loaded === undefined ? await User.findByPk(userId) : loaded;
    if (user && !user.disabled) res.locals.auth = { user, via: "session", tokenId: null };
    else delete req.session.userId;
  }
  next();
};

export function requirePermission(permission: Permission): RequestHandler {
  return (_req, res, next) => {
    const auth = res.locals.auth;
    if (!auth) throw unauthorized();
    if (!can(auth.user.role as Role, permission)) throw forbidden(`the ${auth.user.role} role may not ${permissionVerb[permission]}`);
    next();
  };
}

const permissionVerb: Record<Permission, string> = {
  view: "view batches and files",
  upload: "upload scan reports",
  comment: "comment",
  review: "change review states",
  export: "export reports or read the audit trail",
  manageUsers: "manage users or other people's tokens",
  deleteBatches: "delete batches",
  manageOwnTokens: "manage API tokens",
};

/** Ingest is for the CLI and CI: token only, so a browser session cannot be ridden into an upload. */
export const requireTokenAuth: RequestHandler = (_req, res, next) => {
  const auth = res.locals.auth;
  if (!auth || auth.via !== "token") {
    res.setHeader("WWW-Authenticate", 'Basic realm="tidemark", charset="UTF-8"');
    throw unauthorized("this endpoint needs an API token (Authorization: Bearer id:secret)", "token_required");
  }
  next();
};

/** Tokens and users are managed from a signed-in session, so a leaked token cannot mint more tokens. */
export const requireSessionAuth: RequestHandler = (_req, res, next) => {
  const auth = res.locals.auth;
  if (!auth) throw unauthorized();
  if (auth.via !== "session") throw forbidden("sign in to manage tokens and users; API tokens cannot", "session_required");
  next();
};
