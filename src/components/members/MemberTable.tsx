import { useState } from "react";
import { ROLES, type Role } from "@shared/contract/rest";
import type { MemberDto } from "@shared/contract/controlRoom";
import { useRemoveMember, useUpdateMember } from "../../api/accounts";
import { ROLE_LABELS } from "../../lib/permissions";
import { Button } from "../ui/Button";
import { ConfirmDialog } from "../ui/ConfirmDialog";

const cell = "px-3 py-2 align-middle";

/** Members with their role and alarm mail, changed in place; removal asks first. */
export function MemberTable({ members, myId, onError }: { members: MemberDto[]; myId: number; onError: (message: string | null) => void }) {
  const update = useUpdateMember();
  const remove = useRemoveMember();
  const [removing, setRemoving] = useState<MemberDto | null>(null);
  const report = { onError: (error: Error) => onError(error.message), onSuccess: () => onError(null) };

  return (
    <div className="overflow-x-auto rounded-md border border-panel-700">
      <table className="w-full border-collapse text-left text-sm">
        <caption className="sr-only">Members</caption>
        <thead className="bg-panel-850 text-xs uppercase tracking-wide text-ink-soft">
          <tr>
            {["Name", "Email", "Role", "Alarm mail", ""].map((h, i) => (
              <th key={i} scope="col" className="px-3 py-2 font-semibold">
                {h}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {members.map((m) => (
            <tr key={m.id} data-member={m.email} className="border-t border-panel-700 odd:bg-panel-900 even:bg-panel-950">
              <td className={cell}>
                {m.name}
                {m.id === myId ? <span className="ml-2 text-xs text-ink-faint">(you)</span> : null}
              </td>
              <td className={cell}>{m.email}</td>
              <td className={cell}>
                <select
                  aria-label={`Role of ${m.name}`}
                  value={m.role}
                  disabled={update.isPending}
                  onChange={(e) => update.mutate({ id: m.id, role: e.target.value as Role }, report)}
                  className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1"
                >
                  {ROLES.map((r) => (
                    <option key={r} value={r}>
                      {ROLE_LABELS[r]}
                    </option>
                  ))}
                </select>
              </td>
              <td className={cell}>
                <input
                  type="checkbox"
                  aria-label={`Alarm mail for ${m.name}`}
                  checked={m.alarmMail}
                  disabled={update.isPending}
                  onChange={(e) => update.mutate({ id: m.id, alarmMail: e.target.checked }, report)}
                />
              </td>
              <td className={`${cell} text-right`}>
                <Button tone="plain" onClick={() => setRemoving(m)} aria-label={`Remove ${m.name}`}>
                  Remove
                </Button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {removing ? (
        <ConfirmDialog
          title={`Remove ${removing.name}?`}
          confirmLabel="Remove member"
          busy={remove.isPending}
          onCancel={() => setRemoving(null)}
          onConfirm={() =>
            remove.mutate(removing.id, {
              ...report,
              onSettled: () => setRemoving(null),
            })
          }
        >
          <p>
            {removing.email} can no longer sign in, and is signed out everywhere at once. What they did stays in the audit. To bring them back, invite them again.
          </p>
        </ConfirmDialog>
      ) : null}
    </div>
  );
}
