/** The cli package's programmatic surface (for tests and scripts such as the benchmark). */
export { createProgram, type CommandActions } from "./program.ts";
export { EXIT_CODES, ExitError, UsageError } from "./errors.ts";
