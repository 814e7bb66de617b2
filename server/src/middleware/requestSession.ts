/** express-session's callbacks as promises: regenerate (at sign-in), save and destroy a request's session. */
import type { Request } from "express";

export function regenerateSession(req: Request): Promise<void> {
  return new Promise((resolve, reject) => req.session.regenerate((err: unknown) => (err ? reject(err) : resolve())));
}

export function saveSession(req: Request): Promise<void> {
  return new Promise((resolve, reject) => req.session.save((err: unknown) => (err ? reject(err) : resolve())));
}

export function destroySession(req: Request): Promise<void> {
  return new Promise((resolve, reject) => req.session.destroy((err: unknown) => (err ? reject(err) : resolve())));
}
