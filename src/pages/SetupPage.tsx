import { useState } from "react";
import { useForm } from "react-hook-form";
import { Link, useSearchParams } from "react-router-dom";
import { PASSWORD_RULE, setupBodySchema, type SetupBody } from "@shared/contract/accounts";
import { useSetup, useSetupStatus } from "../api/accounts";
import { ApiError } from "../api/http";
import { AuthCard, FormAlert, submitClass } from "../components/auth/AuthCard";
import { TextField } from "../components/auth/TextField";
import { LoadError, Loading } from "../components/ui/Status";
import { applyServerErrors } from "../lib/formErrors";
import { zodResolver } from "../lib/zodResolver";
import { paths } from "../lib/paths";

const FIELDS = ["society", "name", "email", "password"] as const;

/** First start of a real install: name the society and make its first admin (once). */
export default function SetupPage() {
  const [params] = useSearchParams();
  const status = useSetupStatus();
  const setup = useSetup();
  const [serverError, setServerError] = useState<string | null>(null);
  const linkToken = params.get("token") ?? "";
  const form = useForm<SetupBody>({
    resolver: zodResolver(setupBodySchema),
    defaultValues: { token: linkToken, society: "", name: "", email: "", password: "" },
  });
  const errors = form.formState.errors;

  if (status.isPending) return <Loading what="the setup" />;
  if (status.isError) return <LoadError error={status.error} what="the setup" />;

  if (setup.isSuccess) {
    return (
      <AuthCard title="Your society is set up">
        <p role="status" className="text-notice-ok">
          You are its first admin. <Link to={paths.login()} className="font-semibold underline">Sign in</Link>, then invite your members from the Members page.
        </p>
      </AuthCard>
    );
  }
  if (!status.data.needed) {
    return (
      <AuthCard title="Set up Blocklight">
        <p className="text-ink-soft">
          This install is set up already. <Link to={paths.login()} className="underline">Sign in</Link>, or ask your society's admin for an invitation.
        </p>
      </AuthCard>
    );
  }

  const submit = form.handleSubmit(async (body) => {
    setServerError(null);
    try {
      await setup.mutateAsync(body);
    } catch (error) {
      if (error instanceof ApiError && error.status === 403) setServerError("This setup link is not valid. Use the link that npm start printed, or the token in DATA_DIR/setup-token.");
      else setServerError(applyServerErrors(error, form.setError, FIELDS));
    }
  });

  return (
    <AuthCard
      title="Set up your society"
      intro={<p>Name your society and make its first admin. This works once, with the link printed when Blocklight started; afterwards members join by invitation.</p>}
    >
      <form noValidate onSubmit={submit} className="space-y-4">
        {linkToken ? null : (
          <TextField label="Setup token" hint="From the setup link, or the file DATA_DIR/setup-token." registration={form.register("token")} error={errors.token?.message} autoComplete="off" />
        )}
        <TextField label="Society name" placeholder="Fernmoor Garden Railway Society" registration={form.register("society")} error={errors.society?.message} autoComplete="organization" />
        <TextField label="Your name" registration={form.register("name")} error={errors.name?.message} autoComplete="name" />
        <TextField label="Email" type="email" registration={form.register("email")} error={errors.email?.message} autoComplete="username" />
        <TextField label="Password" type="password" hint={PASSWORD_RULE} registration={form.register("password")} error={errors.password?.message} autoComplete="new-password" />
        <FormAlert message={serverError ?? (errors.token && linkToken ? errors.token.message ?? null : null)} />
        <button type="submit" disabled={setup.isPending} className={submitClass}>
          {setup.isPending ? "Setting up…" : "Create the society and my account"}
        </button>
      </form>
    </AuthCard>
  );
}
