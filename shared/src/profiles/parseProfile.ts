/**
 * Turns custom profile JSON into a validated Profile. Errors are one line that names the source and the
 * bad field(s), e.g. `mine.json: thresholds.truePeakDbtp.fail: expected number, received string`.
 */
import type { z } from "zod";
import { ProfileError } from "./profileError.ts";
import { profileSchema, type Profile } from "./profileSchema.ts";

export { ProfileError };

const MAX_ISSUES_SHOWN = 3;

function fieldPath(path: readonly PropertyKey[]): string {
  let out = "";
  for (const part of path) {
    if (typeof part === "number") out += `[${part}]`;
    else out += out === "" ? String(part) : `.${String(part)}`;
  }
  return out === "" ? "(top level)" : out;
}

/** One entry per bad field: unknown keys are reported each under their own path. */
function describeIssues(error: z.ZodError): { field: string; text: string }[] {
  const out: { field: string; text: string }[] = [];
  for (const issue of error.issues) {
    if (issue.code === "unrecognized_keys") {
      for (const key of issue.keys) out.push({ field: fieldPath([...issue.path, key]), text: "unknown field" });
    } else {
      out.push({ field: fieldPath(issue.path), text: issue.message.replace(/^Invalid input: /, "") });
    }
  }
  return out;
}

/** Validates an already-parsed value (a JSON object) as a profile. */
export function validateProfile(value: unknown, source: string): Profile {
  // One parse a process: not worth zod's generated fast path (see builtinProfiles.ts).
  const result = profileSchema.safeParse(value, { jitless: true });
  if (result.success) return result.data;
  const issues = describeIssues(result.error);
  const shown = issues.slice(0, MAX_ISSUES_SHOWN).map((i) => `${i.field}: ${i.text}`);
  const more = issues.length > MAX_ISSUES_SHOWN ? ` (and ${issues.length - MAX_ISSUES_SHOWN} more)` : "";
  return fail(`bad profile ${source}: ${shown.join("; ")}${more}`, issues[0]?.field ?? null);
}

function fail(message: string, field: string | null): never {
  throw new ProfileError(message, field);
}

export function parseProfileJson(text: string, source: string): Profile {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    const why = e instanceof Error ? e.message : String(e);
    return fail(`bad profile ${source}: expected JSON, ${why.split("\n")[0]}`, null);
  }
  if (typeof value !== "object" || value === null || Array.isArray(value)) {
    const got = value === null ? "null" : Array.isArray(value) ? "an array" : typeof value;
    return fail(`bad profile ${source}: expected a JSON object, got ${got}`, null);
  }
  return validateProfile(value, source);
}
