#!/usr/bin/env node
// Runs the prebuilt bundle (cli/dist, from `node cli/bin/build.mjs`) when it is there and every source it
// was built from is unchanged, with V8's code cache (runBundle.mjs); otherwise the TypeScript sources
// through tsx's loader. TIDEMARK_FROM_SOURCE=1 forces the sources.
import { fileURLToPath } from "node:url";
import { staleBundleSources } from "./bundleState.mjs";
import { answerVersion, runBundle } from "./runBundle.mjs";

if (process.env.TIDEMARK_FROM_SOURCE !== "1" && staleBundleSources()?.length === 0) {
  const bundle = fileURLToPath(new URL("../dist/bin.cjs", import.meta.url));
  if (!answerVersion(bundle)) runBundle(bundle);
} else {
  const { register } = await import("tsx/esm/api");
  register();
  await import("../src/bin.ts");
}
