/** `tidemark verify`: flags, help and the normalisation into VerifyOptions (the action is commands/verify.ts). */
import type { Command } from "@commander-js/extra-typings";
import { ProjectDefaults } from "../config/projectConfig.ts";
import { UsageError } from "../errors.ts";
import { collect, DEFAULT_INCLUDE_GLOBS, parseCollectionName, parseServerUrl, type VerifyOptions } from "../options.ts";
import type { CommandActions } from "../program.ts";
import { finish, globOptions, noValues, progressOption, type Declared } from "./common.ts";

export function declareVerify(program: Command, { run, io }: Declared<CommandActions["verify"]>): void {
  const verify = program
    .command("verify")
    .description("recompute SHA-256 of the files and compare with an earlier report, or check a BagIt bag against its manifests")
    .argument("<paths...>", "files and folders scanned for that report, or one bag folder (with bagit.txt)")
    .option("--against <report.json>", "the earlier JSON report (not needed for a bag)")
    .option("--json", "print the comparison as JSON")
    .option("--checksums <file>", "also check the files against this md5sum/sha256sum-style manifest (repeatable); sidecars such as tape.wav.md5 are read anyway", collect, noValues())
    .option("-q, --quiet", "no progress display")
    .addOption(progressOption("progress display: auto (on a terminal) or json (JSON lines on stderr)"))
    .option("--upload", "send each file's outcome to the server's fixity history (needs --against)")
    .option("--server <url>", "server for --upload (default: tidemark.json's, else the one stored by tidemark login)", parseServerUrl)
    .option("--collection <name>", "collection the files were scanned into, for --upload (default: tidemark.json's)", parseCollectionName);
  globOptions(verify).action(async (paths, o) => {
    const cliIo = io();
    const project = await ProjectDefaults.load(cliIo.cwd, cliIo.env);
    const options: VerifyOptions = {
      against: o.against ?? null,
      include: project.include(o.include, DEFAULT_INCLUDE_GLOBS),
      exclude: project.exclude(o.exclude),
      json: o.json === true,
      quiet: o.quiet === true,
      progress: o.progress,
      checksums: o.checksums,
      upload: o.upload === true ? { server: project.server(o.server), collection: project.collection(o.collection) } : null,
    };
    if (!options.upload && (o.server !== undefined || o.collection !== undefined)) throw new UsageError("--server and --collection are only used with --upload; add --upload or drop them");
    await finish(run(paths, options, cliIo));
  });
}
