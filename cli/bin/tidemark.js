#!/usr/bin/env node
// Runs the prebuilt bundle (cli/dist, from `node cli/bin/build.mjs`) when it is there and every source it
// was built from is unchanged; otherwise the TypeScript sources through tsx's loader. TIDEMARK_FROM_SOURCE=1
// forces the sources.
import { readFileSync, statSync } from "node:fs";

const root = new URL("../../", import.meta.url);

function bundleIsCurrent() {
  if (process.env.TIDEMARK_FROM_SOURCE === "1") return false;
  let manifest;
  try {
    manifest = JSON.parse(readFileSync(new URL("../dist/manifest.json", import.meta.url), "utf8"));
  } catch {
    return false;
  }
  for (const [file, built] of Object.entries(manifest.inputs ?? {})) {
    const now = statSync(new URL(file, root), { throwIfNoEntry: false });
    if (!now || now.size !== built.size || now.mtimeMs !== built.mtimeMs) return false;
  }
  return Object.keys(manifest.inputs ?? {}).length > 0;
}

if (bundleIsCurrent()) {
  await import("../dist/bin.js");
} else {
  const { register } = await import("tsx/esm/api");
  register();
  await import("../src/bin.ts");
}
