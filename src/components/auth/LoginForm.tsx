import { useForm } from "react-hook-form";
import type { LoginBody } from "@shared/contract/rest";

interface LoginFormProps {
  onSubmit: (values: LoginBody) => Promise<unknown> | void;
  /** The server's answer to the last attempt, e.g. "Wrong email or password". */
  serverError?: string | null;
}

const fieldClass =
  "w-full rounded-md border border-panel-600 bg-panel-950 px-3 py-2 text-base text-ink placeholder:text-ink-faint focus:border-brass";

/** E-mail and password with visible labels (CONTRACT.md §7: "Email", "Password"). */
export function LoginForm({ onSubmit, serverError }: LoginFormProps) {
  const {
    register,
    handleSubmit,
    formState: { errors, isSubmitting },
  } = useForm<LoginBody>({ defaultValues: { email: "", password: "" } });

  return (
    <form noValidate onSubmit={handleSubmit((values) => onSubmit({ email: values.email.trim(), password: values.password }))} className="space-y-4">
      <div className="space-y-1">
        <label htmlFor="login-email" className="block text-sm font-semibold text-ink-soft">
          Email
        </label>
        <input
          id="login-email"
          type="email"
          autoComplete="username"
          aria-invalid={errors.email ? true : undefined}
          aria-describedby={errors.email ? "login-email-error" : undefined}
          className={fieldClass}
          {...register("email", {
            required: "Enter your e-mail address",
            pattern: { value: /^[^\s@]+@[^\s@]+$/, message: "That does not look like an e-mail address" },
          })}
        />
        {errors.email ? (
          <p id="login-email-error" className="text-sm text-notice-error">
            {errors.email.message}
          </p>
        ) : null}
      </div>
      <div className="space-y-1">
        <label htmlFor="login-password" className="block text-sm font-semibold text-ink-soft">
          Password
        </label>
        <input
          id="login-password"
          type="password"
          autoComplete="current-password"
          aria-invalid={errors.password ? true : undefined}
          aria-describedby={errors.password ? "login-password-error" : undefined}
          className={fieldClass}
          {...register("password", { required: "Enter your password" })}
        />
        {errors.password ? (
          <p id="login-password-error" className="text-sm text-notice-error">
            {errors.password.message}
          </p>
        ) : null}
      </div>
      {serverError ? (
        <p role="alert" className="rounded-md border border-aspect-danger/60 bg-aspect-danger/10 p-2 text-sm text-notice-error">
          {serverError}
        </p>
      ) : null}
      <button
        type="submit"
        disabled={isSubmitting}
        className="w-full rounded-md border border-brass bg-brass px-4 py-2 font-bold text-panel-950 hover:bg-brass-soft"
      >
        {isSubmitting ? "Signing in…" : "Sign in"}
      </button>
    </form>
  );
}
