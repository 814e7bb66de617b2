/**
 * Reads and runs a .http request file (the plain-text request format editors' HTTP clients share):
 * "###" separates requests; "@name = value" defines a variable; "# @name x" names a request so later
 * ones can use {{x.response.body.$.path[0].to}}; "< ./file" in a body inserts that file. Our own
 * "# @expect <status>" comment says what each request must answer.
 */
import { readFileSync } from "node:fs";
import path from "node:path";

export interface HttpRequestSpec {
  title: string;
  line: number;
  name: string | null;
  expect: number | null;
  method: string;
  url: string;
  headers: [string, string][];
  body: string | null;
}

export interface HttpFile {
  variables: Record<string, string>;
  requests: HttpRequestSpec[];
}

const REQUEST_LINE = /^(GET|POST|PUT|PATCH|DELETE|HEAD|OPTIONS)\s+(\S+)(\s+HTTP\/[\d.]+)?$/;

export function parseHttpFile(file: string): HttpFile {
  const dir = path.dirname(file);
  const lines = readFileSync(file, "utf8").split(/\r?\n/);
  const variables: Record<string, string> = {};
  const requests: HttpRequestSpec[] = [];
  let block: { title: string; start: number; lines: string[] } | null = null;
  const flush = (): void => {
    if (!block) return;
    let name: string | null = null;
    let expect: number | null = null;
    let i = 0;
    for (; i < block.lines.length; i++) {
      const line = block.lines[i].trim();
      const variable = /^@([\w-]+)\s*=\s*(.*)$/.exec(line);
      if (variable) variables[variable[1]] = variable[2];
      else if (line.startsWith("#") || line.startsWith("//") || line === "") {
        name = /^#\s*@name\s+(\S+)/.exec(line)?.[1] ?? name;
        const e = /^#\s*@expect\s+(\d{3})/.exec(line);
        if (e) expect = Number(e[1]);
      } else break;
    }
    const request = REQUEST_LINE.exec(block.lines[i]?.trim() ?? "");
    if (request) {
      const headers: [string, string][] = [];
      let j = i + 1;
      for (; j < block.lines.length && block.lines[j].trim() !== ""; j++) {
        const h = /^([\w-]+):\s*(.*)$/.exec(block.lines[j]);
        if (!h) throw new Error(`${file}:${block.start + j + 1}: expected a header, got "${block.lines[j]}"`);
        headers.push([h[1], h[2]]);
      }
      const bodyLines = block.lines.slice(j + 1);
      while (bodyLines.length && bodyLines[bodyLines.length - 1].trim() === "") bodyLines.pop();
      const expanded = bodyLines.map((l) => (/^<\s+(\S.*)$/.test(l) ? readFileSync(path.resolve(dir, l.replace(/^<\s+/, "")), "utf8").replace(/\s+$/, "") : l));
      const multipart = headers.some(([k, v]) => k.toLowerCase() === "content-type" && v.startsWith("multipart/"));
      // RFC 7578 (multipart/form-data) lines end in CRLF.
      const body = expanded.length ? expanded.join(multipart ? "\r\n" : "\n") + (multipart ? "\r\n" : "") : null;
      requests.push({ title: block.title, line: block.start + i + 1, name, expect, method: request[1], url: request[2], headers, body });
    }
    block = null;
  };
  lines.forEach((line, index) => {
    if (line.startsWith("###")) {
      flush();
      block = { title: line.replace(/^###\s*/, ""), start: index + 1, lines: [] };
    } else if (block) block.lines.push(line);
    else {
      const variable = /^@([\w-]+)\s*=\s*(.*)$/.exec(line.trim());
      if (variable) variables[variable[1]] = variable[2];
    }
  });
  flush();
  return { variables, requests };
}

interface Answer {
  status: number;
  headers: Headers;
  body: unknown;
}

/** $.items[0].id style paths into a JSON value. */
function jsonPath(value: unknown, expr: string): unknown {
  const steps = expr.replace(/^\$\.?/, "").match(/[^.[\]]+|\[\d+\]/g) ?? [];
  return steps.reduce<unknown>((v, step) => {
    if (v === null || v === undefined) return undefined;
    const index = /^\[(\d+)\]$/.exec(step);
    return index ? (v as unknown[])[Number(index[1])] : (v as Record<string, unknown>)[step];
  }, value);
}

export interface RunOutcome {
  request: HttpRequestSpec;
  status: number;
  body: unknown;
}

/** Runs the requests in order with one cookie jar; `overrides` replace file variables (e.g. baseUrl). */
export async function runHttpFile(parsed: HttpFile, overrides: Record<string, string>): Promise<RunOutcome[]> {
  const variables = { ...parsed.variables, ...overrides };
  const named = new Map<string, Answer>();
  const cookies = new Map<string, string>();
  const substitute = (text: string): string =>
    text.replace(/\{\{\s*([^}]+?)\s*\}\}/g, (_m, ref: string) => {
      const response = /^([\w-]+)\.response\.(body|headers)\.?(.*)$/.exec(ref);
      if (response) {
        const answer = named.get(response[1]);
        if (!answer) throw new Error(`{{${ref}}}: no earlier request named ${response[1]}`);
        const value = response[2] === "headers" ? answer.headers.get(response[3]) : jsonPath(answer.body, response[3] || "$");
        if (value === undefined || value === null) throw new Error(`{{${ref}}} is empty`);
        return String(value);
      }
      if (!(ref in variables)) throw new Error(`{{${ref}}}: unknown variable`);
      return substitute(variables[ref]);
    });
  const outcomes: RunOutcome[] = [];
  for (const request of parsed.requests) {
    const headers = new Headers(request.headers.map(([k, v]): [string, string] => [k, substitute(v)]));
    if (cookies.size) headers.set("cookie", [...cookies].map(([k, v]) => `${k}=${v}`).join("; "));
    const res = await fetch(substitute(request.url), {
      method: request.method,
      headers,
      body: request.body === null ? undefined : substitute(request.body),
      redirect: "manual",
    });
    for (const c of res.headers.getSetCookie()) {
      const [pair, ...attrs] = c.split(";");
      const [k, ...v] = pair.split("=");
      const expired = attrs.some((a) => /^\s*expires=Thu, 01 Jan 1970/i.test(a));
      if (expired) cookies.delete(k.trim());
      else cookies.set(k.trim(), v.join("=").trim());
    }
    const text = Buffer.from(await res.arrayBuffer()).toString("utf8");
    const body = (res.headers.get("content-type") ?? "").includes("json") && text ? JSON.parse(text) : text;
    if (request.name) named.set(request.name, { status: res.status, headers: res.headers, body });
    outcomes.push({ request, status: res.status, body });
  }
  return outcomes;
}
