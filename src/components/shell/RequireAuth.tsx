import type { ReactNode } from "react";
import { Navigate, useLocation } from "react-router-dom";
import { useMe } from "../../api/auth";
import { LoadError, Loading } from "../ui/Status";
import { paths } from "../../lib/paths";

/** Sends signed-out users to /login, remembering where they were going. */
export function RequireAuth({ children }: { children: ReactNode }) {
  const me = useMe();
  const location = useLocation();

  if (me.isPending) return <Loading what="your account" />;
  if (me.isError) return <LoadError error={me.error} what="your account" />;
  if (!me.data) {
    return <Navigate to={paths.login()} replace state={{ from: location.pathname + location.search }} />;
  }
  return <>{children}</>;
}
