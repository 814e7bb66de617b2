/** Finds the profile named on the command line: a built-in name, or a JSON file validated by the profile schema. */
import { createHash } from "node:crypto";
import { readFile } from "node:fs/promises";
import path from "node:path";
import { BUILTIN_PROFILES, findBuiltinProfile } from "@tidemark/shared/profiles/builtinProfiles";
import { canonicalProfileJson } from "@tidemark/shared/profiles/canonicalProfileJson";
import type { Profile } from "@tidemark/shared/profiles/profileSchema";
import { resolveAnalysisSettings } from "@tidemark/shared/profiles/profileSettings";
import type { AnalysisSettings } from "@tidemark/shared/types/settings";
import { UsageError } from "../errors.ts";

export interface LoadedProfile {
  profile: Profile;
  /** SHA-256 of the profile's canonical JSON: two files meaning the same profile share it. */
  hash: string;
  settings: AnalysisSettings;
}

/** A profile file larger than this is not a profile. */
const MAX_PROFILE_BYTES = 1024 * 1024;

export function profileHash(profile: Profile): string {
  return createHash("sha256").update(canonicalProfileJson(profile)).digest("hex");
}

export function loaded(profile: Profile): LoadedProfile {
  return { profile, hash: profileHash(profile), settings: resolveAnalysisSettings(profile) };
}

export async function loadProfile(nameOrFile: string, cwd: string): Promise<LoadedProfile> {
  const builtin = findBuiltinProfile(nameOrFile);
  if (builtin) return loaded(builtin);
  const file = path.resolve(cwd, nameOrFile);
  let text: string;
  try {
    const bytes = await readFile(file);
    if (bytes.length > MAX_PROFILE_BYTES) {
      throw new UsageError(`bad profile ${nameOrFile}: expected a JSON file under 1 MiB, got ${bytes.length} bytes`);
    }
    text = bytes.toString("utf8");
  } catch (error) {
    if (error instanceof UsageError) throw error;
    const errno = (error as { code?: string }).code;
    if (errno === "ENOENT" || errno === "ENOTDIR") {
      const names = BUILTIN_PROFILES.map((p) => p.name).join(", ");
      throw new UsageError(`profile not found: "${nameOrFile}" is neither a built-in profile (${names}) nor a file`);
    }
    if (errno === "EISDIR") throw new UsageError(`bad profile ${nameOrFile}: expected a JSON file, got a folder`);
    throw new UsageError(`cannot read profile ${nameOrFile}: ${errno ?? String(error)}`);
  }
  // zod is loaded only for a profile file: the built-ins are stored already validated (builtinProfiles.ts).
  const { parseProfileJson } = await import("@tidemark/shared/profiles/parseProfile");
  return loaded(parseProfileJson(text, nameOrFile));
}
