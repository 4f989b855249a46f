import { useState } from "react";
import { useForm } from "react-hook-form";
import { Link, useParams } from "react-router-dom";
import { z } from "zod";
import { PASSWORD_RULE, passwordSchema } from "@shared/contract/accounts";
import { useResetPassword } from "../api/accounts";
import { ApiError } from "../api/http";
import { AuthCard, FormAlert, submitClass } from "../components/auth/AuthCard";
import { TextField } from "../components/auth/TextField";
import { applyServerErrors } from "../lib/formErrors";
import { zodResolver } from "../lib/zodResolver";
import { paths } from "../lib/paths";

const resetFormSchema = z
  .object({ password: passwordSchema, repeat: z.string() })
  .refine((v) => v.password === v.repeat, { message: "the two passwords differ", path: ["repeat"] });
type ResetForm = z.infer<typeof resetFormSchema>;

/** The page a reset mail links to: choose a new password (the link works once, for an hour). */
export default function ResetPasswordPage() {
  const { token = "" } = useParams();
  const reset = useResetPassword(token);
  const [serverError, setServerError] = useState<string | null>(null);
  const [expired, setExpired] = useState(false);
  const form = useForm<ResetForm>({ resolver: zodResolver(resetFormSchema), defaultValues: { password: "", repeat: "" } });

  if (reset.isSuccess) {
    return (
      <AuthCard title="Password changed">
        <p role="status" className="text-notice-ok">
          Your new password works now; every browser signed in with the old one has been signed out. <Link to={paths.login()} className="font-semibold underline">Sign in</Link>.
        </p>
      </AuthCard>
    );
  }
  if (expired) {
    return (
      <AuthCard title="This link has been used or is too old">
        <p role="alert" className="text-ink-soft">
          A reset link works once, for one hour. <Link to={paths.forgotPassword()} className="underline">Ask for a new one</Link>.
        </p>
      </AuthCard>
    );
  }

  const submit = form.handleSubmit(async ({ password }) => {
    setServerError(null);
    try {
      await reset.mutateAsync({ password });
    } catch (error) {
      if (error instanceof ApiError && error.status === 404) setExpired(true);
      else setServerError(applyServerErrors(error, form.setError, ["password"]));
    }
  });

  return (
    <AuthCard title="Choose a new password">
      <form noValidate onSubmit={submit} className="space-y-4">
        <TextField label="New password" type="password" hint={PASSWORD_RULE} registration={form.register("password")} error={form.formState.errors.password?.message} autoComplete="new-password" />
        <TextField label="Repeat the new password" type="password" registration={form.register("repeat")} error={form.formState.errors.repeat?.message} autoComplete="new-password" />
        <FormAlert message={serverError} />
        <button type="submit" disabled={reset.isPending} className={submitClass}>
          Save my new password
        </button>
      </form>
    </AuthCard>
  );
}
