/**
 * Loading the typesetter must not register the machine's installed fonts (issue #22: @napi-rs/canvas scans
 * the font folders when it loads unless DISABLE_SYSTEM_FONTS_LOAD is set, ≈ 15–25 ms of every scan that
 * draws an image). Run in a fresh Node process, since a canvas already loaded by another test would hide it.
 * On a machine without installed fonts the families would match either way: this one has them (fc-list).
 */
import { execFileSync, spawnSync } from "node:child_process";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";

const typesetterUrl = new URL("../../cli/src/render/fontTypesetter.ts", import.meta.url).href;

function familiesAfterInstall(env: NodeJS.ProcessEnv): { families: string[]; variable: string | null } {
  const script = [
    `import { createRequire } from "node:module";`,
    `const { installFontTypesetter } = await import(${JSON.stringify(typesetterUrl)});`,
    `installFontTypesetter();`,
    `const { GlobalFonts } = createRequire(${JSON.stringify(typesetterUrl)})("@napi-rs/canvas");`,
    `console.log(JSON.stringify({ families: GlobalFonts.families.map((f) => f.family), variable: process.env.DISABLE_SYSTEM_FONTS_LOAD ?? null }));`,
  ].join("\n");
  const out = execFileSync(process.execPath, ["--import", "tsx", "--input-type=module", "-e", script], {
    cwd: fileURLToPath(new URL("../..", import.meta.url)),
    env,
    encoding: "utf8",
  });
  return JSON.parse(out) as { families: string[]; variable: string | null };
}

/** mimalloc's options as the native module's allocator printed them (MIMALLOC_VERBOSE=1) when `script` loaded it. */
function allocatorOptions(script: string, env: NodeJS.ProcessEnv): { stderr: string; stdout: string } {
  const r = spawnSync(process.execPath, ["--import", "tsx", "--input-type=module", "-e", script], {
    cwd: fileURLToPath(new URL("../..", import.meta.url)),
    env: { ...env, MIMALLOC_VERBOSE: "1" },
    encoding: "utf8",
  });
  expect(r.status, r.stderr).toBe(0);
  return { stderr: r.stderr, stdout: r.stdout };
}

describe("font typesetter loading", () => {
  // The allocator of @napi-rs/canvas's native module (mimalloc) asks for transparent huge pages unless told
  // not to; about one load in three then spent 35–60 ms zeroing them (fontTypesetter.ts's loadCanvas).
  it("loads the native module with its allocator's huge pages off, and puts the variable back", () => {
    const env = { ...process.env };
    delete env.MIMALLOC_ALLOW_THP;
    const install = [
      `const { installFontTypesetter } = await import(${JSON.stringify(typesetterUrl)});`,
      `installFontTypesetter();`,
      `console.log(JSON.stringify(process.env.MIMALLOC_ALLOW_THP ?? null));`,
    ].join("\n");
    const ours = allocatorOptions(install, env);
    expect(ours.stderr).toMatch(/mimalloc: option 'allow_thp': 0/);
    expect(JSON.parse(ours.stdout)).toBeNull();
    // The package loaded as it is: the allocator's own default, so the line above tells the two apart.
    const plain = allocatorOptions(`import { createRequire } from "node:module"; createRequire(${JSON.stringify(typesetterUrl)})("@napi-rs/canvas");`, env);
    expect(plain.stderr).toMatch(/mimalloc: option 'allow_thp': 1/);
    // A value the user set stands.
    expect(allocatorOptions(install, { ...env, MIMALLOC_ALLOW_THP: "1" }).stderr).toMatch(/mimalloc: option 'allow_thp': 1/);
  });

  it("registers only the shipped subsets (under our names and the font's own), and leaves the environment as it found it", () => {
    const env = { ...process.env };
    delete env.DISABLE_SYSTEM_FONTS_LOAD;
    const { families, variable } = familiesAfterInstall(env);
    expect([...families].sort()).toEqual(["Source Sans 3 Medium", "Tidemark Sans cyrillic", "Tidemark Sans greek", "Tidemark Sans latin", "Tidemark Sans latin-ext"]);
    expect(variable).toBeNull();
  });

  it("keeps a value the user set", () => {
    expect(familiesAfterInstall({ ...process.env, DISABLE_SYSTEM_FONTS_LOAD: "yes" }).variable).toBe("yes");
  });
});
