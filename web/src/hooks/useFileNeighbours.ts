/**
 * Previous and next file of the list the reviewer came from. The file page carries the Files page's
 * query in its own address (`/files/7?batch=3&verdict=fail`), so the neighbours come from the same
 * filtered, sorted page; at a page's edge the adjacent page is read (it is usually already cached).
 */
import { useQuery } from "@tanstack/react-query";
import type { FileQuery } from "@tidemark/shared/types/api";
import { fileListOptions } from "../api/files.ts";

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
  position: { index: number; total: number } | null;
}

export function useFileNeighbours(id: number, query: FileQuery): FileNeighbours {
  const page = query.page ?? 1;
  const pageSize = query.pageSize ?? 50;
  const current = useQuery(fileListOptions(query));
  const items = current.data?.items ?? [];
  const index = items.findIndex((f) => f.id === id);
  const total = current.data?.total ?? 0;
  const atStart = index === 0 && page > 1;
  const atEnd = index >= 0 && index === items.length - 1 && page * pageSize < total;
  const before = useQuery({ ...fileListOptions({ ...query, page: page - 1 }), enabled: atStart });
  const after = useQuery({ ...fileListOptions({ ...query, page: page + 1 }), enabled: atEnd });

  if (index < 0) return { previous: null, next: null, position: null };
  let previous: Neighbour | null = null;
  if (index > 0) previous = { id: items[index - 1].id, path: items[index - 1].path, query };
  else if (atStart && before.data && before.data.items.length > 0) {
    const last = before.data.items[before.data.items.length - 1];
    previous = { id: last.id, path: last.path, query: { ...query, page: page - 1 } };
  }
  let next: Neighbour | null = null;
  if (index < items.length - 1) next = { id: items[index + 1].id, path: items[index + 1].path, query };
  else if (atEnd && after.data && after.data.items.length > 0) {
    const first = after.data.items[0];
    next = { id: first.id, path: first.path, query: { ...query, page: page + 1 } };
  }
  return { previous, next, position: { index: (page - 1) * pageSize + index + 1, total } };
}
