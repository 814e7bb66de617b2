export declare const cliDir: string;
export declare const repoRoot: string;
export declare const UNBUNDLED_PACKAGES: string[];
export declare const MAIN_BUNDLE: string;
export declare const BUNDLE_ID_MARK: string;
/** Bundles the CLI into `outdir` (bin.cjs and the workers); the metafile's inputs and outputs of both builds. */
export declare function bundleCli(o: { outdir: string; selfContained?: boolean }): Promise<{
  metafile: { inputs: Record<string, unknown>; outputs: Record<string, unknown> };
}>;
/** esbuild plugin: commander's node:child_process required on its first spawn, not at load. */
export declare const lazyCommanderChildProcess: { name: string; setup(build: unknown): void };
