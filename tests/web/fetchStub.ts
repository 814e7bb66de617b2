/**
 * A tiny in-memory server for component tests: routes match method + path, every request is recorded
 * so tests can assert on what the portal asked for (query strings, bodies, headers).
 */
import { vi } from "vitest";

export interface RecordedRequest {
  method: string;
  url: URL;
  headers: Headers;
  body: unknown;
}

export interface StubReply {
  status?: number;
  body?: unknown;
}

type Handler = (req: RecordedRequest) => StubReply | Promise<StubReply>;

interface Route {
  method: string;
  path: string | RegExp;
  handler: Handler;
}

export interface FetchStub {
  calls: RecordedRequest[];
  on(method: string, path: string | RegExp, handler: Handler | StubReply): FetchStub;
  /** Requests to `path` (exact pathname) with `method`, in order. */
  requests(method: string, path: string): RecordedRequest[];
}

export function stubFetch(): FetchStub {
  const routes: Route[] = [];
  const calls: RecordedRequest[] = [];
  const stub: FetchStub = {
    calls,
    on(method, path, handler) {
      // Later registrations win, so a test can override a default route.
      routes.unshift({ method, path, handler: typeof handler === "function" ? handler : () => handler });
      return stub;
    },
    requests(method, path) {
      return calls.filter((c) => c.method === method && c.url.pathname === path);
    },
  };
  vi.stubGlobal(
    "fetch",
    vi.fn(async (input: RequestInfo | URL, init: RequestInit = {}) => {
      const url = new URL(String(input), "http://portal.test");
      const method = (init.method ?? "GET").toUpperCase();
      const body = typeof init.body === "string" ? JSON.parse(init.body) : undefined;
      const req: RecordedRequest = { method, url, headers: new Headers(init.headers), body };
      calls.push(req);
      const route = routes.find((r) => r.method === method && (typeof r.path === "string" ? r.path === url.pathname : r.path.test(url.pathname)));
      if (!route) {
        return new Response(JSON.stringify({ error: { code: "not-stubbed", message: `No stub for ${method} ${url.pathname}` } }), { status: 599 });
      }
      const reply = await route.handler(req);
      const status = reply.status ?? 200;
      return new Response(status === 204 || reply.body === undefined ? null : JSON.stringify(reply.body), {
        status,
        headers: { "content-type": "application/json" },
      });
    }),
  );
  return stub;
}

/** A promise the test resolves by hand, to hold a request open. */
export function deferred<T>() {
  let resolve!: (value: T) => void;
  const promise = new Promise<T>((r) => (resolve = r));
  return { promise, resolve };
}
