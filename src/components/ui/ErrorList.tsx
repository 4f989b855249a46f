import type { FieldError } from "../../api/http";

interface ErrorListProps {
  errors: FieldError[];
  /** Heading above the list, e.g. "The layout file has 3 problems". */
  title?: string;
  id?: string;
}

/** Every error with its JSON path, so an engineer can find each one in the file. */
export function ErrorList({ errors, title, id }: ErrorListProps) {
  if (errors.length === 0) return null;
  return (
    <div id={id} role="alert" className="rounded-md border border-aspect-danger/60 bg-aspect-danger/10 p-3 text-sm">
      <p className="mb-2 font-semibold text-notice-error">
        {title ?? `${errors.length} ${errors.length === 1 ? "problem" : "problems"}`}
      </p>
      <ul className="space-y-1">
        {errors.map((error, index) => (
          <li key={`${error.path}:${index}`} className="flex flex-wrap gap-x-2">
            <code className="text-brass">{error.path || "(file)"}</code>
            <span className="text-ink">{error.message}</span>
          </li>
        ))}
      </ul>
    </div>
  );
}
