import { ApiError } from "../../api/http";

export function Loading({ what }: { what: string }) {
  return (
    <p role="status" className="p-4 text-ink-faint">
      Loading {what}…
    </p>
  );
}

export function LoadError({ error, what }: { error: unknown; what: string }) {
  const message = error instanceof ApiError || error instanceof Error ? error.message : String(error);
  return (
    <p role="alert" className="rounded-md border border-aspect-danger/60 bg-aspect-danger/10 p-3 text-notice-error">
      Could not load {what}: {message}
    </p>
  );
}
