/**
 * Answers that need none of the command tree: `tidemark --version` (or `-V`) alone prints the version
 * before commander, zod and the profiles are even loaded, so scripts that ask for it pay only Node's own
 * start-up. The output is commander's, byte for byte ("0.1.0\n"); anything else goes to the program.
 */
import { toolInfo } from "./toolInfo.ts";

const VERSION_FLAGS = new Set(["--version", "-V"]);

/** True when `argv` (process.argv) was answered here. */
export function answerQuickly(argv: readonly string[], stdout: NodeJS.WritableStream = process.stdout): boolean {
  if (argv.length !== 3 || !VERSION_FLAGS.has(argv[2])) return false;
  stdout.write(`${toolInfo().version}\n`);
  return true;
}
