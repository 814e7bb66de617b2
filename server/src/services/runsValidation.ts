/**
 * What enqueue, claim, fail and release requests must satisfy (400 naming each bad field), and the run's
 * profile checked against the profile contract (422), so a worker never receives one it cannot use.
 */
import { createHash } from "node:crypto";
import { z } from "zod";
import { canonicalProfileJson } from "@tidemark/shared/profiles/canonicalProfileJson";
import { ProfileError, validateProfile } from "@tidemark/shared/profiles/parseProfile";
import type { Profile } from "@tidemark/shared/profiles/profileSchema";
import { unprocessable } from "../errors.ts";

export const MAX_FILES_PER_ENQUEUE = 1000;
export const MAX_CLAIM = 16;

const noControl = (s: string): boolean => !/\p{Cc}/u.test(s);
const label = (max: number) => z.string().trim().min(1).max(max).refine(noControl, "must not contain control characters");

/** A report path: relative, forward slashes, no empty, "." or ".." segments (it is joined to the run's root). */
const relativePath = z
  .string()
  .min(1)
  .max(4096)
  .refine(noControl, "must not contain control characters")
  .refine((p) => !p.startsWith("/") && !p.includes("\\") && p.split("/").every((s) => s !== "" && s !== "." && s !== ".."), {
    message: 'must be relative to the run\'s root, with "/" between folder names and no "." or ".." parts',
  });

/** A relative path's exact bytes, base64 (RFC 4648), sent only when they are not UTF-8. */
const pathBytes = z
  .string()
  .min(4)
  .max(8192)
  .regex(/^(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/]{2}==|[A-Za-z0-9+/]{3}=)?$/, "must be base64 (RFC 4648)");

export const createRunSchema = z
  .object({
    collection: label(200),
    name: label(200),
    root: z.string().min(1).max(4096).refine(noControl, "must not contain control characters").refine((r) => r.startsWith("/") || /^[A-Za-z]:[\\/]/.test(r), "must be an absolute path"),
    profile: z.object({
      name: z.string().min(1).max(64),
      hash: z.string().regex(/^[0-9a-f]{64}$/, "must be a SHA-256 in lower-case hex"),
      definition: z.record(z.string(), z.unknown()),
    }),
    tool: z.object({ name: label(100), version: label(100) }),
  })
  .strict();

export const enqueueFilesSchema = z
  .object({
    files: z
      .array(
        z
          .object({
            path: relativePath,
            pathBytes: pathBytes.optional(),
            sizeBytes: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER),
            mtimeMs: z.number().finite().min(0),
          })
          .strict()
          .refine((f) => f.pathBytes === undefined || Buffer.from(f.pathBytes, "base64").toString("utf8") === f.path, {
            message: "pathBytes must be the bytes of path (path is how they show, with U+FFFD for bytes that are not UTF-8)",
            path: ["pathBytes"],
          }),
      )
      .min(1)
      .max(MAX_FILES_PER_ENQUEUE, `at most ${MAX_FILES_PER_ENQUEUE} files a request; send the rest in further requests`),
  })
  .strict();

const workerName = label(200);
const attempt = z.number().int().min(1).max(1_000_000);

/** Longest a claim may wait on the server for a job to arrive (a long poll). */
export const MAX_CLAIM_WAIT_SECONDS = 10;

export const claimSchema = z
  .object({ worker: workerName, max: z.number().int().min(1).max(MAX_CLAIM).default(1), wait: z.number().min(0).max(MAX_CLAIM_WAIT_SECONDS).default(0) })
  .strict();
export const failSchema = z.object({ attempt, worker: workerName, message: z.string().trim().min(1).max(2000) }).strict();
export const releaseSchema = z
  .object({ attempt, worker: workerName, reason: z.enum(["stopping", "unreachable"]).optional(), message: z.string().trim().min(1).max(2000).optional() })
  .strict();
export const heartbeatSchema = z
  .object({ worker: workerName, jobs: z.array(z.object({ id: z.number().int().min(1), attempt }).strict()).max(256) })
  .strict();
/** Text fields of a result upload (multipart strings). */
export const resultFieldsSchema = z.object({ attempt: z.coerce.number().int().min(1).max(1_000_000), worker: workerName }).strict();

export function profileHashOf(profile: Profile): string {
  return createHash("sha256").update(canonicalProfileJson(profile)).digest("hex");
}

/** The definition must be a valid profile whose canonical hash is the one given. */
export function checkRunProfile(input: { name: string; hash: string; definition: Record<string, unknown> }): Profile {
  let profile: Profile;
  try {
    profile = validateProfile(input.definition, "profile.definition");
  } catch (e) {
    if (e instanceof ProfileError) throw unprocessable(e.message, "invalid_profile");
    throw e;
  }
  if (profile.name !== input.name) throw unprocessable(`profile.name is "${input.name}" but the definition is named "${profile.name}"`, "invalid_profile");
  const hash = profileHashOf(profile);
  if (hash !== input.hash) throw unprocessable(`profile.hash ${input.hash} does not match its definition (${hash})`, "invalid_profile");
  return profile;
}
