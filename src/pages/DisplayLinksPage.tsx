import { useId, useState } from "react";
import { Link, useParams } from "react-router-dom";
import { useCreateDisplayLink, useDisplayLinks, useRevokeDisplayLink } from "../api/displayLinks";
import { Button } from "../components/ui/Button";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { formatDateTime } from "../lib/format";
import { paths } from "../lib/paths";

/** Admins make and revoke visitor display links for one layout. */
export default function DisplayLinksPage() {
  const { slug = "" } = useParams();
  const links = useDisplayLinks(slug);
  const create = useCreateDisplayLink(slug);
  const revoke = useRevokeDisplayLink(slug);
  const [label, setLabel] = useState("");
  const labelId = useId();
  const made = create.data ? new URL(create.data.url, window.location.origin).toString() : null;

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <h1 className="text-2xl font-bold">Display links</h1>
        <Link to={paths.live({ slug })} className="text-sm underline">
          Back to the live page
        </Link>
      </div>
      <p className="text-ink-soft">A display link opens a full-screen, read-only mimic for visitors, with no sign-in. Anyone holding the link can watch; revoke it after the open day.</p>
      <Panel title="Make a display link">
        <form
          className="flex flex-wrap items-end gap-2"
          onSubmit={(e) => {
            e.preventDefault();
            create.mutate(label.trim());
          }}
        >
          <div>
            <label htmlFor={labelId} className="block text-sm text-ink-soft">
              Label (where it will be shown)
            </label>
            <input id={labelId} value={label} onChange={(e) => setLabel(e.target.value)} maxLength={120} className="rounded-md border border-panel-600 bg-panel-950 px-2 py-1" />
          </div>
          <Button type="submit" tone="primary" disabled={create.isPending}>
            Make link
          </Button>
        </form>
        {made ? (
          <p className="mt-3 text-sm" role="status">
            New link (shown once — copy it now): <a href={made} className="break-all font-semibold text-brass underline" data-display-link>{made}</a>
          </p>
        ) : null}
        {create.isError ? <p role="alert" className="mt-2 text-notice-error">{create.error.message}</p> : null}
      </Panel>
      <Panel title="Links">
        {links.isPending ? <Loading what="display links" /> : null}
        {links.isError ? <LoadError error={links.error} what="display links" /> : null}
        <ul className="space-y-2">
          {(links.data ?? []).map((link) => (
            <li key={link.id} className="flex flex-wrap items-center justify-between gap-2 rounded-md border border-panel-700 px-3 py-2">
              <span>
                <span className="font-semibold">{link.label ?? `Link ${link.id}`}</span>{" "}
                <span className="text-sm text-ink-faint">made {formatDateTime(link.createdAt)}</span>
                {link.revokedAt ? <span className="ml-2 text-sm text-notice-error">revoked {formatDateTime(link.revokedAt)}</span> : null}
              </span>
              {!link.revokedAt ? (
                <Button tone="danger" onClick={() => revoke.mutate(link.token ?? String(link.id))} disabled={revoke.isPending}>
                  Revoke
                </Button>
              ) : null}
            </li>
          ))}
        </ul>
      </Panel>
    </div>
  );
}
