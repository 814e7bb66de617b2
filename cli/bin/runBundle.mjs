// Runs the command's CommonJS bundle (bin.cjs, cli/bin/bundle.mjs) through node:vm with V8's code cache
// (Node's vm.Script `cachedData`): a run that finds the cache skips parsing and compiling most of the
// bundle's functions, ≈ 50 ms of CPU on a one-file scan (issue #22). Node 20 caches no ES module's code,
// hence CommonJS. V8 itself checks that a cache fits (its version, flags, the source's length) and rejects
// it otherwise; the file name adds the bundle's build id (appended to the bundle by bundle.mjs) and Node's
// version, so a rebuilt bundle never meets an old cache. A missing, rejected or unreadable cache only costs
// the compile; one that cannot be written is skipped without a word.
//
// One cache a command (`scan`, `verify`…: the first argument), so each holds the code its command runs and
// `tidemark --version` does not load a scan's. Written at exit, after the run compiled what it needed: when
// there was none, when V8 rejected it, or when this run compiled a tenth more code than the run that wrote
// it (a one-file scan, measured and drawn in this thread, after a scan on the worker pool). That takes a walk
// over the heap (≈ 2.5 ms), so a run with a cache V8 took looks at one time in four (every time when
// debugging). Not after a usage error (exit 2): that run compiled little of what the command needs.
//
// Where: TIDEMARK_CODE_CACHE_DIR when set ("off" for none), else beside the bundle, else (not writable there,
// as in a system-wide install) $XDG_CACHE_HOME/tidemark or ~/.cache/tidemark.
// TIDEMARK_DEBUG_CODE_CACHE=1 says on stderr what happened.
import { isAscii } from "node:buffer";
import { mkdirSync, readFileSync, renameSync, rmSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { homedir } from "node:os";
import path from "node:path";
import vm from "node:vm";

const BUNDLE_ID_MARK = "//# tidemarkBundleId=";
/** "TMV8" then format 1, then the writer's bytecode size (bytes, uint32 LE), then V8's data. */
const MAGIC = 0x38564d54;
const FORMAT = 1;
const HEADER_BYTES = 12;
/** Rewrite when this run holds this much more bytecode than the one that wrote the cache (Node's own included: ≈ 0.8 MB for a scan on the worker pool, ≈ 0.94 MB for one that also measured and drew in this thread). */
const GROWTH_TO_REWRITE = 1.1;
const USAGE_EXIT_CODE = 2;
/** A run with an accepted cache checks for growth with this probability. */
const GROWTH_CHECK_SHARE = 0.25;

/** Folders tried in order, for reading and for writing. */
export function codeCacheDirs(bundlePath, env = process.env) {
  const explicit = env.TIDEMARK_CODE_CACHE_DIR;
  if (explicit === "off") return [];
  if (explicit) return [path.resolve(explicit)];
  const user = env.XDG_CACHE_HOME ? path.join(env.XDG_CACHE_HOME, "tidemark") : path.join(homedir(), ".cache", "tidemark");
  return [path.dirname(bundlePath), user];
}

function readCache(file) {
  let bytes;
  try {
    bytes = readFileSync(file);
  } catch {
    return null;
  }
  if (bytes.length <= HEADER_BYTES || bytes.readUInt32LE(0) !== MAGIC || bytes.readUInt32LE(4) !== FORMAT) return { data: null, bytecode: 0, bad: true };
  return { data: bytes.subarray(HEADER_BYTES), bytecode: bytes.readUInt32LE(8), bad: false };
}

function writeCache(dirs, name, data, bytecode) {
  const header = Buffer.alloc(HEADER_BYTES);
  header.writeUInt32LE(MAGIC, 0);
  header.writeUInt32LE(FORMAT, 4);
  header.writeUInt32LE(Math.min(bytecode, 0xffffffff), 8);
  const reasons = [];
  for (const dir of dirs) {
    const file = path.join(dir, name);
    // Another tidemark may be reading or writing it: each writes its own file and renames it into place.
    const temp = `${file}.${process.pid}.tmp`;
    try {
      mkdirSync(dir, { recursive: true });
      writeFileSync(temp, Buffer.concat([header, data]));
      renameSync(temp, file);
      return { file, reasons };
    } catch (error) {
      try {
        rmSync(temp, { force: true });
      } catch {
        // The folder is not there or not a folder: no temporary file either.
      }
      reasons.push(`${dir}: ${error?.code ?? error}`);
    }
  }
  return { file: null, reasons };
}

/**
 * `tidemark --version` (or `-V`) alone: the version in the package.json above the bundle's folder, as
 * cli/src/quickAnswers.ts prints it, without reading the bundle at all (issue #22: ≈ 10 ms of CPU less).
 * True when answered.
 */
export function answerVersion(bundlePath, argv = process.argv) {
  if (argv.length !== 3 || (argv[2] !== "--version" && argv[2] !== "-V")) return false;
  let version;
  try {
    version = JSON.parse(readFileSync(path.join(path.dirname(bundlePath), "..", "package.json"), "utf8")).version;
  } catch {
    return false;
  }
  process.stdout.write(`${typeof version === "string" ? version : "0.0.0"}\n`);
  return true;
}

/**
 * Compiles and runs the CommonJS file at `bundlePath` (absolute) as Node would, with a code cache.
 * Returns what happened to the cache: "accepted", "rejected", "missing" or "off".
 */
export function runBundle(bundlePath, env = process.env) {
  const debugging = env.TIDEMARK_DEBUG_CODE_CACHE === "1";
  const debug = debugging ? (line) => process.stderr.write(`tidemark: code cache: ${line}\n`) : () => {};
  // An ASCII file (checked natively, ≈ 0.1 ms) is read as Latin-1, a one-byte string without UTF-8 decoding.
  // Escaping the bundle's other characters is not safe in general: esbuild leaves those of String.raw
  // templates as they are (libFLAC's module is one).
  const bytes = readFileSync(bundlePath);
  const source = bytes.toString(isAscii(bytes) ? "latin1" : "utf8");
  const at = source.lastIndexOf(BUNDLE_ID_MARK);
  const id = at >= 0 ? source.slice(at + BUNDLE_ID_MARK.length).trim() : "";
  // A bundle without its id (not built by bundle.mjs) gets no cache: nothing would tell its builds apart.
  const dirs = /^[0-9a-f]{8,64}$/.test(id) ? codeCacheDirs(bundlePath, env) : [];
  const command = /^[a-z][a-z-]{0,31}$/.test(process.argv[2] ?? "") ? process.argv[2] : "other";
  const name = `${path.basename(bundlePath)}-${id}-node${process.versions.node}-${process.arch}-${command}.v8cache`;
  let found = null;
  for (const dir of dirs) {
    found = readCache(path.join(dir, name));
    if (found) break;
  }
  // CommonJS's own wrapper, so the bundle sees require, module and __filename as under require().
  const wrapped = `(function (exports, require, module, __filename, __dirname) { ${source}\n})`;
  const script = new vm.Script(wrapped, {
    filename: bundlePath,
    cachedData: found?.data ?? undefined,
    importModuleDynamically: vm.constants.USE_MAIN_CONTEXT_DEFAULT_LOADER,
  });
  const state = dirs.length === 0 ? "off" : !found ? "missing" : found.bad || script.cachedDataRejected ? "rejected" : "accepted";
  debug(`${state}${dirs.length ? ` (${name})` : ""}`);
  if (state !== "off") {
    process.once("exit", (code) => {
      if (code === USAGE_EXIT_CODE) return;
      if (state === "accepted" && !debugging && Math.random() >= GROWTH_CHECK_SHARE) return;
      // Whatever goes wrong here, the command has done its work: its exit code and output stand.
      try {
        // node:v8 only here, in the runs that look (≈ 2 ms a start to load it).
        const { getHeapCodeStatistics } = createRequire(import.meta.url)("node:v8");
        const bytecode = getHeapCodeStatistics().bytecode_and_metadata_size;
        if (state === "accepted" && bytecode < found.bytecode * GROWTH_TO_REWRITE) return;
        const written = writeCache(dirs, name, script.createCachedData(), bytecode);
        debug(written.file ? `written ${written.file}` : `not written (${written.reasons.join("; ")})`);
      } catch (error) {
        debug(`not written (${error})`);
      }
    });
  }
  const module = { exports: {}, filename: bundlePath, id: bundlePath };
  script.runInThisContext().call(module.exports, module.exports, createRequire(bundlePath), module, bundlePath, path.dirname(bundlePath));
  return state;
}
