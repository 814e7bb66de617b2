/** The "Same recording elsewhere" list of one file: GET /api/files/:id/duplicates. */
import { queryOptions, useQuery } from "@tanstack/react-query";
import type { DuplicateListDto } from "@tidemark/shared/types/api";
import { getJson } from "./client.ts";
import { fileKeys } from "./keys.ts";

export const fileDuplicatesOptions = (id: number) =>
  queryOptions({
    queryKey: fileKeys.duplicates(id),
    queryFn: ({ signal }) => getJson<DuplicateListDto>(`/api/files/${id}/duplicates`, { signal }),
  });

export function useFileDuplicates(id: number) {
  return useQuery({ ...fileDuplicatesOptions(id), enabled: Number.isInteger(id) && id > 0 });
}
