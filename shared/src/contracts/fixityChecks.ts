/** POST /api/fixity-checks: `tidemark verify --upload` sends what it found, in slices of at most MAX_CHECKS_PER_REQUEST files. */
import { z } from "zod";
import { FIXITY_OUTCOMES } from "../types/api.ts";

export const MAX_CHECKS_PER_REQUEST = 1000;

const sha256 = z.string().regex(/^[0-9a-f]{64}$/).nullable();

/** Paths as the collection knows them. */
export const fixityCheckUploadSchema = z
  .object({
    collection: z.string().trim().min(1).max(200),
    checkedAt: z.iso.datetime(),
    checks: z
      .array(
        z
          .object({
            path: z.string().min(1).max(4096),
            outcome: z.enum(FIXITY_OUTCOMES),
            expectedSha256: sha256,
            actualSha256: sha256,
            movedTo: z.string().min(1).max(4096).nullable(),
            detail: z.string().max(2000),
          })
          .strict(),
      )
      .min(1)
      .max(MAX_CHECKS_PER_REQUEST),
  })
  .strict()
  .describe("fixity checks");
export type FixityCheckUploadRequest = z.input<typeof fixityCheckUploadSchema>;
