/**
 * The request contracts (shared/src/contracts/): what the server validates with and the portal reads and
 * writes its URLs with. The outside reference for the query strings is Node's own `node:querystring`,
 * which is the parser Express 5's default ("simple") query parsing uses: a query the portal writes must
 * reach the server's validation as the same values.
 */
import { parse as parseQueryString } from "node:querystring";
import { describe, expect, it } from "vitest";
import { auditCsvQuerySchema, auditQuerySchema } from "../../shared/src/contracts/audit.ts";
import { batchQuerySchema } from "../../shared/src/contracts/batches.ts";
import { checkContract, ContractError, parseContract } from "../../shared/src/contracts/checkContract.ts";
import { filesCsvQuerySchema } from "../../shared/src/contracts/exports.ts";
import { lowerBound, optionalText, pageSizeOf, upperBound } from "../../shared/src/contracts/fields.ts";
import { bulkReviewChangeSchema, createCommentSchema, fileQuerySchema, reviewChangeSchema } from "../../shared/src/contracts/files.ts";
import { fixityCheckUploadSchema } from "../../shared/src/contracts/fixityChecks.ts";
import { claimJobsSchema, jobResultFieldsSchema, releaseJobSchema } from "../../shared/src/contracts/jobs.ts";
import { createRunSchema, enqueueFilesSchema, jobQuerySchema, MAX_FILES_PER_ENQUEUE, runQuerySchema } from "../../shared/src/contracts/runs.ts";
import { defaultsOf, readSearchParams, toSearchParams } from "../../shared/src/contracts/searchParams.ts";
import { createTokenSchema } from "../../shared/src/contracts/tokens.ts";
import { createUserSchema, updateUserSchema } from "../../shared/src/contracts/users.ts";

/** What Express 5 hands the server's validation for this query string. */
const asExpressQuery = (params: URLSearchParams): unknown => ({ ...parseQueryString(params.toString()) });

function messageOf(schema: Parameters<typeof checkContract>[0], input: unknown, what = "query"): string {
  const result = checkContract(schema, input, what);
  if (result.ok) throw new Error(`expected ${JSON.stringify(input)} to be refused`);
  return result.message;
}

describe("query contracts: parse, serialise, parse again", () => {
  const cases = [
    {
      name: "GET /api/files",
      schema: fileQuerySchema,
      query: { batch: 7, collection: 2, verdict: "fail", reviewState: "flagged", finding: "hum", q: "reel 07 & side B/ä", sort: "truePeakDbtp", order: "desc", page: 3, pageSize: 100 },
    },
    {
      name: "GET /api/batches",
      schema: batchQuerySchema,
      query: { collection: 4, q: "#42", from: "2026-11-01", to: "2026-11-30T12:00:00Z", sort: "failCount", order: "asc", page: 2, pageSize: 25 },
    },
    { name: "GET /api/runs", schema: runQuerySchema, query: { collection: 9, page: 5, pageSize: 10 } },
    { name: "GET /api/runs/:id/jobs", schema: jobQuerySchema, query: { state: "failed", page: 1, pageSize: 200 } },
    {
      name: "GET /api/audit",
      schema: auditQuerySchema,
      query: { actor: "ada@harbourside.example", action: "file.", targetType: "file", targetId: "17", from: "2026-12-01", to: "2026-12-02", page: 4, pageSize: 50 },
    },
    { name: "GET /api/exports/files.csv", schema: filesCsvQuerySchema, query: { collection: 3, from: "2026-01-01", to: "2026-06-30" } },
  ] as const;

  for (const { name, schema, query } of cases) {
    it(`${name}: a full query survives the address bar and reaches the server unchanged`, () => {
      const params = toSearchParams(schema, query);
      expect(readSearchParams(schema, params)).toEqual(query);
      // The server's side of the same URL: node:querystring (Express 5) and then the contract, strictly.
      expect(parseContract(schema, asExpressQuery(params), "query")).toEqual(query);
      // And a second trip writes the very same text.
      expect(toSearchParams(schema, readSearchParams(schema, params)).toString()).toBe(params.toString());
    });
  }

  it("leaves defaults out of an address bar and fills them in again when read", () => {
    const plain = { page: 1, pageSize: 50 };
    expect(toSearchParams(fileQuerySchema, plain, { omitDefaults: true }).toString()).toBe("");
    expect(toSearchParams(fileQuerySchema, { ...plain, verdict: "warn", page: 2 }, { omitDefaults: true }).toString()).toBe("verdict=warn&page=2");
    expect(readSearchParams(fileQuerySchema, new URLSearchParams(""))).toEqual(plain);
    expect(defaultsOf(runQuerySchema)).toEqual(plain);
  });

  it("writes fields in the contract's order and leaves out empty values", () => {
    const params = toSearchParams(fileQuerySchema, { page: 2, q: "", sort: "path", batch: 5, verdict: undefined });
    expect(params.toString()).toBe("batch=5&sort=path&page=2");
  });

  it("reads an address bar forgivingly: invalid values and unknown names are dropped, defaults apply", () => {
    const params = new URLSearchParams("batch=0&verdict=maybe&finding=hum&page=-2&pageSize=5000&order=sideways&utm_source=mail&q=%20%20");
    expect(readSearchParams(fileQuerySchema, params)).toEqual({ finding: "hum", q: "", page: 1, pageSize: 50 });
    // The server takes the same URL strictly.
    const message = messageOf(fileQuerySchema, asExpressQuery(params));
    for (const field of ["batch", "verdict", "page", "pageSize", "order", "(root)"]) expect(message).toContain(`${field}: `);
    expect(message).toContain('Unrecognized key: "utm_source"');
  });

  it("keeps what it can when a rule across fields refuses the set: only the fields that rule names go", () => {
    const paged = runQuerySchema
      .safeExtend({ after: optionalText(100), before: optionalText(100) })
      .superRefine((q, ctx) => {
        if (q.after && q.before) ctx.addIssue({ code: "custom", path: ["before"], message: "give after or before, not both" });
      });
    expect(readSearchParams(paged, new URLSearchParams("collection=3&after=abc&before=xyz&page=4"))).toEqual({ collection: 3, after: "abc", page: 4, pageSize: 50 });
    expect(messageOf(paged, { after: "abc", before: "xyz" })).toBe("invalid query: before: give after or before, not both");
  });

  it("limits a screen's page sizes to those it offers, with its own default", () => {
    const view = runQuerySchema.safeExtend({ pageSize: pageSizeOf([25, 50, 100], 25) });
    expect(readSearchParams(view, new URLSearchParams("pageSize=100")).pageSize).toBe(100);
    expect(readSearchParams(view, new URLSearchParams("pageSize=30")).pageSize).toBe(25);
    expect(toSearchParams(view, { page: 1, pageSize: 25 }, { omitDefaults: true }).toString()).toBe("");
    expect(messageOf(view, { pageSize: "30" })).toBe("invalid query: pageSize: expected one of 25, 50, 100");
  });

  it("treats an empty parameter as absent, as an HTML form sends it", () => {
    expect(parseContract(fileQuerySchema, { verdict: "", batch: "", q: "", page: "" }, "query")).toEqual({ page: 1, pageSize: 50 });
    expect(parseContract(auditCsvQuerySchema, { actor: "", from: "" }, "query")).toEqual({});
  });
});

describe("dates in queries", () => {
  it("takes a date or a date and time and refuses anything else, saying what it expected", () => {
    expect(parseContract(batchQuerySchema, { from: "2026-12-01", to: "2026-12-01T10:00:00+01:00" }, "query")).toMatchObject({ from: "2026-12-01" });
    expect(messageOf(batchQuerySchema, { from: "2026-13-45" })).toBe("invalid query: from: expected an ISO date such as 2026-12-01 or 2026-12-01T10:00:00Z");
    expect(messageOf(auditQuerySchema, { to: "yesterday" })).toContain("to: expected an ISO date");
  });

  it("makes a bare date the whole day (UTC) and keeps a time as given", () => {
    expect(lowerBound("2026-12-01")?.toISOString()).toBe("2026-12-01T00:00:00.000Z");
    expect(upperBound("2026-12-01")?.toISOString()).toBe("2026-12-01T23:59:59.999Z");
    expect(upperBound("2026-12-01T10:00:00Z")?.toISOString()).toBe("2026-12-01T10:00:00.000Z");
    expect(lowerBound(undefined)).toBeUndefined();
    expect(upperBound(undefined)).toBeUndefined();
  });
});

describe("body contracts", () => {
  it("names every body as the server's messages do", () => {
    const named = [
      [reviewChangeSchema, "review change"],
      [bulkReviewChangeSchema, "bulk review change"],
      [createCommentSchema, "comment"],
      [fixityCheckUploadSchema, "fixity checks"],
      [createRunSchema, "run"],
      [enqueueFilesSchema, "files"],
      [claimJobsSchema, "claim"],
      [releaseJobSchema, "release"],
      [jobResultFieldsSchema, "result fields"],
      [createTokenSchema, "token"],
      [createUserSchema, "user"],
      [updateUserSchema, "user change"],
    ] as const;
    for (const [schema, name] of named) {
      expect(schema.description).toBe(name);
      expect(messageOf(schema, [], schema.description)).toMatch(new RegExp(`^invalid ${name}: \\(root\\): `));
    }
  });

  it("fills a body's defaults and trims its text", () => {
    expect(parseContract(reviewChangeSchema, { reviewState: "accepted" }, "review change")).toEqual({ reviewState: "accepted", reason: "" });
    expect(parseContract(createTokenSchema, { name: "  ci  " }, "token")).toEqual({ name: "ci", expiresInDays: 365 });
    expect(parseContract(claimJobsSchema, { worker: "host#1" }, "claim")).toEqual({ worker: "host#1", max: 1, wait: 0 });
    expect(parseContract(createUserSchema, { email: " Ada@Harbourside.Example ", name: "Ada", role: "auditor", password: "x" }, "user").email).toBe("ada@harbourside.example");
  });

  it("refuses bad bodies with a message naming each field", () => {
    expect(messageOf(createCommentSchema, { body: "   ", channel: 0.5 }, "comment")).toMatch(/^invalid comment: body: .*; channel: .*expected int/);
    expect(messageOf(bulkReviewChangeSchema, { ids: [], reviewState: "lost" }, "bulk review change")).toMatch(/^invalid bulk review change: ids: .*; reviewState: /);
    expect(messageOf(releaseJobSchema, { attempt: 0, worker: "w\u0007", reason: "bored" }, "release")).toMatch(
      /attempt: .*; worker: must not contain control characters; reason: /,
    );
    expect(messageOf(updateUserSchema, { role: "owner", extra: true }, "user change")).toMatch(/role: .*; \(root\): Unrecognized key: "extra"/);
  });

  it("says how to split an enqueue that is too large", () => {
    const files = Array.from({ length: MAX_FILES_PER_ENQUEUE + 1 }, (_, i) => ({ path: `reel-${i}.wav`, sizeBytes: 1, mtimeMs: 0 }));
    expect(messageOf(enqueueFilesSchema, { files }, "files")).toBe(`invalid files: files: at most ${MAX_FILES_PER_ENQUEUE} files a request; send the rest in further requests`);
    expect(messageOf(enqueueFilesSchema, { files: [{ path: "../etc/passwd", sizeBytes: 1, mtimeMs: 0 }] }, "files")).toContain("files.0.path: must be relative to the run's root");
    // RFC 4648 §4: groups of four characters, "=" padding only at the end.
    expect(messageOf(enqueueFilesSchema, { files: [{ path: "a.wav", pathBytes: "YS53YXY", sizeBytes: 1, mtimeMs: 0 }] }, "files")).toBe("invalid files: files.0.pathBytes: must be base64 (RFC 4648)");
    expect(checkContract(enqueueFilesSchema, { files: [{ path: "a.wav", pathBytes: "YS53YXY=", sizeBytes: 1, mtimeMs: 0 }] }, "files").ok).toBe(true);
  });

  it("checks a run's root, profile hash and fixity checks' digests", () => {
    const run = { collection: "Harbourside", name: "reels", root: "relative/dir", profile: { name: "p", hash: "ABC", definition: {} }, tool: { name: "tidemark", version: "1" } };
    expect(messageOf(createRunSchema, run, "run")).toBe("invalid run: root: must be an absolute path; profile.hash: must be a SHA-256 in lower-case hex");
    const check = { path: "a.wav", outcome: "changed", expectedSha256: "0".repeat(64), actualSha256: "xyz", movedTo: null, detail: "" };
    expect(messageOf(fixityCheckUploadSchema, { collection: "H", checkedAt: "2026-12-05T10:00:00Z", checks: [check] }, "fixity checks")).toMatch(/^invalid fixity checks: checks\.0\.actualSha256: /);
  });

  it("reads a result upload's text fields as multipart strings", () => {
    expect(parseContract(jobResultFieldsSchema, { attempt: "2", worker: "w1" }, "result fields")).toEqual({ attempt: 2, worker: "w1" });
    expect(messageOf(jobResultFieldsSchema, { attempt: "two", worker: "w1" }, "result fields")).toMatch(/^invalid result fields: attempt: /);
  });

  it("throws a ContractError carrying each issue for a request built wrongly", () => {
    let error: unknown;
    try {
      parseContract(fileQuerySchema, { page: 0, sort: "loudness" }, "query of /api/files");
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ContractError);
    expect((error as ContractError).issues.map((i) => i.path)).toEqual(["sort", "page"]);
    expect((error as ContractError).message).toMatch(/^invalid query of \/api\/files: sort: .*; page: Too small/);
  });
});
