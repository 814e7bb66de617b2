/** A minimal line logger on stderr; tests pass a quiet or collecting one. */
export interface Logger {
  info(line: string): void;
  warn(line: string): void;
  error(line: string): void;
}

export const consoleLogger: Logger = {
  info: (line) => console.error(`[server] ${line}`),
  warn: (line) => console.error(`[server] warn: ${line}`),
  error: (line) => console.error(`[server] error: ${line}`),
};

export const silentLogger: Logger = { info: () => undefined, warn: () => undefined, error: () => undefined };
