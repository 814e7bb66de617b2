/**
 * Each workspace's package.json lists exactly the packages its sources import (scripts/lib/manifestImports.ts),
 * and the code outside the workspaces imports only packages some manifest lists.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { checkManifest, checkRootImports, checkWorkspaces, importedPackages, packageOf } from "../scripts/lib/manifestImports.ts";
import { projectRoot } from "../scripts/lib/paths.ts";

describe("the import scanner", () => {
  it("names the package of bare specifiers only", () => {
    expect(packageOf("react-router-dom")).toBe("react-router-dom");
    expect(packageOf("@tidemark/shared/report/csvReport")).toBe("@tidemark/shared");
    expect(packageOf("tsx/esm/api")).toBe("tsx");
    for (const notPackage of ["./x.ts", "../y.ts", "/abs.js", "node:fs", "fs", "path", "virtual:foo"]) expect(packageOf(notPackage), notPackage).toBeNull();
  });

  it("finds static, dynamic, side-effect, require, require.resolve, CSS and loader (--import) specifiers", () => {
    // Specifiers are spliced in, so that this file's own text imports none of them.
    const q = (s: string): string => JSON.stringify(s);
    const text = [
      `import { a } from ${q("alpha")};`,
      `export * from ${q("@scope/beta/deep")};`,
      `const g = await import(${q("gamma")});`,
      `import ${q("delta/style.css")};`,
      `const e = require(${q("epsilon")});`,
      "const f = require.resolve(`" + "@fonts/zeta/files/x-${w}.woff`);",
      `@import ${q("eta")};`,
      `"start": "node --import ${"theta"} src/main.ts"`,
      `import { x } from ${q("./local.ts")};`,
    ].join("\n");
    expect([...importedPackages(text)].sort()).toEqual(["@fonts/zeta", "@scope/beta", "alpha", "delta", "epsilon", "eta", "gamma", "theta"]);
  });

  const dir = mkdtempSync(path.join(tmpdir(), "tidemark-manifest-"));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it("reports a package imported but not listed, and one listed but never imported", () => {
    mkdirSync(path.join(dir, "pkg", "src"), { recursive: true });
    writeFileSync(
      path.join(dir, "pkg", "package.json"),
      JSON.stringify({ name: "@demo/pkg", dependencies: { listedAndUsed: "1.0.0", "listed-only": "1.0.0" }, devDependencies: { "@types/listedAndUsed": "1.0.0", "@types/gone": "1.0.0" } }),
    );
    const q = (s: string): string => JSON.stringify(s);
    writeFileSync(path.join(dir, "pkg", "src", "a.ts"), `import x from ${q("listedAndUsed")};\nimport { y } from ${q("hoisted-only")};\nimport { z } from ${q("@demo/pkg/self")};\n`);
    expect(checkManifest(dir, "pkg")).toEqual({
      workspace: "pkg",
      notListed: [{ name: "hoisted-only", files: [path.join("pkg", "src", "a.ts")] }],
      notImported: ["@types/gone", "listed-only"],
    });
  });
});

describe("this repository's manifests", () => {
  it("each workspace lists exactly what it imports", () => {
    const reports = checkWorkspaces(projectRoot);
    expect(reports.map((r) => r.workspace)).toEqual(["shared", "cli", "server", "web"]);
    for (const report of reports) expect(report, report.workspace).toEqual({ workspace: report.workspace, notListed: [], notImported: [] });
  });

  it("tests, scripts, examples and migrations import only packages some manifest lists", () => {
    expect(checkRootImports(projectRoot, ["tests", "scripts", "examples", "migrations"])).toEqual([]);
  });
});
