import { readFileSync } from "node:fs";
import { availableParallelism } from "node:os";
import { CommanderError } from "commander";
import { describe, expect, it } from "vitest";
import { ExitError, UsageError } from "../../cli/src/errors.ts";
import type { CliIo } from "../../cli/src/io.ts";
import { exitCodeFor } from "../../cli/src/main.ts";
import { createProgram, type CommandActions } from "../../cli/src/program.ts";

interface Call {
  command: keyof CommandActions;
  args: unknown[];
}

const io: CliIo = { stdout: { write: () => true }, stderr: { write: () => true }, stdin: process.stdin, env: {}, cwd: "/archive" };

/** Parses argv with every command replaced by a recorder; returns the call, or the error parsing threw. */
async function parse(argv: string[], exitCode = 0): Promise<{ call: Call | null; error: unknown; output: string }> {
  let call: Call | null = null;
  const record =
    (command: keyof CommandActions) =>
    async (...args: unknown[]): Promise<number> => {
      call = { command, args: args.slice(0, -1) };
      return exitCode;
    };
  const actions: CommandActions = {
    scan: record("scan"),
    verify: record("verify"),
    upload: record("upload"),
    profiles: record("profiles"),
    login: record("login"),
    match: record("match"),
    init: record("init"),
  };
  let output = "";
  const program = createProgram(actions, () => io);
  const capture = { writeOut: (s: string) => void (output += s), writeErr: (s: string) => void (output += s) };
  program.configureOutput(capture);
  for (const sub of program.commands) sub.configureOutput(capture);
  let error: unknown = null;
  try {
    await program.parseAsync(argv, { from: "user" });
  } catch (e) {
    error = e;
  }
  return { call, error, output };
}

const scanDefaults = {
  profile: "access-copy",
  profileFrom: "default",
  format: null,
  out: null,
  spectrograms: null,
  fingerprint: true,
  closeups: true,
  workers: availableParallelism(),
  include: ["*.wav", "*.bwf", "*.rf64", "*.flac", "*.aif", "*.aiff", "*.aifc"],
  exclude: [],
  resume: null,
  quiet: false,
  progress: "auto",
  failOn: "fail",
  checksums: [],
  bag: null,
  upload: null,
};

describe("createProgram argv table", () => {
  it.each([
    [["scan", "reels"], { command: "scan", args: [["reels"], scanDefaults] }],
    [
      ["scan", "a", "b", "-p", "broadcast-loudness", "--format", "junit", "-o", "r.xml", "-w", "2", "--quiet"],
      { command: "scan", args: [["a", "b"], { ...scanDefaults, profile: "broadcast-loudness", profileFrom: "flag", format: "junit", out: "r.xml", workers: 2, quiet: true }] },
    ],
    [
      ["scan", "x", "--include", "*.wav", "--include", "*.W64", "--exclude", "rejects/**", "--resume", "s.jsonl", "--spectrograms", "png"],
      { command: "scan", args: [["x"], { ...scanDefaults, include: ["*.wav", "*.W64"], exclude: ["rejects/**"], resume: "s.jsonl", spectrograms: "png" }] },
    ],
    [
      ["scan", "x", "--upload", "--server", "https://qc.harbourside.example/", "--collection", "Lighthouse Choir Reels", "--batch-key", "day-14"],
      {
        command: "scan",
        args: [["x"], { ...scanDefaults, upload: { server: "https://qc.harbourside.example", collection: "Lighthouse Choir Reels", batchKey: "day-14" } }],
      },
    ],
    [["scan", "x", "--upload"], { command: "scan", args: [["x"], { ...scanDefaults, upload: { server: null, collection: null, batchKey: null } }] }],
    [["scan", "x", "--no-fingerprint"], { command: "scan", args: [["x"], { ...scanDefaults, fingerprint: false }] }],
    [["scan", "x", "--no-closeups"], { command: "scan", args: [["x"], { ...scanDefaults, closeups: false }] }],
    [["scan", "x", "--spectral-thread"], { command: "scan", args: [["x"], { ...scanDefaults, spectralThread: true }] }],
    [["scan", "x", "--no-spectral-thread"], { command: "scan", args: [["x"], { ...scanDefaults, spectralThread: false }] }],
    [["verify", "bag-17"], { command: "verify", args: [["bag-17"], { against: null, include: scanDefaults.include, exclude: [], json: false, quiet: false, progress: "auto", checksums: [], upload: null }] }],
    [["verify", "reels", "--against", "r.json"], { command: "verify", args: [["reels"], { against: "r.json", include: scanDefaults.include, exclude: [], json: false, quiet: false, progress: "auto", checksums: [], upload: null }] }],
    [["upload", "r.json", "--collection", "Ferry Terminal Interviews 1978"], { command: "upload", args: ["r.json", { spool: false, server: null, collection: "Ferry Terminal Interviews 1978", batchKey: null }] }],
    [["upload", "--spool"], { command: "upload", args: [null, { spool: true, server: null, collection: null, batchKey: null }] }],
    [["profiles"], { command: "profiles", args: [null, { json: false }] }],
    [["profiles", "preservation-master"], { command: "profiles", args: ["preservation-master", { json: false }] }],
    [["login", "--server", "http://127.0.0.1:8080", "--token", "tok1:s3cret"], { command: "login", args: [{ server: "http://127.0.0.1:8080", token: "tok1:s3cret", email: null, passwordStdin: false, tokenName: null }] }],
    [
      ["login", "--server", "http://127.0.0.1:8080", "--email", "m.okafor@harbourside.example", "--password-stdin"],
      { command: "login", args: [{ server: "http://127.0.0.1:8080", token: null, email: "m.okafor@harbourside.example", passwordStdin: true, tokenName: null }] },
    ],
  ])("%j", async (argv, expected) => {
    const { call, error } = await parse(argv);
    expect(error).toBeNull();
    expect(call).toEqual(expected);
  });

  it.each([
    [["scan", "x", "--fail-on", "warn", "--progress", "json"], { ...scanDefaults, failOn: "warn", progress: "json" }],
    [["scan", "x", "-p", "preservation-master"], { ...scanDefaults, profile: "preservation-master", profileFrom: "flag" }],
  ])("%j parses --fail-on, --progress and where the profile came from", async (argv, expected) => {
    const { call, error } = await parse(argv);
    expect(error).toBeNull();
    expect(call).toEqual({ command: "scan", args: [["x"], expected] });
  });

  it("parses init's flags", async () => {
    const { call, error } = await parse(["init", "-p", "preservation-master", "--collection", "Lighthouse Choir Reels", "--fail-on", "warn", "--include", "*.wav", "-y"]);
    expect(error).toBeNull();
    expect(call).toEqual({
      command: "init",
      args: [{ profile: "preservation-master", collection: "Lighthouse Choir Reels", server: null, include: ["*.wav"], exclude: [], spectrograms: null, failOn: "warn", force: false, yes: true }],
    });
  });

  it.each([
    [["scan", "x", "--fail-on", "info"], "commander.invalidArgument", /Allowed choices are fail, warn/],
    [["scan"], "commander.missingArgument", /missing required argument 'paths'/],
    [["scan", "x", "--format", "pdf"], "commander.invalidArgument", /Allowed choices are table, json, csv, junit/],
    [["scan", "x", "--workers", "0"], "commander.invalidArgument", /expected a whole number of workers from 1 to 64, got "0"/],
    [["scan", "x", "--workers", "two"], "commander.invalidArgument", /got "two"/],
    [["scan", "x", "--upload", "--server", "ftp://x"], "commander.invalidArgument", /expected an http:\/\/ or https:\/\/ URL/],
    [["scan", "x", "--frobnicate"], "commander.unknownOption", /unknown option '--frobnicate'/],
    [["login", "--server", "http://h", "--token", "nocolon"], "commander.invalidArgument", /id:secret/],
    [["bogus"], "commander.unknownCommand", /unknown command 'bogus'/],
  ])("%j is a usage error (exit 2)", async (argv, code, message) => {
    const { call, error, output } = await parse(argv);
    expect(call).toBeNull();
    expect(error).toBeInstanceOf(CommanderError);
    expect((error as CommanderError).code).toBe(code);
    expect(output).toMatch(message);
    expect(exitCodeFor(error)).toBe(2);
  });

  it.each([
    [["scan", "x", "--server", "http://h"], /--server is only used with --upload/],
    [["upload"], /expected a report file to upload/],
    [["upload", "r.json", "--spool"], /either a report file or --spool/],
    [["login", "--server", "http://h", "--token", "a:b", "--email", "x@y"], /either --token or --email/],
  ])("%j is refused by the action with a UsageError", async (argv, message) => {
    const { call, error } = await parse(argv);
    expect(call).toBeNull();
    expect(error).toBeInstanceOf(UsageError);
    expect((error as Error).message).toMatch(message);
    expect(exitCodeFor(error)).toBe(2);
  });

  it("turns a command's non-zero result into an ExitError with that code", async () => {
    const { error } = await parse(["scan", "x"], 1);
    expect(error).toBeInstanceOf(ExitError);
    expect(exitCodeFor(error)).toBe(1);
  });

  // Exit codes as the README's table fixes them (0 / 1 / 2 / 3 / 4 / 130), and issue #24's 5 token, 6 server, 7 jobs left.
  it("prints the version from cli/package.json and lists the exit codes in --help", async () => {
    const pkg = JSON.parse(readFileSync(new URL("../../cli/package.json", import.meta.url), "utf8")) as { version: string };
    const version = await parse(["--version"]);
    expect(version.output.trim()).toBe(pkg.version);
    expect(exitCodeFor(version.error)).toBe(0);
    const help = await parse(["--help"]);
    expect(help.output).toMatch(/Exit codes:\n\s+0\s+no file failed.*\n\s+1\s+.*\n\s+2\s+bad invocation.*\n\s+3\s+a file could not be read.*\n\s+4\s+the upload was only spooled.*\n\s+5\s+no API token.*\n\s+6\s+the server could not be reached.*\n\s+7\s+worker: .*\n\s+130\s+interrupted/);
    expect(exitCodeFor(help.error)).toBe(0);
  });
});
