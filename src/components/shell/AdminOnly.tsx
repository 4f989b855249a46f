import type { ReactNode } from "react";
import { allows, type Action } from "@shared/contract/permissions";
import { useCurrentUser } from "../../hooks/useCurrentUser";
import { ROLE_LABELS } from "../../lib/permissions";

/**
 * Admin pages render nothing of themselves for anyone else (not even their queries run):
 * the server refuses them anyway, and a form that cannot be used only confuses.
 */
export function AdminOnly({ action, children }: { action: Action; children: ReactNode }) {
  const user = useCurrentUser();
  if (allows(user.role, action)) return <>{children}</>;
  return (
    <section role="alert" className="mx-auto max-w-xl rounded-lg border border-panel-700 bg-panel-900 p-6">
      <h1 className="text-xl font-bold">This page is for admins</h1>
      <p className="mt-2 text-ink-soft">
        You are signed in as {ROLE_LABELS[user.role].toLowerCase()}. Ask your society's admin if you need something changed here.
      </p>
    </section>
  );
}
