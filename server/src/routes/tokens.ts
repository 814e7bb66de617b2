import { Router } from "express";
import { createTokenSchema, tokenListQuerySchema } from "@tidemark/shared/contracts/tokens";
import type { CreatedTokenDto } from "@tidemark/shared/types/api";
import type { AppContext } from "../context.ts";
import { toTokenDto } from "../dto.ts";
import { forbidden } from "../errors.ts";
import { actorOf } from "../middleware/actor.ts";
import { requirePermission, requireSessionAuth } from "../middleware/auth.ts";
import { loadToken } from "../middleware/loadEntity.ts";
import { ApiToken, User } from "../models/index.ts";
import { can } from "../permissions.ts";
import { createApiToken } from "../services/apiTokens.ts";
import { recordAudit } from "../services/audit.ts";
import { validate } from "../validate.ts";

const newToken = validate("body", createTokenSchema);
const listQuery = validate("query", tokenListQuerySchema);

export function tokensRouter(ctx: AppContext): Router {
  const router = Router();
  router.use("/tokens", requireSessionAuth);

  router.get("/tokens", requirePermission("manageOwnTokens"), listQuery, async (_req, res) => {
    const { all } = listQuery.of(res);
    const user = res.locals.auth!.user;
    const everyone = all === "1" || all === "true";
    if (everyone && !can(user.role, "manageUsers")) throw forbidden("only admins list everyone's tokens");
    const tokens = await ApiToken.findAll({
      where: everyone ? {} : { userId: user.id },
      include: everyone ? [{ model: User, as: "owner" }] : [],
      order: [["createdAt", "DESC"], ["id", "ASC"]],
    });
    res.json(tokens.map(toTokenDto));
  });

  router.post("/tokens", requirePermission("manageOwnTokens"), newToken, async (_req, res) => {
    const { name, expiresInDays } = newToken.of(res);
    const user = res.locals.auth!.user;
    const created = await ctx.sequelize.transaction(async (transaction) => {
      const made = await createApiToken(user.id, name, transaction, expiresInDays);
      await recordAudit(actorOf(res), { action: "token.create", targetType: "token", targetId: made.token.id, details: { name, expiresAt: made.token.expiresAt.toISOString() } }, transaction);
      return made;
    });
    const body: CreatedTokenDto = { id: created.token.id, name, token: created.plaintext, expiresAt: created.token.expiresAt.toISOString() };
    res.status(201).json(body);
  });

  // loadToken lets admins reach every token and everyone else only their own.
  router.delete("/tokens/:id", requirePermission("manageOwnTokens"), loadToken, async (_req, res) => {
    const token = res.locals.token!;
    if (!token.revokedAt) {
      await ctx.sequelize.transaction(async (transaction) => {
        await token.update({ revokedAt: new Date() }, { transaction });
        await recordAudit(actorOf(res), { action: "token.revoke", targetType: "token", targetId: token.id, details: { owner: token.userId } }, transaction);
      });
    }
    res.status(204).end();
  });

  return router;
}
