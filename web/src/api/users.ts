import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreateUserRequest, UpdateUserRequest, UserDto } from "@tidemark/shared/types/api";
import { createUserSchema, updateUserSchema } from "@tidemark/shared/contracts/users";
import { checkedBody, getJson, sendJson } from "./client.ts";
import { auditKeys, userKeys } from "./keys.ts";

export const userListOptions = () =>
  queryOptions({
    queryKey: userKeys.list(),
    queryFn: ({ signal }) => getJson<UserDto[]>("/api/users", { signal }),
  });

export function useUsers() {
  return useQuery(userListOptions());
}

function useInvalidateUsers() {
  const client = useQueryClient();
  return () =>
    Promise.all([
      client.invalidateQueries({ queryKey: userListOptions().queryKey }),
      client.invalidateQueries({ queryKey: auditKeys.all }),
    ]);
}

export function useCreateUser() {
  const invalidate = useInvalidateUsers();
  return useMutation({
    mutationFn: (body: CreateUserRequest) => sendJson<UserDto>("POST", "/api/users", checkedBody(createUserSchema, body)),
    onSettled: invalidate,
  });
}

export function useUpdateUser() {
  const invalidate = useInvalidateUsers();
  return useMutation({
    mutationFn: ({ id, change }: { id: number; change: UpdateUserRequest }) => sendJson<UserDto>("PATCH", `/api/users/${id}`, checkedBody(updateUserSchema, change)),
    onSettled: invalidate,
  });
}
