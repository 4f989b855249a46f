import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { LoginBody, UserDto } from "@shared/contract/rest";
import { api } from "./client";
import { ApiError } from "./http";

export const authKeys = {
  me: ["me"] as const,
};

/** The signed-in user, or null when signed out (a 401 is an answer here, not an error). */
export async function fetchMe(signal?: AbortSignal): Promise<UserDto | null> {
  try {
    const body = await api("GET /api/me", { signal });
    return body.user;
  } catch (error) {
    if (error instanceof ApiError && error.status === 401) return null;
    throw error;
  }
}

export function useMe() {
  return useQuery({
    queryKey: authKeys.me,
    queryFn: ({ signal }) => fetchMe(signal),
    staleTime: 60_000,
    retry: false,
  });
}

export function useLogin() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: LoginBody) => api("POST /api/auth/login", { body }),
    onSuccess: async (body) => {
      queryClient.setQueryData(authKeys.me, body.user);
      // /api/me stays the source of truth (the role may have changed since).
      await queryClient.invalidateQueries({ queryKey: authKeys.me });
    },
  });
}

export function useLogout() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => api("POST /api/auth/logout"),
    onSettled: () => {
      // Whatever the server said, forget everything cached for this user.
      queryClient.clear();
      queryClient.setQueryData(authKeys.me, null);
    },
  });
}
