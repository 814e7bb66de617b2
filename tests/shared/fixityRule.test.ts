import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { judgeFixity, verdictAfterFixityChange } from "../../shared/src/fixity/fixityRule.ts";
import type { Finding, Verdict } from "../../shared/src/types/report.ts";

// Digests of two known inputs, computed here with Node's SHA-256 (FIPS 180-4) and checked against the
// FIPS 180-4 example value for "abc" (NIST CSRC "Examples with Intermediate Values", SHA256.pdf).
const sha = (text: string): string => createHash("sha256").update(text).digest("hex");
const ABC = sha("abc");
const EMPTY = sha("");

const clipping: Finding = { code: "clipping", severity: "warn", channel: 0, startSeconds: 1.5, endSeconds: 1.6, message: "3 clipped samples" };

describe("judgeFixity: the SHA-256 rule applied when a file result is stored", () => {
  it("uses real SHA-256 digests", () => {
    expect(ABC).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  });

  it("leaves a file alone when there is no earlier hashed scan", () => {
    const file = { sha256: ABC, findings: [clipping], verdict: "warn" as Verdict };
    for (const earlier of [null, undefined]) {
      const judged = judgeFixity(file, earlier);
      expect(judged).toEqual({ findings: [clipping], verdict: "warn", changedFrom: null });
      expect(judged.findings).not.toBe(file.findings);
    }
  });

  it("leaves a file alone when the SHA-256 is the same, or either side has none", () => {
    expect(judgeFixity({ sha256: ABC, findings: [], verdict: "pass" }, { fileResultId: 7, batchId: 3, sha256: ABC }).changedFrom).toBeNull();
    expect(judgeFixity({ sha256: null, findings: [], verdict: "pass" }, { fileResultId: 7, batchId: 3, sha256: ABC }).changedFrom).toBeNull();
    expect(judgeFixity({ sha256: ABC, findings: [], verdict: "pass" }, { fileResultId: 7, batchId: 3, sha256: null }).changedFrom).toBeNull();
  });

  it("adds one fixity-changed fail finding naming the earlier scan and both digests", () => {
    const earlier = { fileResultId: 41, batchId: 9, sha256: EMPTY };
    const file = { sha256: ABC, findings: [clipping], verdict: "warn" as Verdict };
    const judged = judgeFixity(file, earlier);
    expect(judged.changedFrom).toBe(earlier);
    expect(judged.verdict).toBe("fail");
    expect(judged.findings).toHaveLength(2);
    expect(judged.findings[0]).toEqual(clipping);
    expect(judged.findings[1]).toEqual({
      code: "fixity-changed",
      severity: "fail",
      channel: null,
      startSeconds: null,
      endSeconds: null,
      message: `SHA-256 differs from the scan in batch 9 (file result 41): was ${EMPTY}, now ${ABC}`,
    });
    // The report's own list is not touched.
    expect(file.findings).toEqual([clipping]);
  });

  it("turns pass and warn into fail, and keeps fail and error", () => {
    const cases: [Verdict, Verdict][] = [
      ["pass", "fail"],
      ["warn", "fail"],
      ["fail", "fail"],
      ["error", "error"],
    ];
    for (const [before, after] of cases) {
      expect(verdictAfterFixityChange(before)).toBe(after);
      expect(judgeFixity({ sha256: ABC, findings: [], verdict: before }, { fileResultId: 1, batchId: 1, sha256: EMPTY }).verdict).toBe(after);
    }
  });
});
