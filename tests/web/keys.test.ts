import { describe, expect, it } from "vitest";
import { matchQuery, QueryClient } from "@tanstack/react-query";
import { fileKeys } from "../../web/src/api/keys.ts";
import { fileDetailOptions, fileListOptions } from "../../web/src/api/files.ts";

describe("query-key factories", () => {
  it("nest, so invalidating a level reaches everything below it and nothing beside it", () => {
    const client = new QueryClient();
    const cache = client.getQueryCache();
    const list = cache.build(client, fileListOptions({ verdict: "fail", page: 2 }));
    const detail = cache.build(client, fileDetailOptions(7));
    expect(matchQuery({ queryKey: fileKeys.lists() }, list)).toBe(true);
    expect(matchQuery({ queryKey: fileKeys.lists() }, detail)).toBe(false);
    expect(matchQuery({ queryKey: fileKeys.detail(7) }, detail)).toBe(true);
    expect(matchQuery({ queryKey: fileKeys.detail(8) }, detail)).toBe(false);
    expect(matchQuery({ queryKey: fileKeys.all }, list) && matchQuery({ queryKey: fileKeys.all }, detail)).toBe(true);
  });

  it("put every filter into the list key, so two views never share a cache entry", () => {
    expect(fileListOptions({ verdict: "fail", page: 1 }).queryKey).not.toEqual(fileListOptions({ verdict: "fail", page: 2 }).queryKey);
    expect(fileListOptions({ q: "reel" }).queryKey).toEqual(["files", "list", { q: "reel" }]);
  });
});
