import type { InvitationDto } from "@shared/contract/controlRoom";
import { useResendInvitation, useRevokeInvitation } from "../../api/accounts";
import { formatDateTime } from "../../lib/format";
import { ROLE_LABELS } from "../../lib/permissions";
import { Button } from "../ui/Button";

function stateOf(i: InvitationDto, now: number): { open: boolean; text: string } {
  if (i.acceptedAt) return { open: false, text: `accepted ${formatDateTime(i.acceptedAt)}` };
  if (i.revokedAt) return { open: false, text: `revoked or replaced ${formatDateTime(i.revokedAt)}` };
  if (Date.parse(i.expiresAt) < now) return { open: true, text: `expired ${formatDateTime(i.expiresAt)}` };
  return { open: true, text: `open until ${formatDateTime(i.expiresAt)}` };
}

/** Invitations, newest first; open (or expired) ones can be sent again with a new link, or revoked. */
export function InvitationList({ invitations, onError }: { invitations: InvitationDto[]; onError: (message: string | null) => void }) {
  const resend = useResendInvitation();
  const revoke = useRevokeInvitation();
  const report = { onError: (error: Error) => onError(error.message), onSuccess: () => onError(null) };
  const now = Date.now();
  if (invitations.length === 0) return <p className="text-sm text-ink-faint">No invitations.</p>;
  return (
    <ul className="space-y-2 text-sm">
      {invitations.map((i) => {
        const state = stateOf(i, now);
        return (
          <li key={i.id} data-invitation={i.email} className="flex flex-wrap items-center gap-x-3 gap-y-1">
            <span>
              <span className="font-semibold">{i.email}</span> as {ROLE_LABELS[i.role]} · sent {formatDateTime(i.createdAt)} · {state.text}
            </span>
            {state.open ? (
              <span className="flex gap-2">
                <Button onClick={() => resend.mutate(i.id, report)} disabled={resend.isPending} aria-label={`Send the invitation to ${i.email} again`}>
                  Send again
                </Button>
                <Button onClick={() => revoke.mutate(i.id, report)} disabled={revoke.isPending} aria-label={`Revoke the invitation to ${i.email}`}>
                  Revoke
                </Button>
              </span>
            ) : null}
          </li>
        );
      })}
    </ul>
  );
}
