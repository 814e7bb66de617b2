#!/usr/bin/env node
// Runs the prebuilt bundle (cli/dist, from `node cli/bin/build.mjs`) when it is there and every source it
// was built from is unchanged; otherwise the TypeScript sources through tsx's loader. TIDEMARK_FROM_SOURCE=1
// forces the sources.
import { staleBundleSources } from "./bundleState.mjs";

if (process.env.TIDEMARK_FROM_SOURCE !== "1" && staleBundleSources()?.length === 0) {
  await import("../dist/bin.js");
} else {
  const { register } = await import("tsx/esm/api");
  register();
  await import("../src/bin.ts");
}
