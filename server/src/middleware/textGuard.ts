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

// eslint-disable-next-line no-control-regex -- looking for U+0000 is the point
const SUSPECT = /[\u0000\uD800-\uDFFF]/;

function problemOf(s: string): string | null {
  // One quick scan for the common case: nothing suspect at all (pairs are then told apart below).
  if (!SUSPECT.test(s)) return null;
  const nul = s.indexOf("\u0000");
  if (nul >= 0) return `contains a NUL character (U+0000) at position ${nul}`;
  const lone = LONE_SURROGATE.exec(s);
  if (lone) return `contains a lone UTF-16 surrogate (U+${lone[0].charCodeAt(0).toString(16).toUpperCase()}) at position ${lone.index}; expected well-formed Unicode text`;
  return null;
}

/** Where a value sits; the dotted path is only spelt out for the one value that fails. */
interface Place {
  parent: Place | null;
  key: string | number;
}

function pathOf(place: Place | null, last?: string | number): string {
  const keys: (string | number)[] = last === undefined ? [] : [last];
  for (let at = place; at; at = at.parent) keys.push(at.key);
  return keys.reverse().join(".");
}

/**
 * The first string (value or object key) that is not storable text, or null. Iterative (deep input cannot
 * overflow the stack), and no string is built per value: a large report is walked in one cheap pass.
 */
export function findBadText(value: unknown): BadText | null {
  if (typeof value === "string") {
    const problem = problemOf(value);
    return problem ? { field: "(root)", problem } : null;
  }
  const stack: [unknown, Place | null][] = [[value, null]];
  while (stack.length) {
    const [v, place] = stack.pop()!;
    if (Array.isArray(v)) {
      for (let i = 0; i < v.length; i++) {
        const child: unknown = v[i];
        if (typeof child === "string") {
          const problem = problemOf(child);
          if (problem) return { field: pathOf(place, i), problem };
        } else if (child !== null && typeof child === "object") stack.push([child, { parent: place, key: i }]);
      }
    } else if (v !== null && typeof v === "object") {
      for (const k in v) {
        if (!Object.hasOwn(v, k)) continue;
        const keyProblem = problemOf(k);
        if (keyProblem) return { field: pathOf(place, JSON.stringify(k)), problem: `has a key that ${keyProblem}` };
        const child: unknown = (v as Record<string, unknown>)[k];
        if (typeof child === "string") {
          const problem = problemOf(child);
          if (problem) return { field: pathOf(place, k), problem };
        } else if (child !== null && typeof child === "object") stack.push([child, { parent: place, key: k }]);
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
