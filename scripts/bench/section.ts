/** What bench.ts hands a section module (scripts/bench/startup.ts, smallFiles.ts), and what a target is. */
export interface SectionContext {
  /** The bench's temporary folder: inputs go into a sub-folder of it. */
  root: string;
  /** Scratch folder for reports and images. */
  scratch: string;
  repeats: number;
  quick: boolean;
  /** The CLI entry (cli/bin/tidemark.js) and the environment to run it in. */
  bin: string;
  env: NodeJS.ProcessEnv;
  /** Before each timed run: waits for a calm machine when asked, rebuilds a stale bundle. */
  beforeRun(): Promise<void>;
  log(line: string): void;
}

export interface Target {
  value: number;
  target: string;
  met: boolean;
}

export const fmt = (x: number, digits = 1): string => (Number.isFinite(x) ? x.toFixed(digits) : "–");

export function busyNote(otherCores: number): string {
  return Number.isFinite(otherCores) ? ` (others busy: ${otherCores.toFixed(2)} cores)` : "";
}

export function metText(met: boolean): string {
  return met ? "met" : "NOT met";
}
