/**
 * Text PostgreSQL cannot hold: U+0000 (text and jsonb refuse it) and lone UTF-16 surrogates (JSON.parse
 * lets "\ud800" through; jsonb refuses the escape, other drivers would write U+FFFD). One walk over every
 * parsed JSON body and over the upload's report, answering 400 with the field's path — never a 500, which
 * a client would treat as temporary and retry for ever.
 */
import type { RequestHandler } from "express";
import { badRequest, type HttpError } from "../errors.ts";

export interface BadText {
  /** Dotted path of the field ("files.0.path"); "(root)" for a bare string body. */
  field: string;
  problem: string;
}

// A high surrogate not followed by a low one, or a low one not preceded by a high one.
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

function problemOf(s: string): string | null {
  const nul = s.indexOf("\u0000");
  if (nul >= 0) return `contains a NUL character (U+0000) at position ${nul}`;
  const lone = LONE_SURROGATE.exec(s);
  if (lone) return `contains a lone UTF-16 surrogate (U+${lone[0].charCodeAt(0).toString(16).toUpperCase()}) at position ${lone.index}; expected well-formed Unicode text`;
  return null;
}

const join = (at: string, key: string | number): string => (at ? `${at}.${key}` : String(key));

/** The first string (value or object key) that is not storable text, or null. Iterative: deep input cannot overflow the stack. */
export function findBadText(value: unknown): BadText | null {
  const stack: [unknown, string][] = [[value, ""]];
  while (stack.length) {
    const [v, at] = stack.pop()!;
    if (typeof v === "string") {
      const problem = problemOf(v);
      if (problem) return { field: at || "(root)", problem };
    } else if (Array.isArray(v)) {
      for (let i = v.length - 1; i >= 0; i--) stack.push([v[i], join(at, i)]);
    } else if (v !== null && typeof v === "object") {
      const entries = Object.entries(v);
      for (let i = entries.length - 1; i >= 0; i--) {
        const [k, child] = entries[i];
        const keyProblem = problemOf(k);
        if (keyProblem) return { field: join(at, JSON.stringify(k)), problem: `has a key that ${keyProblem}` };
        stack.push([child, join(at, k)]);
      }
    }
  }
  return null;
}

/** Throws 400 invalid_text naming the field, e.g. "invalid text in report: files.0.path contains a NUL …". */
export function assertStorableText(value: unknown, what: string): void {
  const bad = findBadText(value);
  if (bad) throw badTextError(bad, what);
}

export function badTextError(bad: BadText, what: string): HttpError {
  return badRequest(`invalid text in ${what}: ${bad.field} ${bad.problem}`, "invalid_text", [{ path: bad.field, message: bad.problem }]);
}

/** After express.json(): every JSON body is checked once, before any route sees it (ASVS 4.0 V5.1.4). */
export const rejectBadText: RequestHandler = (req, _res, next) => {
  if (req.body !== undefined) assertStorableText(req.body, "request body");
  next();
};
