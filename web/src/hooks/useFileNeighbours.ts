/**
 * Previous and next file of the list the reviewer came from. The file page carries the Files page's
 * query in its own address (`/files/7?batch=3&verdict=fail`), so the neighbours come from the same
 * filtered, sorted page; at a page's edge the adjacent page is read by its cursor (it is usually already cached).
 */
import { useQuery } from "@tanstack/react-query";
import type { FileQuery } from "@tidemark/shared/types/api";
import { adjacentFileQuery, fileListOptions } from "../api/files.ts";

export interface Neighbour {
  id: number;
  path: string;
  /** The list query for the neighbour's own page, so moving on keeps filters, sort and page. */
  query: FileQuery;
}

export interface FileNeighbours {
  previous: Neighbour | null;
  next: Neighbour | null;
  /** 1-based position in the whole filtered list and its total, when known. */
  position: { index: number; total: number; totalIsEstimate: boolean } | null;
}

export function useFileNeighbours(id: number, query: FileQuery): FileNeighbours {
  const page = query.page ?? 1;
  const pageSize = query.pageSize ?? 50;
  const current = useQuery(fileListOptions(query));
  const items = current.data?.items ?? [];
  const index = items.findIndex((f) => f.id === id);
  const total = current.data?.total ?? 0;
  const previousQuery = current.data ? adjacentFileQuery(query, current.data, -1) : null;
  const nextQuery = current.data ? adjacentFileQuery(query, current.data, 1) : null;
  const atStart = index === 0 && previousQuery !== null;
  const atEnd = index >= 0 && index === items.length - 1 && nextQuery !== null;
  const before = useQuery({ ...fileListOptions(previousQuery ?? { ...query, page: page - 1 }), enabled: atStart });
  const after = useQuery({ ...fileListOptions(nextQuery ?? { ...query, page: page + 1 }), enabled: atEnd });

  if (index < 0) return { previous: null, next: null, position: null };
  let previous: Neighbour | null = null;
  if (index > 0) previous = { id: items[index - 1].id, path: items[index - 1].path, query };
  else if (atStart && before.data && before.data.items.length > 0) {
    const last = before.data.items[before.data.items.length - 1];
    previous = { id: last.id, path: last.path, query: previousQuery! };
  }
  let next: Neighbour | null = null;
  if (index < items.length - 1) next = { id: items[index + 1].id, path: items[index + 1].path, query };
  else if (atEnd && after.data && after.data.items.length > 0) {
    const first = after.data.items[0];
    next = { id: first.id, path: first.path, query: nextQuery! };
  }
  return { previous, next, position: { index: (page - 1) * pageSize + index + 1, total, totalIsEstimate: current.data?.totalIsEstimate ?? false } };
}
