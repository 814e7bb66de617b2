/**
 * Exit codes and the errors that carry them. Commands throw; only bin.ts (through reportAndExit) exits.
 */
export const EXIT_CODES = {
  /** No file failed its profile. */
  ok: 0,
  /** A file failed its profile or could not be read (also: verify found a changed or missing file). */
  failed: 1,
  /** Bad invocation, bad profile, or a path that does not exist. */
  usage: 2,
  /** Interrupted (Ctrl-C / SIGTERM); the partial report and resume state were written. */
  interrupted: 130,
} as const;

export type ExitCode = (typeof EXIT_CODES)[keyof typeof EXIT_CODES];

export const EXIT_CODES_HELP = `
Exit codes:
  0    no file failed
  1    a file failed its profile or could not be read (verify: a file changed or went missing)
  2    bad invocation, bad profile, or a path that does not exist
  130  interrupted (Ctrl-C); the partial report and resume state were written`;

/** Ends the program with `exitCode`; `message` (one line) is printed to stderr when given. */
export class ExitError extends Error {
  readonly exitCode: number;

  constructor(exitCode: number, message = "") {
    super(message);
    this.name = "ExitError";
    this.exitCode = exitCode;
  }
}

/** Bad invocation: the message says what was expected and what arrived. Exit 2. */
export class UsageError extends ExitError {
  constructor(message: string) {
    super(EXIT_CODES.usage, message);
    this.name = "UsageError";
  }
}

/** First line of any error's message, for one-line reports to a user. */
export function oneLine(error: unknown): string {
  const text = error instanceof Error ? error.message : String(error);
  return text.split("\n")[0].trim() || (error instanceof Error ? error.name : "unknown error");
}
