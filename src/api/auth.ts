import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { LoginBody, MeResponse, UserDto } from "../../shared/contract/rest";
import { ApiError, http } from "./http";

export const authKeys = {
  me: ["me"] as const,
};

/** The signed-in user, or null when signed out (a 401 is an answer here, not an error). */
export async function fetchMe(signal?: AbortSignal): Promise<UserDto | null> {
  try {
    const body = await http.get<MeResponse>("/api/me", signal);
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
    mutationFn: (body: LoginBody) => http.post<MeResponse | Record<string, unknown>>("/api/auth/login", body),
    onSuccess: async (body) => {
      // The login reply may or may not carry the user; /api/me is the source of truth.
      if (body && typeof body === "object" && "user" in body) {
        queryClient.setQueryData(authKeys.me, (body as MeResponse).user);
      }
      await queryClient.invalidateQueries({ queryKey: authKeys.me });
    },
  });
}

export function useLogout() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => http.post<unknown>("/api/auth/logout"),
    onSettled: () => {
      // Whatever the server said, forget everything cached for this user.
      queryClient.clear();
      queryClient.setQueryData(authKeys.me, null);
    },
  });
}
