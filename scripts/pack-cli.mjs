#!/usr/bin/env node
// `npm run pack:cli [-- --out DIR]`: a tarball of the tidemark command. Our TypeScript (shared/ included) and
// every npm package it imports are bundled by esbuild, except Skia's native binary and the font files
// (cli/bin/bundle.mjs, UNBUNDLED_PACKAGES), which stay its only dependencies: `npm install -g
// tidemark-<version>.tgz` works on a machine with only Node 20 and the npm registry.
import { execFileSync } from "node:child_process";
import { chmodSync, copyFileSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { bundleCli, cliDir, repoRoot, UNBUNDLED_PACKAGES } from "../cli/bin/bundle.mjs";

const outFlag = process.argv.indexOf("--out");
const outDir = path.resolve(outFlag >= 0 ? process.argv[outFlag + 1] : path.join(cliDir, "pack"));
const cliPkg = JSON.parse(readFileSync(path.join(cliDir, "package.json"), "utf8"));
const rootPkg = JSON.parse(readFileSync(path.join(repoRoot, "package.json"), "utf8"));

const stage = mkdtempSync(path.join(tmpdir(), "tidemark-pack-"));
try {
  await bundleCli({ outdir: path.join(stage, "dist"), selfContained: true });
  mkdirSync(path.join(stage, "bin"));
  const bin = path.join(stage, "bin", "tidemark.js");
  // The bundle runs with V8's code cache (cli/bin/runBundle.mjs): written beside it, or in the user's cache
  // folder when the install is not writable.
  copyFileSync(path.join(cliDir, "bin", "runBundle.mjs"), path.join(stage, "bin", "runBundle.mjs"));
  writeFileSync(
    bin,
    '#!/usr/bin/env node\nimport { fileURLToPath } from "node:url";\nimport { answerVersion, runBundle } from "./runBundle.mjs";\nconst bundle = fileURLToPath(new URL("../dist/bin.cjs", import.meta.url));\nif (!answerVersion(bundle)) runBundle(bundle);\n',
  );
  chmodSync(bin, 0o755);
  const pkg = {
    name: "tidemark",
    version: cliPkg.version,
    description: cliPkg.description,
    license: rootPkg.license,
    type: "module",
    bin: { tidemark: "bin/tidemark.js" },
    engines: { node: ">=20" },
    // What cannot be bundled: Skia's native binary (npm installs the one for the machine) and the font files.
    dependencies: Object.fromEntries(UNBUNDLED_PACKAGES.map((name) => [name, cliPkg.dependencies[name]])),
    files: ["bin", "dist", "README.md"],
  };
  writeFileSync(path.join(stage, "package.json"), `${JSON.stringify(pkg, null, 2)}\n`);
  writeFileSync(
    path.join(stage, "README.md"),
    [
      "# tidemark",
      "",
      "Batch quality control for sound-archive transfers: `tidemark scan`, `verify`, `upload`, `worker` and more.",
      "Self-contained (no dependencies); needs Node.js 20 or later. `tidemark --help` lists the commands and exit codes.",
      "",
    ].join("\n"),
  );
  mkdirSync(outDir, { recursive: true });
  const name = execFileSync("npm", ["pack", "--silent", "--pack-destination", outDir], { cwd: stage, encoding: "utf8" }).trim().split("\n").pop();
  process.stdout.write(`${path.join(outDir, name)}\n`);
} finally {
  rmSync(stage, { recursive: true, force: true });
}
