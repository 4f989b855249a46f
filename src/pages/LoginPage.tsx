import { Link, Navigate, useLocation, useNavigate } from "react-router-dom";
import { useSetupStatus, useSociety } from "../api/accounts";
import type { LoginBody } from "@shared/contract/rest";
import { useLogin, useMe } from "../api/auth";
import { ApiError } from "../api/http";
import { LoginForm } from "../components/auth/LoginForm";
import { SAFETY_TEXT } from "../components/ui/SafetyNote";
import { paths } from "../lib/paths";

function destination(state: unknown): string {
  const from = (state as { from?: unknown } | null)?.from;
  // Only ever return to a path inside this app.
  return typeof from === "string" && from.startsWith("/") && !from.startsWith("//") ? from : "/";
}

export default function LoginPage() {
  const me = useMe();
  const login = useLogin();
  const setup = useSetupStatus();
  const society = useSociety();
  const navigate = useNavigate();
  const location = useLocation();

  if (me.data) return <Navigate to={destination(location.state)} replace />;

  const submit = async (values: LoginBody) => {
    try {
      await login.mutateAsync(values);
      navigate(destination(location.state), { replace: true });
    } catch {
      // The error is shown from the mutation state below.
    }
  };

  const serverError =
    login.error instanceof ApiError
      ? login.error.status === 401
        ? "Wrong email or password."
        : login.error.message
      : login.error
        ? "Sign-in failed. Try again."
        : null;

  return (
    <div className="flex min-h-screen flex-col items-center justify-center px-4">
      <main className="w-full max-w-sm rounded-lg border border-panel-700 bg-panel-900 p-6">
        <h1 className="mb-1 flex items-center gap-2 text-2xl font-bold">
          <span aria-hidden="true" className="inline-block h-3 w-3 rounded-full bg-aspect-clear text-aspect-clear shadow-lamp" />
          Blocklight
        </h1>
        <p className="mb-6 text-sm text-ink-soft">{society.data ? `Sign in to ${society.data}'s junctions.` : "Sign in to your society's junctions."}</p>
        {setup.data?.needed ? (
          <p role="status" className="mb-4 rounded-md border border-brass/60 bg-brass/10 p-2 text-sm text-ink">
            No account exists yet. Open the setup link that <code>npm start</code> printed (the token is also in <code>DATA_DIR/setup-token</code>) to name your society and make its
            first admin.
          </p>
        ) : null}
        <LoginForm onSubmit={submit} serverError={serverError} />
        <p className="mt-4 text-center text-sm">
          <Link to={paths.forgotPassword()} className="text-ink-soft underline hover:text-ink">
            Forgot password?
          </Link>
        </p>
      </main>
      <p className="mt-6 max-w-md text-center text-xs text-ink-faint">{SAFETY_TEXT}</p>
    </div>
  );
}
