import { useForm } from "react-hook-form";
import { Link } from "react-router-dom";
import { resetRequestBodySchema, type ResetRequestBody } from "@shared/contract/accounts";
import { useRequestReset } from "../api/accounts";
import { ApiError } from "../api/http";
import { AuthCard, FormAlert, submitClass } from "../components/auth/AuthCard";
import { TextField } from "../components/auth/TextField";
import { zodResolver } from "../lib/zodResolver";
import { paths } from "../lib/paths";

/** Asks for a reset link by e-mail; the answer is the same whether or not the address is a member's. */
export default function ForgotPasswordPage() {
  const reset = useRequestReset();
  const form = useForm<ResetRequestBody>({ resolver: zodResolver(resetRequestBodySchema), defaultValues: { email: "" } });

  if (reset.isSuccess) {
    return (
      <AuthCard title="Check your mail">
        <p role="status" className="text-ink-soft">
          If that address belongs to a member, a link to choose a new password is on its way. It works once, for one hour. (Without an outgoing mail server, your admin finds it in the
          outbox.)
        </p>
        <p className="mt-4 text-sm">
          <Link to={paths.login()} className="underline">Back to sign-in</Link>
        </p>
      </AuthCard>
    );
  }

  return (
    <AuthCard title="Forgot your password?" intro={<p>Give the e-mail address you sign in with, and we will mail you a link to choose a new password.</p>}>
      <form noValidate onSubmit={form.handleSubmit((body) => reset.mutate(body))} className="space-y-4">
        <TextField label="Email" type="email" registration={form.register("email")} error={form.formState.errors.email?.message} autoComplete="username" />
        <FormAlert message={reset.error instanceof ApiError ? reset.error.message : reset.error ? "Could not send the request. Try again." : null} />
        <button type="submit" disabled={reset.isPending} className={submitClass}>
          Mail me a reset link
        </button>
      </form>
      <p className="mt-4 text-sm">
        <Link to={paths.login()} className="underline">Back to sign-in</Link>
      </p>
    </AuthCard>
  );
}
