import { useState } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { PASSWORD_RULE, passwordSchema } from "@shared/contract/accounts";
import { usePreferences, useUpdateMe } from "../api/accounts";
import { TextField } from "../components/auth/TextField";
import { FormAlert } from "../components/auth/AuthCard";
import { Button } from "../components/ui/Button";
import { Panel } from "../components/ui/Panel";
import { useCurrentUser } from "../hooks/useCurrentUser";
import { applyServerErrors } from "../lib/formErrors";
import { ROLE_LABELS } from "../lib/permissions";
import { zodResolver } from "../lib/zodResolver";

const currentPassword = z.string().min(1, "give your current password").max(200);
const nameFormSchema = z.object({ name: z.string().trim().min(1, "give a name").max(120, "use at most 120 characters"), currentPassword });
const passwordFormSchema = z
  .object({ password: passwordSchema, repeat: z.string(), currentPassword })
  .refine((v) => v.password === v.repeat, { message: "the two passwords differ", path: ["repeat"] });
type NameForm = z.infer<typeof nameFormSchema>;
type PasswordForm = z.infer<typeof passwordFormSchema>;

function NameSection() {
  const user = useCurrentUser();
  const update = useUpdateMe();
  const [message, setMessage] = useState<{ ok: boolean; text: string } | null>(null);
  const form = useForm<NameForm>({ resolver: zodResolver(nameFormSchema), defaultValues: { name: user.name, currentPassword: "" } });
  const submit = form.handleSubmit(async (body) => {
    setMessage(null);
    try {
      await update.mutateAsync(body);
      form.reset({ name: body.name, currentPassword: "" });
      setMessage({ ok: true, text: "Name saved. Any other browser signed in to your account has been signed out." });
    } catch (error) {
      const text = applyServerErrors(error, form.setError, ["name", "currentPassword"]);
      if (text) setMessage({ ok: false, text });
    }
  });
  return (
    <Panel title="Your name">
      <form noValidate onSubmit={submit} className="max-w-md space-y-3">
        <TextField label="Name" registration={form.register("name")} error={form.formState.errors.name?.message} autoComplete="name" />
        <TextField label="Current password" type="password" registration={form.register("currentPassword")} error={form.formState.errors.currentPassword?.message} autoComplete="current-password" />
        <Button type="submit" tone="primary" disabled={update.isPending}>
          Save my name
        </Button>
        {message?.ok ? <p role="status" className="text-sm text-notice-ok">{message.text}</p> : <FormAlert message={message?.text ?? null} />}
      </form>
    </Panel>
  );
}

function PasswordSection() {
  const update = useUpdateMe();
  const [message, setMessage] = useState<{ ok: boolean; text: string } | null>(null);
  const form = useForm<PasswordForm>({ resolver: zodResolver(passwordFormSchema), defaultValues: { password: "", repeat: "", currentPassword: "" } });
  const submit = form.handleSubmit(async ({ password, currentPassword }) => {
    setMessage(null);
    try {
      await update.mutateAsync({ password, currentPassword });
      form.reset();
      setMessage({ ok: true, text: "Password changed. Any other browser signed in to your account has been signed out; this one stays signed in." });
    } catch (error) {
      const text = applyServerErrors(error, form.setError, ["password", "currentPassword"]);
      if (text) setMessage({ ok: false, text });
    }
  });
  return (
    <Panel title="Password">
      <form noValidate onSubmit={submit} className="max-w-md space-y-3">
        <TextField label="Current password" type="password" registration={form.register("currentPassword")} error={form.formState.errors.currentPassword?.message} autoComplete="current-password" />
        <TextField label="New password" type="password" hint={PASSWORD_RULE} registration={form.register("password")} error={form.formState.errors.password?.message} autoComplete="new-password" />
        <TextField label="Repeat the new password" type="password" registration={form.register("repeat")} error={form.formState.errors.repeat?.message} autoComplete="new-password" />
        <Button type="submit" tone="primary" disabled={update.isPending}>
          Change my password
        </Button>
        {message?.ok ? <p role="status" className="text-sm text-notice-ok">{message.text}</p> : <FormAlert message={message?.text ?? null} />}
      </form>
    </Panel>
  );
}

function AlarmMailSection() {
  const user = useCurrentUser();
  const preferences = usePreferences();
  return (
    <Panel title="Alarm mail">
      <label className="flex items-center gap-2">
        <input type="checkbox" checked={user.alarmMail} disabled={preferences.isPending} onChange={(e) => preferences.mutate({ alarmMail: e.target.checked })} />
        Mail me when an alarm is raised on any layout
      </label>
      <p className="mt-2 text-xs text-ink-faint">Mail is an extra: watch the control room on running days, and follow your society's rules when an alarm is raised.</p>
      <FormAlert message={preferences.error ? preferences.error.message : null} />
    </Panel>
  );
}

/** One's own account: name, password and alarm mail. */
export default function AccountPage() {
  const user = useCurrentUser();
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Your account</h1>
      <p className="text-ink-soft">
        Signed in as <strong className="text-ink">{user.email}</strong>, {ROLE_LABELS[user.role].toLowerCase()}. Your admin changes roles and e-mail addresses.
      </p>
      <div className="grid gap-4 lg:grid-cols-2">
        <NameSection />
        <PasswordSection />
      </div>
      <AlarmMailSection />
    </div>
  );
}
