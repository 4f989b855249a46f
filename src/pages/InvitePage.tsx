import { useForm } from "react-hook-form";
import { Link, useParams } from "react-router-dom";
import { PASSWORD_RULE } from "@shared/contract/accounts";
import { acceptInvitationBodySchema, type AcceptInvitationBody } from "@shared/contract/controlRoom";
import { useAcceptInvitation, useInvitation } from "../api/admin";
import { Button } from "../components/ui/Button";
import { ROLE_LABELS } from "../lib/permissions";
import { zodResolver } from "../lib/zodResolver";
import { paths } from "../lib/paths";

/** Someone invited by e-mail chooses a name and password here. */
export default function InvitePage() {
  const { token = "" } = useParams();
  const invitation = useInvitation(token);
  const accept = useAcceptInvitation(token);
  const form = useForm<AcceptInvitationBody>({ resolver: zodResolver(acceptInvitationBodySchema), defaultValues: { name: "", password: "" } });

  return (
    <main className="mx-auto max-w-md space-y-4 p-8">
      <h1 className="text-2xl font-bold">Join Blocklight</h1>
      {invitation.isError ? <p role="alert" className="text-notice-error">This invitation is not valid any more. Ask your society's admin for a new one.</p> : null}
      {invitation.data && !accept.isSuccess ? (
        <>
          <p className="text-ink-soft">
            You are invited as <strong className="text-ink">{ROLE_LABELS[invitation.data.role]}</strong> with the address <strong className="text-ink">{invitation.data.email}</strong>.
          </p>
          <form noValidate className="space-y-3" onSubmit={form.handleSubmit((body) => accept.mutate(body))}>
            <div>
              <label htmlFor="invite-name" className="block text-sm">
                Your name
              </label>
              <input id="invite-name" {...form.register("name")} className="w-full rounded-md border border-panel-600 bg-panel-950 px-2 py-1" />
              {form.formState.errors.name ? <p className="text-sm text-notice-error">{form.formState.errors.name.message}</p> : null}
            </div>
            <div>
              <label htmlFor="invite-password" className="block text-sm">
                Password
              </label>
              <p className="text-xs text-ink-faint">{PASSWORD_RULE}</p>
              <input id="invite-password" type="password" autoComplete="new-password" {...form.register("password")} className="w-full rounded-md border border-panel-600 bg-panel-950 px-2 py-1" />
              {form.formState.errors.password ? <p className="text-sm text-notice-error">{form.formState.errors.password.message}</p> : null}
            </div>
            <Button type="submit" tone="primary" disabled={accept.isPending}>
              Create my account
            </Button>
            {accept.isError ? <p role="alert" className="text-sm text-notice-error">{accept.error.message}</p> : null}
          </form>
        </>
      ) : null}
      {accept.isSuccess ? (
        <p role="status" className="text-notice-ok">
          Your account is ready. <Link to={paths.login()} className="underline">Sign in</Link>.
        </p>
      ) : null}
    </main>
  );
}
