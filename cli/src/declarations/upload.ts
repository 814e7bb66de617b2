/** `tidemark upload` and `tidemark login`: the commands that only talk to a server. */
import type { Command } from "@commander-js/extra-typings";
import { ProjectDefaults } from "../config/projectConfig.ts";
import { UsageError } from "../errors.ts";
import { parseBatchKey, parseCollectionName, parseServerUrl, parseToken, type LoginOptions, type UploadOptions } from "../options.ts";
import type { CommandActions } from "../program.ts";
import { finish, SERVER_HELP, type Declared } from "./common.ts";

export function declareUpload(program: Command, { run, io }: Declared<CommandActions["upload"]>): void {
  program
    .command("upload")
    .description("upload an existing JSON report (and its PNGs) to the server, or send the spooled batches")
    .argument("[report]", "a JSON report written by tidemark scan")
    .option("--spool", "send the batches spooled while the server was unreachable")
    .option("--server <url>", SERVER_HELP, parseServerUrl)
    .option("--collection <name>", "collection to file the batch under (required with a report unless tidemark.json names one)", parseCollectionName)
    .option("--batch-key <key>", "idempotency key (default: SHA-256 of the report)", parseBatchKey)
    .action(async (report, o) => {
      const cliIo = io();
      const project = await ProjectDefaults.load(cliIo.cwd, cliIo.env);
      const spool = o.spool === true;
      if (spool === (report !== undefined)) {
        throw new UsageError(spool ? "give either a report file or --spool, not both" : "expected a report file to upload (or --spool to send spooled batches)");
      }
      const options: UploadOptions = {
        spool,
        server: spool ? (o.server ?? null) : project.server(o.server),
        // Spooled batches carry their own collection: tidemark.json's does not apply to them.
        collection: spool ? (o.collection ?? null) : project.collection(o.collection),
        batchKey: o.batchKey ?? null,
      };
      await finish(run(report ?? null, options, cliIo));
    });
}

export function declareLogin(program: Command, { run, io }: Declared<CommandActions["login"]>): void {
  program
    .command("login")
    .description("sign in to a server and store an API token for upload (in the config dir, mode 0600)")
    .option("--server <url>", "server URL (default: tidemark.json's)", parseServerUrl)
    .option("--token <id:secret>", "store this API token instead of signing in", parseToken)
    .option("--email <email>", "account e-mail (asked for on a terminal when missing)")
    .option("--password-stdin", "read the password from stdin")
    .option("--token-name <name>", "name of the token created on the server (default: tidemark-cli on <host>)")
    .action(async (o) => {
      const cliIo = io();
      const server = (await ProjectDefaults.load(cliIo.cwd, cliIo.env)).server(o.server);
      if (!server) throw new UsageError("expected --server URL (or a server in tidemark.json): the server to sign in to");
      const options: LoginOptions = {
        server,
        token: o.token ?? null,
        email: o.email ?? null,
        passwordStdin: o.passwordStdin === true,
        tokenName: o.tokenName ?? null,
      };
      if (options.token && (options.email || options.passwordStdin)) {
        throw new UsageError("give either --token or --email/--password-stdin, not both");
      }
      await finish(run(options, cliIo));
    });
}
