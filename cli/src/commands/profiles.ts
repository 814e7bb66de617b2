/** `tidemark profiles [name|file]`: list the built-ins, print one as JSON, or check a custom profile file. */
import { BUILTIN_PROFILES, findBuiltinProfile } from "@tidemark/shared/profiles/builtinProfiles";
import { EXIT_CODES } from "../errors.ts";
import type { CliIo } from "../io.ts";
import type { ProfilesOptions } from "../options.ts";
import { loadProfile, profileHash } from "../profiles/loadProfile.ts";

export function profileListText(): string {
  const width = Math.max(...BUILTIN_PROFILES.map((p) => p.name.length));
  const lines = BUILTIN_PROFILES.map((p) => `${p.name.padEnd(width)}  ${p.description}`);
  return `${lines.join("\n")}\n\nPrint one as JSON (a starting point for a custom profile file): tidemark profiles NAME\n`;
}

export async function profilesCommand(name: string | null, options: ProfilesOptions, io: CliIo): Promise<number> {
  if (name === null) {
    if (options.json) {
      io.stdout.write(`${JSON.stringify(BUILTIN_PROFILES.map((p) => ({ ...p, hash: profileHash(p) })), null, 2)}\n`);
    } else {
      io.stdout.write(profileListText());
    }
    return EXIT_CODES.ok;
  }
  const isBuiltin = findBuiltinProfile(name) !== undefined;
  const loaded = await loadProfile(name, io.cwd);
  io.stdout.write(`${JSON.stringify(loaded.profile, null, 2)}\n`);
  if (!isBuiltin) io.stderr.write(`tidemark: ${name} is a valid profile "${loaded.profile.name}" (hash ${loaded.hash.slice(0, 12)}…)\n`);
  return EXIT_CODES.ok;
}
