import { useOutbox } from "../api/admin";
import { Panel } from "../components/ui/Panel";
import { LoadError, Loading } from "../components/ui/Status";
import { formatDateTime } from "../lib/format";

/** Admins read the mail the product sent (or, with no SMTP_URL, caught in its own fake mail server). */
export default function OutboxPage() {
  const outbox = useOutbox();
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Mail outbox</h1>
      <p className="text-ink-soft">Alarm mails, invitations and password-reset links. With no SMTP server configured, mail stays here and is not delivered.</p>
      {outbox.isPending ? <Loading what="the outbox" /> : null}
      {outbox.isError ? <LoadError error={outbox.error} what="the outbox" /> : null}
      {outbox.data && outbox.data.length === 0 ? <p className="text-ink-faint">No mail yet.</p> : null}
      <ul className="space-y-3" aria-label="Mail">
        {(outbox.data ?? []).map((m) => (
          <li key={m.id} data-mail={m.id}>
            <Panel title={m.subject} actions={<span className="text-sm text-ink-faint">{formatDateTime(m.createdAt)}</span>}>
              <p className="text-sm text-ink-soft">
                To <span className="font-semibold text-ink">{m.to}</span>
                {m.error ? <span className="ml-2 text-notice-error">not sent: {m.error}</span> : m.sentAt ? ` · delivered ${formatDateTime(m.sentAt)}` : ""}
              </p>
              <pre className="mt-2 whitespace-pre-wrap break-words text-sm text-ink">{m.body}</pre>
            </Panel>
          </li>
        ))}
      </ul>
    </div>
  );
}
