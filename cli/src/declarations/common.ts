/**
 * What every command declaration shares. Declarations use @commander-js/extra-typings, so each action's
 * options object is typed from its own `.option()` calls (flags, parsers, choices, defaults): no casts.
 */
import { Option, type Command, type OptionValues } from "@commander-js/extra-typings";
import { DEFAULT_PROFILE_NAME } from "@tidemark/shared/profiles/builtinProfiles";
import { ExitError } from "../errors.ts";
import type { CliIo } from "../io.ts";
import { collect, DEFAULT_INCLUDE_GLOBS, PROGRESS_MODES } from "../options.ts";

/** What a declaration needs besides the program: the action to call and the I/O to give it. */
export interface Declared<Action> {
  run: Action;
  io: () => CliIo;
}

/** Awaits an action's exit code; a non-zero one becomes an ExitError for cli/src/main.ts. */
export async function finish(code: Promise<number>): Promise<void> {
  const exitCode = await code;
  if (exitCode !== 0) throw new ExitError(exitCode);
}

/** A fresh empty list for a repeatable option's default (typed string[], not a readonly empty tuple). */
export function noValues(): string[] {
  return [];
}

export const PROFILE_HELP = `built-in profile name or a profile JSON file (default: tidemark.json's, else ${DEFAULT_PROFILE_NAME})`;
export const SERVER_HELP = "server (default: tidemark.json's, else the one stored by tidemark login)";

/** `--include` / `--exclude` as scan, verify and enqueue take them. */
export function globOptions<A extends unknown[], O extends OptionValues, G extends OptionValues>(cmd: Command<A, O, G>) {
  return cmd
    .addOption(
      new Option("--include <glob>", "file names to scan, repeatable, case-insensitive").argParser(collect).default(noValues(), DEFAULT_INCLUDE_GLOBS.join(" ")),
    )
    .addOption(
      new Option("--exclude <glob>", "files or folders to skip, repeatable (matched against the name or the relative path)").argParser(collect).default(noValues(), "none"),
    );
}

/** `--progress <mode>`, with the command's own help text. */
export function progressOption(help: string) {
  return new Option("--progress <mode>", help).choices(PROGRESS_MODES).default("auto");
}
