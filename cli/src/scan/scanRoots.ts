/** The paths a scan was given, as JUnit test suites: one per root, each holding the report paths under it. */
import path from "node:path";
import type { JunitSuite } from "@tidemark/shared/report/junitReport";

/**
 * Report paths are relative to the roots' common folder (crawlFiles); a root's prefix is its own path
 * relative to that folder ("" when it is the folder). Suites are named as the user typed the path.
 */
export function junitSuitesOf(given: readonly string[], rootDir: string, cwd: string): JunitSuite[] {
  return given.map((g) => ({
    name: g,
    prefix: path.relative(rootDir, path.resolve(cwd, g)).split(path.sep).join("/"),
  }));
}
