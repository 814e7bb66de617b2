import { Router } from "express";
import { z } from "zod";
import type { AppContext } from "../context.ts";
import { actorOf } from "../middleware/actor.ts";
import { recordAudit } from "../services/audit.ts";
import { runInBackground } from "../services/background.ts";
import { confirmPasswordReset, requestPasswordReset } from "../services/passwordReset.ts";
import { limiter } from "../middleware/rateLimits.ts";
import { parseWith } from "../validate.ts";

const requestSchema = z.object({ email: z.string().trim().min(1).max(320) });
const confirmSchema = z.object({ token: z.string().min(1).max(200), password: z.string().min(1).max(1024) });

export function passwordResetRouter(ctx: AppContext): Router {
  const router = Router();

  // Always 202 with the same body, and answered before the lookup: neither the answer nor its timing
  // says whether the address has an account (only a real one costs the row writes and the e-mail).
  router.post("/password-reset", limiter(ctx.settings.passwordResetRateLimit, "password-reset requests"), (req, res) => {
    const { email } = parseWith(requestSchema, req.body, "password-reset request");
    runInBackground("password-reset request", ctx.logger, async () => {
      const made = await requestPasswordReset(ctx, email);
      if (made) await recordAudit(actorOf(res), { action: "password_reset.request", targetType: "user", targetId: made.userId, actorId: null });
    });
    res.status(202).json({ accepted: true, message: "if the address has an account, a reset link is on its way" });
  });

  router.post("/password-reset/confirm", limiter(ctx.settings.passwordResetRateLimit, "password-reset attempts", { onlyFailures: true }), async (req, res) => {
    const { token, password } = parseWith(confirmSchema, req.body, "password-reset confirmation");
    const user = await confirmPasswordReset(ctx, token, password);
    await recordAudit(actorOf(res), { action: "password_reset.confirm", targetType: "user", targetId: user.id, actorId: user.id });
    res.status(204).end();
  });

  return router;
}
