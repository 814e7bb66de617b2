/**
 * Compares what each workspace's package.json lists with what its sources import, both ways: a package
 * imported but not listed works only by npm's hoisting (and breaks when another workspace drops it); one
 * listed but never imported is dead weight in every install. tests/manifests.test.ts runs it on the repo.
 *
 * "Imported" means a bare specifier in `from "…"`, `import("…")`, `import "…"`, `require("…")`,
 * `require.resolve("…/file")` (font files), CSS `@import "…"`, or a `--import …` loader in the package's
 * scripts or sources. `@types/x` counts as used when x is imported (`@types/a__b` for `@a/b`).
 */
import { readdirSync, readFileSync } from "node:fs";
import { builtinModules } from "node:module";
import path from "node:path";

const SOURCE_FILE = /\.(?:[cm]?[jt]sx?|css)$/;
/** Build output, installed packages and static assets: not the package's own sources. */
const SKIPPED_DIRS = new Set(["node_modules", "dist", "pack", "public", ".cache"]);
const SPECIFIER_PATTERNS = [
  /\bfrom\s+["']([^"']+)["']/g,
  /\bimport\s*\(\s*["']([^"']+)["']\s*\)/g,
  /\bimport\s+["']([^"']+)["']/g,
  /\brequire(?:\.resolve)?\(\s*["'`]([^"'`$]+)/g,
  /@import\s+["']([^"']+)["']/g,
  /--import[= ]([@\w][\w@/.-]*)/g,
  /["']--import["']\s*,\s*["']([^"']+)["']/g,
];
const BUILTINS = new Set(builtinModules);

export interface ManifestReport {
  /** The workspace folder, relative to the repository root. */
  workspace: string;
  /** Imported by these files but listed in neither dependencies nor devDependencies. */
  notListed: { name: string; files: string[] }[];
  /** Listed but imported by no file of the workspace. */
  notImported: string[];
}

/** The npm package a bare specifier names, or null for relative paths, URLs and Node's own modules. */
export function packageOf(specifier: string): string | null {
  if (/^(?:\.|\/|[a-z]+:)/.test(specifier)) return null; // relative, absolute, node:, data:, virtual:…
  const parts = specifier.split("/");
  const name = specifier.startsWith("@") ? parts.slice(0, 2).join("/") : parts[0];
  if (BUILTINS.has(name) || !/^(?:@[\w.-]+\/)?[\w.-]+$/.test(name)) return null;
  return name;
}

/** The packages one source text imports. */
export function importedPackages(text: string): Set<string> {
  const names = new Set<string>();
  for (const pattern of SPECIFIER_PATTERNS) {
    for (const match of text.matchAll(pattern)) {
      const name = packageOf(match[1]);
      if (name) names.add(name);
    }
  }
  return names;
}

function sourceFiles(dir: string, out: string[] = []): string[] {
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    if (SKIPPED_DIRS.has(entry.name)) continue;
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) sourceFiles(full, out);
    else if (SOURCE_FILE.test(entry.name)) out.push(full);
  }
  return out;
}

/** `@types/a__b` → `@a/b`, `@types/x` → `x`. */
function typedPackage(typesName: string): string {
  const bare = typesName.slice("@types/".length);
  return bare.includes("__") ? `@${bare.replace("__", "/")}` : bare;
}

export function checkManifest(root: string, workspace: string): ManifestReport {
  const dir = path.join(root, workspace);
  const manifest = JSON.parse(readFileSync(path.join(dir, "package.json"), "utf8")) as {
    name?: string;
    dependencies?: Record<string, string>;
    devDependencies?: Record<string, string>;
    scripts?: Record<string, string>;
  };
  const listed = new Set([...Object.keys(manifest.dependencies ?? {}), ...Object.keys(manifest.devDependencies ?? {})]);
  const importers = new Map<string, string[]>();
  const note = (name: string, file: string): void => {
    if (name === manifest.name) return; // a package may import itself by name
    importers.set(name, [...(importers.get(name) ?? []), file]);
  };
  for (const file of sourceFiles(dir)) {
    for (const name of importedPackages(readFileSync(file, "utf8"))) note(name, path.relative(root, file));
  }
  for (const script of Object.values(manifest.scripts ?? {})) {
    for (const name of importedPackages(script)) note(name, `${workspace}/package.json`);
  }
  const notListed = [...importers]
    .filter(([name]) => !listed.has(name))
    .map(([name, files]) => ({ name, files }))
    .sort((a, b) => a.name.localeCompare(b.name));
  const used = (name: string): boolean => importers.has(name) || (name === "@types/node" ? true : name.startsWith("@types/") && importers.has(typedPackage(name)));
  const notImported = [...listed].filter((name) => !used(name)).sort();
  return { workspace, notListed, notImported };
}

/** Every workspace named in the root package.json. */
export function checkWorkspaces(root: string): ManifestReport[] {
  const rootManifest = JSON.parse(readFileSync(path.join(root, "package.json"), "utf8")) as { workspaces?: string[] };
  return (rootManifest.workspaces ?? []).map((workspace) => checkManifest(root, workspace));
}

/**
 * The repository's own code outside the workspaces (tests, scripts, examples, migrations, tool configs)
 * runs in a full checkout, where the root's and every workspace's packages are installed: what it imports
 * must be listed in one of those manifests (tests' own tools in the root's devDependencies).
 */
export function checkRootImports(root: string, folders: string[]): ManifestReport["notListed"] {
  const read = (file: string) => JSON.parse(readFileSync(file, "utf8")) as { name?: string; workspaces?: string[]; dependencies?: Record<string, string>; devDependencies?: Record<string, string> };
  const rootManifest = read(path.join(root, "package.json"));
  const manifests = [rootManifest, ...(rootManifest.workspaces ?? []).map((w) => read(path.join(root, w, "package.json")))];
  const listed = new Set(manifests.flatMap((m) => [...(m.name ? [m.name] : []), ...Object.keys(m.dependencies ?? {}), ...Object.keys(m.devDependencies ?? {})]));
  const files = [
    ...folders.flatMap((folder) => sourceFiles(path.join(root, folder))),
    ...readdirSync(root).filter((f) => /\.config\.[cm]?[jt]s$/.test(f)).map((f) => path.join(root, f)),
  ];
  const importers = new Map<string, string[]>();
  for (const file of files) {
    for (const name of importedPackages(readFileSync(file, "utf8"))) {
      if (!listed.has(name)) importers.set(name, [...(importers.get(name) ?? []), path.relative(root, file)]);
    }
  }
  return [...importers].map(([name, found]) => ({ name, files: found })).sort((a, b) => a.name.localeCompare(b.name));
}
