// esbuild settings for the CLI, shared by build.mjs (cli/dist) and scripts/pack-cli.mjs (the package users
// install). Both bundle the npm packages as well: Node then loads a few large files instead of resolving,
// reading and (for CommonJS) re-parsing hundreds, which takes ≈ 80 ms of CPU off every start (issue #22),
// and the benchmark times what users run.
//
// The command itself is one CommonJS file, bin.cjs, which runBundle.mjs compiles through node:vm with V8's
// code cache (Node 20 caches no ES module's code). The worker threads' entries stay ES modules with shared
// chunks: they start once a scan, not once a command.
import { createHash } from "node:crypto";
import { mkdir, readFile, writeFile } from "node:fs/promises";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { build, transform } from "esbuild";

export const cliDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const repoRoot = path.resolve(cliDir, "..");

/**
 * Packages the self-contained bundle cannot hold: Skia's native binary (@napi-rs/canvas picks the one for
 * the machine at install) and the font files read at run time. They stay dependencies of the package.
 */
export const UNBUNDLED_PACKAGES = ["@napi-rs/canvas", "@fontsource/source-sans-3"];

/** The command's bundle in outdir, and the comment at its end that names its build (runBundle.mjs keys its code cache on it). */
export const MAIN_BUNDLE = "bin.cjs";
export const BUNDLE_ID_MARK = "//# tidemarkBundleId=";

const unbundled = {
  name: "unbundled-packages",
  setup(b) {
    b.onResolve({ filter: /^@(napi-rs\/canvas|fontsource\/source-sans-3)(\/|$)/ }, (args) => ({ path: args.path, external: true }));
  },
};

const LIBFLAC_PACKAGE = "@wasm-audio-decoders/flac";
const libflacBeside = {
  name: "libflac-beside",
  setup(b) {
    b.onResolve({ filter: /^@wasm-audio-decoders\/flac$/ }, () => ({ path: "./libflac.cjs", external: true }));
  },
};

/**
 * commander requires node:child_process when it loads, for the executable subcommands Tidemark does not
 * declare; that module pulls in net, dgram and the stream internals, ≈ 2 ms of every start (issue #22).
 * The plugin makes commander require it on its first spawn instead: the same `childProcess.spawn` call,
 * resolved then. Should a commander release word the line differently, the file is left as it is (a
 * warning says so) and only the saving is lost.
 */
const COMMANDER_CHILD_PROCESS = "const childProcess = require('node:child_process');";
const LAZY_CHILD_PROCESS =
  "let __tidemarkChildProcess; const childProcess = { get spawn() { return (__tidemarkChildProcess ??= require('node:child_process')).spawn; } };";
export const lazyCommanderChildProcess = {
  name: "lazy-commander-child-process",
  setup(b) {
    b.onLoad({ filter: /[\\/]commander[\\/]lib[\\/]command\.js$/ }, async (args) => {
      const text = await readFile(args.path, "utf8");
      if (!text.includes(COMMANDER_CHILD_PROCESS)) {
        return { contents: text, loader: "js", warnings: [{ text: `commander no longer has "${COMMANDER_CHILD_PROCESS}": node:child_process loads at start-up again` }] };
      }
      return { contents: text.replace(COMMANDER_CHILD_PROCESS, LAZY_CHILD_PROCESS), loader: "js" };
    });
  },
};

// CommonJS packages inside an ESM bundle call require() for Node's own modules: give them one.
const REQUIRE_SHIM = 'import { createRequire as __tidemarkCreateRequire } from "node:module"; const require = __tidemarkCreateRequire(import.meta.url);';
// Strict mode as in the ES module sources, and import.meta, which the sources find the workers, package.json
// and the fonts from. Put on the first line (bin.ts's shebang becomes a comment), so no line moves.
const CJS_PROLOGUE =
  '"use strict"; var __tidemarkImportMeta = { url: require("node:url").pathToFileURL(__filename).href, resolve: (s) => require("node:url").pathToFileURL(require.resolve(s)).href }; ';

/** Bundles bin.ts (CommonJS), the scan worker and the spectral thread (ESM) into `outdir`; `selfContained` bundles npm packages as well. */
export async function bundleCli({ outdir, selfContained = false }) {
  const common = {
    absWorkingDir: repoRoot,
    outdir,
    bundle: true,
    platform: "node",
    target: "node20",
    sourcemap: selfContained ? false : "linked",
    metafile: true,
    logLevel: "warning",
    plugins: [unbundled],
    legalComments: selfContained ? "eof" : undefined,
  };
  const workers = await build({
    ...common,
    entryPoints: { scanWorker: "cli/src/scan/scanWorker.ts", spectralThread: "cli/src/scan/spectralThread.ts" },
    // Chunks the two workers share; every file lands in outdir itself, so the sources' relative URLs
    // (../package.json, ./scanWorker.js) resolve alike from any of them.
    splitting: true,
    chunkNames: "[name]-[hash]",
    format: "esm",
    banner: { js: REQUIRE_SHIM },
  });
  // Lazily imported commands stay lazy inside the one file: esbuild runs a module's body when it is first
  // imported, and V8 compiles a function when it is first called (or takes it from the code cache).
  // libFLAC's package is a file of its own beside it (libflac.cjs, required by the FLAC reader only): it
  // carries its WebAssembly as String.raw text outside ASCII, which would keep bin.cjs from being ASCII.
  const main = await build({
    ...common,
    entryPoints: { bin: "cli/src/bin.ts" },
    format: "cjs",
    outExtension: { ".js": ".cjs" },
    define: { "import.meta": "__tidemarkImportMeta" },
    plugins: [unbundled, libflacBeside, lazyCommanderChildProcess],
    write: false,
  });
  const libflac = await build({ ...common, entryPoints: { libflac: LIBFLAC_PACKAGE }, format: "cjs", outExtension: { ".js": ".cjs" } });
  await mkdir(outdir, { recursive: true });
  for (const file of main.outputFiles) {
    let text = file.text;
    if (path.basename(file.path) === MAIN_BUNDLE) {
      text = CJS_PROLOGUE + (text.startsWith("#!") ? `//${text.slice(2)}` : text);
      text = await asciiIfSame(text);
      // The build's identity, appended (not prepended: the source map's lines stay where they are).
      text += `\n${BUNDLE_ID_MARK}${createHash("sha256").update(text).digest("hex").slice(0, 32)}\n`;
    }
    await writeFile(file.path, text);
  }
  return {
    metafile: {
      inputs: { ...workers.metafile.inputs, ...main.metafile.inputs, ...libflac.metafile.inputs },
      outputs: { ...workers.metafile.outputs, ...main.metafile.outputs, ...libflac.metafile.outputs },
    },
  };
}

/**
 * `text` with every character outside ASCII written as an escape, if that changes nothing but comments: then
 * runBundle.mjs reads the file as Latin-1, a one-byte string without UTF-8 decoding (≈ 4 ms of every start,
 * issue #22). Checked rather than assumed: esbuild escapes strings, templates and regular expressions, but
 * must leave a String.raw template's text raw, where an escape would change the value. Both versions are
 * printed without comments and compared.
 */
async function asciiIfSame(text) {
  // eslint-disable-next-line no-control-regex -- every character outside ASCII, and only those
  const escaped = text.replace(/[^\x00-\x7f]/gu, (c) => `\\u{${c.codePointAt(0).toString(16)}}`);
  if (escaped === text) return text;
  const printed = (code) => transform(code, { loader: "js", format: "cjs", minifyWhitespace: true }).then((r) => r.code);
  const [before, after] = await Promise.all([printed(text), printed(escaped)]);
  return before === after ? escaped : text;
}
