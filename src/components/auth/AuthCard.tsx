import type { ReactNode } from "react";
import { useSociety } from "../../api/accounts";
import { SAFETY_TEXT } from "../ui/SafetyNote";

/** The frame of the pages people use before they are signed in: sign-in, setup, reset. */
export function AuthCard({ title, intro, children }: { title: string; intro?: ReactNode; children: ReactNode }) {
  const society = useSociety();
  return (
    <div className="flex min-h-screen flex-col items-center justify-center px-4 py-8">
      <main className="w-full max-w-md rounded-lg border border-panel-700 bg-panel-900 p-6">
        <p className="mb-1 flex items-center gap-2 text-sm font-bold text-ink-soft">
          <span aria-hidden="true" className="inline-block h-3 w-3 rounded-full bg-aspect-clear text-aspect-clear shadow-lamp" />
          Blocklight{society.data ? ` · ${society.data}` : ""}
        </p>
        <h1 className="mb-1 text-2xl font-bold">{title}</h1>
        {intro ? <div className="mb-6 text-sm text-ink-soft">{intro}</div> : null}
        {children}
      </main>
      <p className="mt-6 max-w-md text-center text-xs text-ink-faint">{SAFETY_TEXT}</p>
    </div>
  );
}

export function FormAlert({ message }: { message: string | null }) {
  return message ? (
    <p role="alert" className="rounded-md border border-aspect-danger/60 bg-aspect-danger/10 p-2 text-sm text-notice-error">
      {message}
    </p>
  ) : null;
}

export const submitClass = "w-full rounded-md border border-brass bg-brass px-4 py-2 font-bold text-panel-950 hover:bg-brass-soft disabled:opacity-60";
