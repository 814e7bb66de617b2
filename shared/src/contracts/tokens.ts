/** API tokens: GET /api/tokens (`?all=1`: an admin lists everyone's) and POST /api/tokens. */
import { z } from "zod";
import type { QueryOf } from "./searchParams.ts";

export const DEFAULT_TOKEN_LIFETIME_DAYS = 365;
export const MAX_TOKEN_LIFETIME_DAYS = 5 * 365;

export const tokenListQuerySchema = z.object({ all: z.enum(["0", "1", "true", "false"]).optional() }).strict();
export type TokenListQuery = QueryOf<typeof tokenListQuerySchema>;

/** POST /api/tokens body: `expiresInDays` 1–MAX_TOKEN_LIFETIME_DAYS, default one year. */
export const createTokenSchema = z
  .object({
    name: z.string().trim().min(1).max(100),
    /** Days until the token stops working. */
    expiresInDays: z.number().int().min(1).max(MAX_TOKEN_LIFETIME_DAYS).default(DEFAULT_TOKEN_LIFETIME_DAYS),
  })
  .strict()
  .describe("token");
export type CreateTokenDto = z.input<typeof createTokenSchema>;
