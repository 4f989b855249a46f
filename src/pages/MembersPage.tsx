import { useState } from "react";
import { useForm } from "react-hook-form";
import { ROLES } from "@shared/contract/rest";
import { invitationBodySchema, type InvitationBody } from "@shared/contract/controlRoom";
import { useSociety } from "../api/accounts";
import { useInviteMutation, useMembers } from "../api/admin";
import { AccountAudit } from "../components/members/AccountAudit";
import { InvitationList } from "../components/members/InvitationList";
import { MemberTable } from "../components/members/MemberTable";
import { SocietyName } from "../components/members/SocietyName";
import { Button } from "../components/ui/Button";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { ROLE_LABELS } from "../lib/permissions";
import { zodResolver } from "../lib/zodResolver";

/** Admins see the society's members, change their roles, remove them, and invite new ones by e-mail. */
export default function MembersPage() {
  const user = useCurrentUser();
  const members = useMembers();
  const invite = useInviteMutation();
  const society = useSociety();
  const [changeError, setChangeError] = useState<string | null>(null);
  const form = useForm<InvitationBody>({ resolver: zodResolver(invitationBodySchema), defaultValues: { email: "", role: "viewer" } });

  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Members</h1>
      <Panel title="Invite a member">
        <form
          noValidate
          className="flex flex-wrap items-end gap-3"
          onSubmit={form.handleSubmit((body) => invite.mutate(body, { onSuccess: () => form.reset({ email: "", role: body.role }) }))}
        >
          <div>
            <label htmlFor="invite-email" className="block text-sm text-ink-soft">
              Email
            </label>
            <input id="invite-email" type="email" {...form.register("email")} className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1" />
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
        <p className="mt-2 text-xs text-ink-faint">Inviting an address again replaces its earlier invitation: only the newest link works.</p>
        {form.formState.errors.email ? <p className="mt-2 text-sm text-notice-error">{form.formState.errors.email.message}</p> : null}
        {invite.isSuccess ? <p role="status" className="mt-2 text-sm text-notice-ok">Invitation sent.</p> : null}
        {invite.isError ? <p role="alert" className="mt-2 text-sm text-notice-error">{invite.error.message}</p> : null}
      </Panel>
      {changeError ? (
        <p role="alert" className="rounded-md border border-aspect-danger/60 bg-aspect-danger/10 p-3 text-notice-error">
          {changeError}
        </p>
      ) : null}
      {members.isPending ? <Loading what="members" /> : null}
      {members.isError ? <LoadError error={members.error} what="members" /> : null}
      {members.data ? (
        <>
          <Panel title="Members">
            <MemberTable members={members.data.members} myId={user.id} onError={setChangeError} />
            <p className="mt-2 text-xs text-ink-faint">A changed role applies from the member's next click. The society always keeps at least one admin.</p>
          </Panel>
          <Panel title="Invitations">
            <InvitationList invitations={members.data.invitations} onError={setChangeError} />
          </Panel>
        </>
      ) : null}
      <Panel title="Society">{society.isSuccess ? <SocietyName name={society.data} /> : null}</Panel>
      <Panel title="Account changes">
        <AccountAudit />
      </Panel>
    </div>
  );
}
