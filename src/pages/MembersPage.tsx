import { useForm } from "react-hook-form";
import { ROLES, type Role } from "../../shared/contract/rest";
import type { InvitationBody, MemberDto } from "../../shared/contract/controlRoom";
import { useInviteMutation, useMembers } from "../api/admin";
import { Button } from "../components/ui/Button";
import { columnsFor, DataTable } from "../components/ui/DataTable";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { formatDateTime } from "../lib/format";
import { ROLE_LABELS } from "../lib/permissions";

const col = columnsFor<MemberDto>();
const columns = col.columns([
  col.accessor("name", { header: "Name" }),
  col.accessor("email", { header: "Email" }),
  col.accessor("role", { header: "Role", cell: (info) => ROLE_LABELS[info.getValue()] }),
  col.accessor("alarmMail", { header: "Alarm mail", cell: (info) => (info.getValue() ? "yes" : "no") }),
]);

/** Admins see the society's members and invite new ones by e-mail. */
export default function MembersPage() {
  const members = useMembers();
  const invite = useInviteMutation();
  const form = useForm<InvitationBody>({ defaultValues: { email: "", role: "viewer" as Role } });

  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Members</h1>
      <Panel title="Invite a member">
        <form
          className="flex flex-wrap items-end gap-3"
          onSubmit={form.handleSubmit((body) => invite.mutate(body, { onSuccess: () => form.reset({ email: "", role: body.role }) }))}
        >
          <div>
            <label htmlFor="invite-email" className="block text-sm text-ink-soft">
              Email
            </label>
            <input id="invite-email" type="email" {...form.register("email", { required: "give an e-mail address" })} className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1" />
          </div>
          <div>
            <label htmlFor="invite-role" className="block text-sm text-ink-soft">
              Role
            </label>
            <select id="invite-role" {...form.register("role")} className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1">
              {ROLES.map((r) => (
                <option key={r} value={r}>
                  {ROLE_LABELS[r]}
                </option>
              ))}
            </select>
          </div>
          <Button type="submit" tone="primary" disabled={invite.isPending}>
            Send invitation
          </Button>
        </form>
        {form.formState.errors.email ? <p className="mt-2 text-sm text-notice-error">{form.formState.errors.email.message}</p> : null}
        {invite.isSuccess ? <p role="status" className="mt-2 text-sm text-notice-ok">Invitation sent.</p> : null}
        {invite.isError ? <p role="alert" className="mt-2 text-sm text-notice-error">{invite.error.message}</p> : null}
      </Panel>
      {members.isPending ? <Loading what="members" /> : null}
      {members.isError ? <LoadError error={members.error} what="members" /> : null}
      {members.data ? (
        <>
          <Panel title="Members">
            <DataTable caption="Members" columns={columns} data={members.data.members} getRowId={(r) => String(r.id)} />
          </Panel>
          <Panel title="Invitations">
            <ul className="space-y-1 text-sm">
              {members.data.invitations.length === 0 ? <li className="text-ink-faint">No invitations.</li> : null}
              {members.data.invitations.map((i) => (
                <li key={i.id}>
                  <span className="font-semibold">{i.email}</span> as {ROLE_LABELS[i.role]} · sent {formatDateTime(i.createdAt)} ·{" "}
                  {i.acceptedAt ? `accepted ${formatDateTime(i.acceptedAt)}` : `open until ${formatDateTime(i.expiresAt)}`}
                </li>
              ))}
            </ul>
          </Panel>
        </>
      ) : null}
    </div>
  );
}
