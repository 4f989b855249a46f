import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { AcceptInvitationBody, InvitationBody } from "@shared/contract/controlRoom";
import { api } from "./client";

export const adminKeys = {
  outbox: ["admin", "outbox"] as const,
  members: ["admin", "members"] as const,
  invitation: (token: string) => ["invitation", token] as const,
};

export function useOutbox() {
  return useQuery({
    queryKey: adminKeys.outbox,
    queryFn: ({ signal }) => api("GET /api/admin/outbox", { signal }),
    select: (body) => body.messages,
    refetchInterval: 5_000,
  });
}

export function useMembers() {
  return useQuery({ queryKey: adminKeys.members, queryFn: ({ signal }) => api("GET /api/admin/members", { signal }) });
}

export function useInviteMutation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: InvitationBody) => api("POST /api/invitations", { body }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: adminKeys.members }),
  });
}

export function useInvitation(token: string) {
  return useQuery({
    queryKey: adminKeys.invitation(token),
    queryFn: ({ signal }) => api("GET /api/invitations/:token", { token, signal }),
    retry: false,
  });
}

export function useAcceptInvitation(token: string) {
  return useMutation({
    mutationFn: (body: AcceptInvitationBody) => api("POST /api/invitations/:token/accept", { token, body }),
  });
}
