/**
 * `tidemark init`: writes tidemark.json in the working folder from the flags, asking on a terminal for the
 * profile, collection and server the flags leave out. The file is validated against the same schema the
 * commands read it with, so what init writes always loads.
 */
import { writeFile } from "node:fs/promises";
import path from "node:path";
import { BUILTIN_PROFILES, DEFAULT_PROFILE_NAME } from "@tidemark/shared/profiles/builtinProfiles";
import { PROJECT_CONFIG_FILE, PROJECT_CONFIG_JSON_SCHEMA_ID, projectConfigSchema, type ProjectConfig } from "@tidemark/shared/types/projectConfig";
import { EXIT_CODES, UsageError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import { parseCollectionName, parseServerUrl, type InitOptions } from "../options.ts";
import { promptLine } from "./prompt.ts";

async function ask(io: CliIo, question: string, fallback: string | null, check: (v: string) => string): Promise<string | null> {
  for (;;) {
    const answer = await promptLine(`${question}${fallback ? ` [${fallback}]` : ""}: `, io);
    const value = answer === "" ? fallback : answer;
    if (value === null || value === "") return null;
    try {
      return check(value);
    } catch (error) {
      io.stderr.write(`  ${(error as Error).message}\n`);
    }
  }
}

export async function initCommand(options: InitOptions, io: CliIo): Promise<number> {
  const file = path.join(io.cwd, PROJECT_CONFIG_FILE);
  const config: ProjectConfig = { $schema: PROJECT_CONFIG_JSON_SCHEMA_ID };
  let { profile, collection, server } = options;
  const interactive = !options.yes && io.stdin.isTTY === true;
  if (interactive) {
    io.stderr.write(`Profiles: ${BUILTIN_PROFILES.map((p) => p.name).join(", ")} (or a profile JSON file)\n`);
    profile ??= await ask(io, "Profile", "preservation-master", (v) => v);
    collection ??= await ask(io, "Collection (empty: none)", null, parseCollectionName);
    server ??= await ask(io, "Server URL (empty: none)", null, parseServerUrl);
  }
  if (profile) config.profile = profile;
  if (collection) config.collection = collection;
  if (server) config.server = server;
  if (options.include.length > 0) config.include = options.include;
  if (options.exclude.length > 0) config.exclude = options.exclude;
  if (options.spectrograms) config.spectrograms = options.spectrograms;
  if (options.failOn) config.failOn = options.failOn;

  const checked = projectConfigSchema.safeParse(config);
  if (!checked.success) {
    const issue = checked.error.issues[0];
    throw new UsageError(`cannot write ${PROJECT_CONFIG_FILE}: ${issue.path.map(String).join(".")}: ${issue.message}`);
  }
  try {
    await writeFile(file, `${JSON.stringify(checked.data, null, 2)}\n`, { flag: options.force ? "w" : "wx" });
  } catch (error) {
    const code = (error as { code?: string }).code;
    if (code === "EEXIST") throw new UsageError(`${file} already exists; add --force to replace it`);
    throw new UsageError(`cannot write ${file}: ${code ?? String(error)}`);
  }
  io.stderr.write(`tidemark: wrote ${file}${config.profile ? "" : ` (no profile: scans judge with ${DEFAULT_PROFILE_NAME})`}\n`);
  return EXIT_CODES.ok;
}
