import { Router, type Request } from "express";
import { signInSchema } from "@tidemark/shared/contracts/session";
import type { SessionDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { toUserDto } from "../dto.ts";
import { unauthorized } from "../errors.ts";
import { actorOf } from "../middleware/actor.ts";
import { limiter } from "../middleware/rateLimits.ts";
import { signIn } from "../services/signIn.ts";
import { recordAudit } from "../services/audit.ts";
import { destroySession, regenerateSession, saveSession } from "../middleware/requestSession.ts";
import { validate } from "../validate.ts";

const signInBody = validate("body", signInSchema);

/** The account a sign-in names, as findUserByEmail matches it (trimmed, any letter case). */
function accountKey(req: Request): string {
  const email: unknown = (req.body as { email?: unknown } | undefined)?.email;
  return `account:${typeof email === "string" ? email.trim().toLowerCase().slice(0, 320) : ""}`;
}

export function sessionRouter(ctx: AppContext): Router {
  const router = Router();

  // Failures are counted per address and per account named, whether or not that account exists, and
  // both lock-outs answer alike: the 429 says nothing about which addresses have accounts.
  const perAddress = limiter(ctx.settings.loginRateLimit, "failed sign-ins", { onlyFailures: true });
  const perAccount = limiter(ctx.settings.loginAccountRateLimit, "failed sign-ins", { onlyFailures: true, key: accountKey });
  router.post("/session", perAddress, perAccount, signInBody, async (req, res) => {
    const { email, password } = signInBody.of(res);
    const user = await signIn(email, password, ctx.settings.passwordCost);
    if (!user) {
      await recordAudit(actorOf(res), { action: "session.sign_in_failed", targetType: "session", details: { email } });
      throw unauthorized("e-mail or password is wrong", "invalid_credentials");
    }
    // A fresh session id at sign-in: a session fixed before sign-in is worthless after it.
    await regenerateSession(req);
    req.session.userId = user.id;
    req.session.signedInAt = new Date().toISOString();
    await saveSession(req);
    res.locals.auth = { user, via: "session", tokenId: null };
    await recordAudit(actorOf(res), { action: "session.sign_in", targetType: "user", targetId: user.id });
    const body: SessionDto = { user: toUserDto(user) };
    res.json(body);
  });

  router.get("/session", (_req, res) => {
    const auth = res.locals.auth;
    if (!auth) throw unauthorized("not signed in");
    const body: SessionDto = { user: toUserDto(auth.user) };
    res.json(body);
  });

  router.delete("/session", async (req, res) => {
    const auth = res.locals.auth;
    if (auth?.via === "session") await recordAudit(actorOf(res), { action: "session.sign_out", targetType: "user", targetId: auth.user.id });
    if (req.session) await destroySession(req);
    res.clearCookie(SESSION_COOKIE, { path: "/" });
    res.status(204).end();
  });

  return router;
}

export const SESSION_COOKIE = "tidemark.sid";
