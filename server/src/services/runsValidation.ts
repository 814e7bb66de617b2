/**
 * The run's profile checked against the profile contract (422), so a worker never receives one it cannot
 * use. The requests' own shapes are shared/src/contracts/runs.ts and jobs.ts.
 */
import { createHash } from "node:crypto";
import { enqueueFilesSchema } from "@tidemark/shared/contracts/runs";
import { canonicalProfileJson } from "@tidemark/shared/profiles/canonicalProfileJson";
import { ProfileError, validateProfile } from "@tidemark/shared/profiles/parseProfile";
import type { Profile } from "@tidemark/shared/profiles/profileSchema";
import { unprocessable } from "../errors.ts";

/** The enqueue contract, and what needs Node's UTF-8 decoder: a file's pathBytes are the bytes its path shows. */
export const enqueueFilesBody = enqueueFilesSchema.superRefine((body, ctx) => {
  body.files.forEach((f, i) => {
    if (f.pathBytes !== undefined && Buffer.from(f.pathBytes, "base64").toString("utf8") !== f.path) {
      ctx.addIssue({
        code: "custom",
        path: ["files", i, "pathBytes"],
        message: "pathBytes must be the bytes of path (path is how they show, with U+FFFD for bytes that are not UTF-8)",
      });
    }
  });
});

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
