import { afterEach, describe, expect, it, vi } from "vitest";
import { ContractError } from "@tidemark/shared/contracts/checkContract";
import { createCommentSchema, fileQuerySchema } from "@tidemark/shared/contracts/files";
import { ApiError, checkedBody, getJson, requestUrl, sendJson, withQuery } from "../../web/src/api/client.ts";
import { stubFetch } from "./fetchStub.ts";

afterEach(() => vi.unstubAllGlobals());

describe("API client", () => {
  it("turns the server's error shape into an ApiError with its code and message", async () => {
    stubFetch().on("GET", "/api/files/9", { status: 404, body: { error: { code: "not-found", message: "No file result 9." } } });
    const error = await getJson("/api/files/9").catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ApiError);
    expect(error).toMatchObject({ status: 404, code: "not-found", message: "No file result 9." });
  });

  it("explains a status in plain words when the body is not our JSON", async () => {
    vi.stubGlobal("fetch", vi.fn(async () => new Response("<html>Bad gateway</html>", { status: 502 })));
    await expect(getJson("/api/batches")).rejects.toMatchObject({ status: 502, message: expect.stringMatching(/server ran into a problem/i) });
  });

  it("reports an unreachable server as a network problem", async () => {
    vi.stubGlobal("fetch", vi.fn(async () => Promise.reject(new TypeError("Failed to fetch"))));
    await expect(getJson("/api/batches")).rejects.toMatchObject({ code: "network", message: expect.stringMatching(/could not be reached/) });
  });

  it("passes the abort signal through to fetch", async () => {
    const stub = stubFetch().on("GET", "/api/collections", { body: [] });
    const controller = new AbortController();
    await getJson("/api/collections", { signal: controller.signal });
    const init = vi.mocked(fetch).mock.calls[0][1];
    expect(init?.signal).toBe(controller.signal);
    expect(stub.calls).toHaveLength(1);
  });

  it("sends the CSRF header and a JSON body on writes, and not on reads", async () => {
    const stub = stubFetch().on("PATCH", "/api/files/4", { body: { id: 4 } }).on("GET", "/api/files/4", { body: { id: 4 } });
    await sendJson("PATCH", "/api/files/4", { reviewState: "flagged", reason: "hum" });
    await getJson("/api/files/4");
    const [write, read] = stub.calls;
    expect(write.headers.get("x-tidemark-request")).toBe("1");
    expect(write.headers.get("content-type")).toBe("application/json");
    expect(write.body).toEqual({ reviewState: "flagged", reason: "hum" });
    expect(read.headers.get("x-tidemark-request")).toBeNull();
  });

  it("accepts an empty 204 answer", async () => {
    stubFetch().on("DELETE", "/api/session", { status: 204 });
    await expect(sendJson("DELETE", "/api/session")).resolves.toBeUndefined();
  });

  it("leaves empty values out of query strings", () => {
    expect(withQuery("/api/files", { verdict: "fail", q: "", batch: undefined, page: 2 })).toBe("/api/files?verdict=fail&page=2");
    expect(withQuery("/api/files", {})).toBe("/api/files");
  });

  it("builds request URLs with the server's own contract: defaults filled in, a wrongly built query refused", () => {
    expect(requestUrl("/api/files", fileQuerySchema, { verdict: "fail", q: "" })).toBe("/api/files?verdict=fail&page=1&pageSize=50");
    expect(() => requestUrl("/api/files", fileQuerySchema, { page: 0 })).toThrow(ContractError);
    expect(() => requestUrl("/api/files", fileQuerySchema, { page: 0 })).toThrow(/^invalid query of \/api\/files: page: Too small/);
  });

  it("refuses a body the server would refuse, with the server's status, code and message, and passes a good one as given", () => {
    const body = { body: "  hum at 50 Hz  ", atSeconds: 1.5 };
    expect(checkedBody(createCommentSchema, body)).toBe(body);
    let error: unknown;
    try {
      checkedBody(createCommentSchema, { body: "   ", channel: -1 });
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ApiError);
    expect(error).toMatchObject({ status: 400, code: "invalid_request" });
    expect((error as ApiError).message).toMatch(/^invalid comment: body: .*; channel: Too small/);
  });
});
