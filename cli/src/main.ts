/**
 * Runs the program and is the one place that turns errors into exit codes and one-line messages.
 * Stack traces are shown only with TIDEMARK_DEBUG=1.
 */
import { CommanderError } from "commander";
import { ProfileError } from "@tidemark/shared/profiles/profileError";
import { EXIT_CODES, ExitError, oneLine } from "./errors.ts";
import { createProgram } from "./program.ts";

export async function main(argv: string[]): Promise<void> {
  await createProgram().parseAsync(argv);
}

/** Commander's own codes for help and version output, which are not failures. */
const COMMANDER_SUCCESS = new Set(["commander.helpDisplayed", "commander.version", "commander.help"]);

export function exitCodeFor(error: unknown): number {
  if (error instanceof ExitError) return error.exitCode;
  if (error instanceof CommanderError) return COMMANDER_SUCCESS.has(error.code) ? EXIT_CODES.ok : EXIT_CODES.usage;
  if (error instanceof ProfileError) return EXIT_CODES.usage;
  return EXIT_CODES.failed;
}

export function messageFor(error: unknown): string | null {
  // Commander has already printed its message.
  if (error instanceof CommanderError) return null;
  if (error instanceof ExitError) return error.message || null;
  if (error instanceof ProfileError) return oneLine(error);
  return `unexpected error: ${oneLine(error)} (run with TIDEMARK_DEBUG=1 for details)`;
}

export function reportAndExit(error: unknown): void {
  const message = messageFor(error);
  if (message) process.stderr.write(`tidemark: ${message}\n`);
  if (process.env.TIDEMARK_DEBUG === "1" && error instanceof Error && error.stack) process.stderr.write(`${error.stack}\n`);
  const code = exitCodeFor(error);
  // Exit only once stdout has drained: a report piped to another program must not be cut short.
  process.stdout.write("", () => process.exit(code));
}
