/** Where a command reads and writes: the process by default, buffers in tests. */
export interface CliIo {
  /** Results (reports, JSON) go here. */
  stdout: { write(text: string): unknown; isTTY?: boolean };
  /** Progress, warnings and errors go here. */
  stderr: { write(text: string): unknown; isTTY?: boolean };
  stdin: NodeJS.ReadableStream & { isTTY?: boolean };
  env: NodeJS.ProcessEnv;
  cwd: string;
}

export function processIo(): CliIo {
  return { stdout: process.stdout, stderr: process.stderr, stdin: process.stdin, env: process.env, cwd: process.cwd() };
}
