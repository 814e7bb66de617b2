/** `tidemark profiles`, `tidemark init` and `tidemark match`: the commands around a scan. */
import { Option, type Command } from "@commander-js/extra-typings";
import { PROJECT_CONFIG_FILE } from "@tidemark/shared/types/projectConfigFile";
import { UsageError } from "../errors.ts";
import { DEFAULT_MATCH_LIMIT, MATCH_EXIT_CODES_HELP, parseMatchLimit, type MatchOptions } from "../match/matchOptions.ts";
import { collect, FAIL_ON_LEVELS, parseCollectionName, parseServerUrl, type InitOptions } from "../options.ts";
import type { CommandActions } from "../program.ts";
import { finish, noValues, type Declared } from "./common.ts";

export function declareProfiles(program: Command, { run, io }: Declared<CommandActions["profiles"]>): void {
  program
    .command("profiles")
    .description("list the built-in profiles, or print one as JSON (a starting point for a custom profile file)")
    .argument("[name|file]", "a built-in profile name, or a profile JSON file to check")
    .option("--json", "list the profiles as JSON")
    .action(async (name, o) => {
      await finish(run(name ?? null, { json: o.json === true }, io()));
    });
}

export function declareInit(program: Command, { run, io }: Declared<CommandActions["init"]>): void {
  program
    .command("init")
    .description(`write a ${PROJECT_CONFIG_FILE} in this folder: the project's defaults for profile, collection, server and more (asks on a terminal)`)
    .option("-p, --profile <name|file>", "profile to judge with")
    .option("--collection <name>", "collection uploads are filed under", parseCollectionName)
    .option("--server <url>", "server for upload, enqueue and worker", parseServerUrl)
    .option("--include <glob>", "file names to scan, repeatable", collect, noValues())
    .option("--exclude <glob>", "files or folders to skip, repeatable", collect, noValues())
    .option("--spectrograms <dir>", "folder for spectrogram PNGs")
    .addOption(new Option("--fail-on <level>", "exit 1 from this verdict on").choices(FAIL_ON_LEVELS))
    .option("--force", "overwrite an existing tidemark.json")
    .option("-y, --yes", "ask nothing; write only what the flags give")
    .action(async (o) => {
      const options: InitOptions = {
        profile: o.profile ?? null,
        collection: o.collection ?? null,
        server: o.server ?? null,
        include: o.include,
        exclude: o.exclude,
        spectrograms: o.spectrograms ?? null,
        failOn: o.failOn ?? null,
        force: o.force === true,
        yes: o.yes === true,
      };
      await finish(run(options, io()));
    });
}

export function declareMatch(program: Command, { run, io }: Declared<CommandActions["match"]>): void {
  program
    .command("match")
    .description("find the same recording elsewhere: compare <file>'s fingerprint with those in earlier reports, or ask the server")
    .argument("<file>", "a WAV, BWF or RF64 file")
    .option("--against <report.json>", "a JSON report written by tidemark scan (repeatable)", collect, noValues())
    .option("--server <url>", "ask this server's index instead (token from TIDEMARK_TOKEN or tidemark login)", parseServerUrl)
    .option("-n, --limit <n>", `at most this many matches (default ${DEFAULT_MATCH_LIMIT})`, parseMatchLimit)
    .option("--json", "print the matches as JSON")
    .addHelpText("after", MATCH_EXIT_CODES_HELP)
    .action(async (file, o) => {
      const against = o.against;
      const server = o.server ?? null;
      if ((against.length > 0) === (server !== null)) {
        throw new UsageError(server ? "give either --against REPORT.json or --server URL, not both" : "expected --against REPORT.json or --server URL: what to compare the file with");
      }
      const options: MatchOptions = { against, server, limit: o.limit ?? DEFAULT_MATCH_LIMIT, json: o.json === true };
      await finish(run(file, options, io()));
    });
}
