import { describe, expect, it } from "vitest";
import { QueryClient } from "@tanstack/react-query";
import { fileKeys } from "../../web/src/api/keys.ts";
import { fileDetailOptions, fileListOptions } from "../../web/src/api/files.ts";
import { fileDetail, filePage } from "./fixtures.ts";

describe("query-key factories", () => {
  it("nest, so invalidating a level reaches everything below it and nothing beside it", () => {
    const client = new QueryClient();
    client.setQueryData(fileListOptions({ verdict: "fail", page: 2 }).queryKey, filePage([]));
    client.setQueryData(fileDetailOptions(7).queryKey, fileDetail(7));
    client.setQueryData(fileDetailOptions(8).queryKey, fileDetail(8));
    const keysUnder = (queryKey: readonly unknown[]) =>
      client
        .getQueryCache()
        .findAll({ queryKey })
        .map((q) => q.queryKey);
    expect(keysUnder(fileKeys.lists())).toEqual([["files", "list", { verdict: "fail", page: 2 }]]);
    expect(keysUnder(fileKeys.detail(7))).toEqual([["files", "detail", 7]]);
    expect(keysUnder(fileKeys.all)).toHaveLength(3);
  });

  it("put every filter into the list key, so two views never share a cache entry", () => {
    expect(fileListOptions({ verdict: "fail", page: 1 }).queryKey).not.toEqual(fileListOptions({ verdict: "fail", page: 2 }).queryKey);
    expect(fileListOptions({ q: "reel" }).queryKey).toEqual(["files", "list", { q: "reel" }]);
  });
});
