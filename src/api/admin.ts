import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { AcceptInvitationBody, InvitationBody, InvitationPreview, MembersResponse, OutboxResponse } from "../../shared/contract/controlRoom";
import { http } from "./http";

export const adminKeys = {
  outbox: ["admin", "outbox"] as const,
  members: ["admin", "members"] as const,
  invitation: (token: string) => ["invitation", token] as const,
};

export function useOutbox() {
  return useQuery({
    queryKey: adminKeys.outbox,
    queryFn: ({ signal }) => http.get<OutboxResponse>("/api/admin/outbox", signal),
    select: (body) => body.messages,
    refetchInterval: 5_000,
  });
}

export function useMembers() {
  return useQuery({ queryKey: adminKeys.members, queryFn: ({ signal }) => http.get<MembersResponse>("/api/admin/members", signal) });
}

export function useInviteMutation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: InvitationBody) => http.post<{ id: number }>("/api/invitations", body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: adminKeys.members }),
  });
}

export function useInvitation(token: string) {
  return useQuery({
    queryKey: adminKeys.invitation(token),
    queryFn: ({ signal }) => http.get<InvitationPreview>(`/api/invitations/${encodeURIComponent(token)}`, signal),
    retry: false,
  });
}

export function useAcceptInvitation(token: string) {
  return useMutation({
    mutationFn: (body: AcceptInvitationBody) => http.post<{ email: string }>(`/api/invitations/${encodeURIComponent(token)}/accept`, body),
  });
}
