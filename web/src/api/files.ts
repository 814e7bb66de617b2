import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { bulkReviewChangeSchema, createCommentSchema, fileQuerySchema, reviewChangeSchema } from "@tidemark/shared/contracts/files";
import type {
  BulkReviewChangeRequest,
  CommentDto,
  CreateCommentRequest,
  FileDetailDto,
  FilePage,
  FileQuery,
  ReviewChangeRequest,
} from "@tidemark/shared/types/api";
import { decodeLevelGrid } from "../components/file/levelGrid.ts";
import { decodeLoudnessCurve } from "../components/file/loudnessCurve.ts";
import { checkedBody, getJson, requestUrl, sendJson } from "./client.ts";
import { auditKeys, fileKeys } from "./keys.ts";

export const fileListOptions = (query: FileQuery) =>
  queryOptions({
    queryKey: fileKeys.list(query),
    queryFn: ({ signal }) => getJson<FilePage>(requestUrl("/api/files", fileQuerySchema, query), { signal }),
    placeholderData: keepPreviousData,
  });

/**
 * The query of the page next to a loaded one: by its cursor (a seek on the server, as cheap at page 10 000
 * as at page 2), or plain page 1. Null when there is no such page.
 */
export function adjacentFileQuery(query: FileQuery, data: FilePage, step: 1 | -1): FileQuery | null {
  const page = (query.page ?? 1) + step;
  if (page < 1) return null;
  const { after: _a, before: _b, ...rest } = query;
  if (page === 1) return { ...rest, page };
  const cursor = step === 1 ? data.nextCursor : data.prevCursor;
  if (!cursor) return null;
  return step === 1 ? { ...rest, page, after: cursor } : { ...rest, page, before: cursor };
}

export const fileDetailOptions = (id: number) =>
  queryOptions({
    queryKey: fileKeys.detail(id),
    queryFn: ({ signal }) => getJson<FileDetailDto>(`/api/files/${id}`, { signal }),
  });

export function useFiles(query: FileQuery) {
  return useQuery(fileListOptions(query));
}

export function useFile(id: number) {
  return useQuery({ ...fileDetailOptions(id), enabled: Number.isInteger(id) && id > 0 });
}

/** The overview's level grid, decoded once and kept: it never changes for a stored scan. */
export function useLevelGrid(id: number, url: string | null) {
  return useQuery({
    queryKey: fileKeys.levelGrid(id),
    queryFn: async ({ signal }) => decodeLevelGrid(await getJson<unknown>(url as string, { signal })),
    enabled: url !== null,
    staleTime: Infinity,
  });
}

export function useLoudnessCurve(id: number, url: string | null) {
  return useQuery({
    queryKey: fileKeys.loudnessCurve(id),
    queryFn: async ({ signal }) => decodeLoudnessCurve(await getJson<unknown>(url as string, { signal })),
    enabled: url !== null,
    staleTime: Infinity,
  });
}

/**
 * Review state of one file, optimistic: the new state shows at once and is rolled back if the server
 * refuses. Lists and the audit trail are refreshed afterwards because both show review state or writes.
 */
export function useSaveReview(id: number) {
  const client = useQueryClient();
  const detailKey = fileDetailOptions(id).queryKey;
  return useMutation({
    mutationFn: (body: ReviewChangeRequest) => sendJson<FileDetailDto>("PATCH", `/api/files/${id}`, checkedBody(reviewChangeSchema, body)),
    onMutate: async (body) => {
      // Cancel in-flight reads so they do not overwrite the optimistic state.
      await client.cancelQueries({ queryKey: detailKey });
      const previous = client.getQueryData(detailKey);
      if (previous) client.setQueryData(detailKey, { ...previous, reviewState: body.reviewState });
      return { previous };
    },
    onError: (_error, _body, context) => {
      if (context?.previous) client.setQueryData(detailKey, context.previous);
    },
    // The server answers with the whole detail, review history included.
    onSuccess: (detail) => client.setQueryData(detailKey, detail),
    onSettled: () =>
      Promise.all([
        client.invalidateQueries({ queryKey: detailKey }),
        client.invalidateQueries({ queryKey: fileKeys.lists() }),
        client.invalidateQueries({ queryKey: auditKeys.all }),
      ]),
  });
}

export function useBulkReview() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (body: BulkReviewChangeRequest) => sendJson<unknown>("POST", "/api/files/review", checkedBody(bulkReviewChangeSchema, body)),
    onSettled: (_data, _error, body) =>
      Promise.all([
        client.invalidateQueries({ queryKey: fileKeys.lists() }),
        ...body.ids.map((id) => client.invalidateQueries({ queryKey: fileKeys.detail(id) })),
        client.invalidateQueries({ queryKey: auditKeys.all }),
      ]),
  });
}

/** The thread lives inside the file detail; the new comment is appended at once, then re-read. */
export function useAddComment(fileId: number) {
  const client = useQueryClient();
  const detailKey = fileDetailOptions(fileId).queryKey;
  return useMutation({
    mutationFn: (body: CreateCommentRequest) => sendJson<CommentDto>("POST", `/api/files/${fileId}/comments`, checkedBody(createCommentSchema, body)),
    onSuccess: (comment) => {
      client.setQueryData(detailKey, (detail) =>
        detail && !detail.comments.some((c) => c.id === comment.id) ? { ...detail, comments: [...detail.comments, comment] } : detail,
      );
    },
    onSettled: () =>
      Promise.all([client.invalidateQueries({ queryKey: detailKey }), client.invalidateQueries({ queryKey: auditKeys.all })]),
  });
}
