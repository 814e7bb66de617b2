/**
 * Exit codes and the errors that carry them. Commands throw; only bin.ts (through reportAndExit) exits.
 */
export const EXIT_CODES = {
  /** No file failed its profile (warnings allowed unless --fail-on warn). */
  ok: 0,
  /** A file failed its profile, or warned with --fail-on warn (verify: a file changed or went missing). */
  failed: 1,
  /** Bad invocation, bad profile, or a path that does not exist; the server refused the request (4xx). */
  usage: 2,
  /** A file could not be read and none failed (verify: a file could not be read and none changed). */
  unreadable: 3,
  /** The upload did not reach the server: the batch is spooled, to be sent later with `tidemark upload --spool`. */
  notDelivered: 4,
  /** No API token, or the server refused it (401): run tidemark login --server URL. */
  auth: 5,
  /** The server could not be reached within the retry time, or the URL is not a Tidemark server (TLS/protocol mismatch, a non-JSON answer). */
  unreachable: 6,
  /** `worker`: stopped while the server was unreachable; its unfinished jobs return to the queue after the heartbeat limit. */
  jobsLeft: 7,
  /** Interrupted (Ctrl-C / SIGTERM); the partial report and resume state were written. */
  interrupted: 130,
} as const;

/** Which verdicts fail a run: the profile's fails only, or warnings too (`--fail-on warn`). */
export type FailOn = "fail" | "warn";

/** The exit code of a finished scan: failures first, then unreadable files. */
export function scanExitCode(summary: { fail: number; warn: number; error: number }, failOn: FailOn): number {
  if (summary.fail > 0 || (failOn === "warn" && summary.warn > 0)) return EXIT_CODES.failed;
  if (summary.error > 0) return EXIT_CODES.unreadable;
  return EXIT_CODES.ok;
}

export type ExitCode = (typeof EXIT_CODES)[keyof typeof EXIT_CODES];

export const EXIT_CODES_HELP = `
Exit codes:
  0    no file failed (warnings allowed unless --fail-on warn)
  1    a file failed its profile, or warned with --fail-on warn (verify: a file changed or went missing)
  2    bad invocation, bad profile, a path that does not exist, or the server refused the request
  3    a file could not be read and none failed (verify: unreadable, none changed)
  4    the upload was only spooled, not delivered: send it later with tidemark upload --spool
  5    no API token, or the server refused it: run tidemark login --server URL
  6    the server could not be reached in time, or the URL is not a Tidemark server
  7    worker: stopped without handing its jobs back (server unreachable); they return after the heartbeat limit
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

/** The one message for a missing or refused token, whatever the command. */
export function loginAdvice(server: string): string {
  return `run tidemark login --server ${server} (or set TIDEMARK_TOKEN=id:secret to a valid token)`;
}
