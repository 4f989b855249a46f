import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { PreferencesBody, ResetPasswordBody, ResetRequestBody, SetupBody, SocietyBody, UpdateMeBody, UpdateMemberBody } from "@shared/contract/accounts";
import { adminKeys } from "./admin";
import { authKeys } from "./auth";
import { api } from "./client";

export const accountKeys = {
  setup: ["setup"] as const,
  society: ["society"] as const,
  audit: ["admin", "audit"] as const,
};

export function useSetupStatus() {
  return useQuery({ queryKey: accountKeys.setup, queryFn: ({ signal }) => api("GET /api/setup", { signal }), retry: false });
}

export function useSetup() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: SetupBody) => api("POST /api/setup", { body }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: accountKeys.setup }).then(() => queryClient.invalidateQueries({ queryKey: accountKeys.society })),
  });
}

/** The society's name for the header and the visitor display (null before setup). */
export function useSociety() {
  return useQuery({
    queryKey: accountKeys.society,
    queryFn: ({ signal }) => api("GET /api/society", { signal }),
    select: (body) => body.name,
    staleTime: 5 * 60_000,
  });
}

export function useRenameSociety() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: SocietyBody) => api("PATCH /api/society", { body }),
    onSuccess: async (body) => {
      queryClient.setQueryData(accountKeys.society, body);
      await queryClient.invalidateQueries({ queryKey: accountKeys.audit });
    },
  });
}

export function useUpdateMe() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: UpdateMeBody) => api("PATCH /api/me", { body }),
    onSuccess: (body) => queryClient.setQueryData(authKeys.me, body.user),
  });
}

export function usePreferences() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: PreferencesBody) => api("PATCH /api/me/preferences", { body }),
    onSuccess: (body) => queryClient.setQueryData(authKeys.me, body.user),
  });
}

export function useRequestReset() {
  return useMutation({ mutationFn: (body: ResetRequestBody) => api("POST /api/auth/reset", { body }) });
}

export function useResetPassword(token: string) {
  return useMutation({ mutationFn: (body: ResetPasswordBody) => api("POST /api/auth/reset/:token", { token, body }) });
}

/** After any change of members or invitations: the lists and the audit of account changes. */
function useInvalidateMembers() {
  const queryClient = useQueryClient();
  return async () => {
    await queryClient.invalidateQueries({ queryKey: adminKeys.members });
    await queryClient.invalidateQueries({ queryKey: accountKeys.audit });
    // An admin who changed their own role sees the navigation follow.
    await queryClient.invalidateQueries({ queryKey: authKeys.me });
  };
}

export function useUpdateMember() {
  const invalidate = useInvalidateMembers();
  return useMutation({
    mutationFn: ({ id, ...body }: UpdateMemberBody & { id: number }) => api("PATCH /api/admin/members/:id", { id, body }),
    onSettled: invalidate,
  });
}

export function useRemoveMember() {
  const invalidate = useInvalidateMembers();
  return useMutation({ mutationFn: (id: number) => api("DELETE /api/admin/members/:id", { id }), onSettled: invalidate });
}

export function useResendInvitation() {
  const invalidate = useInvalidateMembers();
  return useMutation({ mutationFn: (id: number) => api("POST /api/admin/invitations/:id/resend", { id }), onSettled: invalidate });
}

export function useRevokeInvitation() {
  const invalidate = useInvalidateMembers();
  return useMutation({ mutationFn: (id: number) => api("DELETE /api/admin/invitations/:id", { id }), onSettled: invalidate });
}

export function useAccountAudit() {
  return useQuery({ queryKey: accountKeys.audit, queryFn: ({ signal }) => api("GET /api/admin/audit", { signal }), select: (b) => b.entries });
}
