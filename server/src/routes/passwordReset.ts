import { Router } from "express";
import { passwordResetConfirmSchema, passwordResetRequestSchema } from "@tidemark/shared/contracts/session";
import type { AppContext } from "../context.ts";
import { actorOf } from "../middleware/actor.ts";
import { recordAudit } from "../services/audit.ts";
import { runInBackground } from "../services/background.ts";
import { confirmPasswordReset, requestPasswordReset } from "../services/passwordReset.ts";
import { limiter } from "../middleware/rateLimits.ts";
import { validate } from "../validate.ts";

const resetRequest = validate("body", passwordResetRequestSchema);
const resetConfirmation = validate("body", passwordResetConfirmSchema);

export function passwordResetRouter(ctx: AppContext): Router {
  const router = Router();

  // Always 202 with the same body, and answered before the lookup: neither the answer nor its timing
  // says whether the address has an account (only a real one costs the row writes and the e-mail).
  router.post("/password-reset", limiter(ctx.settings.passwordResetRateLimit, "password-reset requests"), resetRequest, (_req, res) => {
    const { email } = resetRequest.of(res);
    runInBackground("password-reset request", ctx.logger, async () => {
      const made = await requestPasswordReset(ctx, email);
      if (made) await recordAudit(actorOf(res), { action: "password_reset.request", targetType: "user", targetId: made.userId, actorId: null });
    });
    res.status(202).json({ accepted: true, message: "if the address has an account, a reset link is on its way" });
  });

  router.post("/password-reset/confirm", limiter(ctx.settings.passwordResetRateLimit, "password-reset attempts", { onlyFailures: true }), resetConfirmation, async (_req, res) => {
    const { token, password } = resetConfirmation.of(res);
    const user = await confirmPasswordReset(ctx, token, password);
    await recordAudit(actorOf(res), { action: "password_reset.confirm", targetType: "user", targetId: user.id, actorId: user.id });
    res.status(204).end();
  });

  return router;
}
