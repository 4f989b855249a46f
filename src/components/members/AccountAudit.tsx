import { useAccountAudit } from "../../api/accounts";
import { formatDateTime } from "../../lib/format";
import { LoadError, Loading } from "../ui/Status";

const ACTION_WORDS: Record<string, string> = {
  setup: "set up the society",
  "society.rename": "renamed the society",
  "invitation.send": "invited",
  "invitation.resend": "sent the invitation again to",
  "invitation.revoke": "revoked the invitation to",
  "invitation.accept": "accepted the invitation for",
  "member.update": "changed",
  "member.remove": "removed",
  "account.name": "changed their name",
  "account.password": "changed their password",
  "account.password-reset": "reset their password by e-mail",
};

function change(before: unknown, after: unknown): string {
  if (!before || !after || typeof before !== "object" || typeof after !== "object") return "";
  const b = before as Record<string, unknown>;
  const a = after as Record<string, unknown>;
  const parts = Object.keys(a)
    .filter((k) => k in b && b[k] !== a[k])
    .map((k) => `${k === "alarmMail" ? "alarm mail" : k} ${String(b[k])} → ${String(a[k])}`);
  return parts.length ? `: ${parts.join(", ")}` : "";
}

/** Who changed which account, newest first (the members page's own audit). */
export function AccountAudit() {
  const audit = useAccountAudit();
  if (audit.isPending) return <Loading what="account changes" />;
  if (audit.isError) return <LoadError error={audit.error} what="account changes" />;
  if (audit.data.length === 0) return <p className="text-sm text-ink-faint">No account changes yet.</p>;
  return (
    <ul className="space-y-1 text-sm">
      {audit.data.map((e) => (
        <li key={e.id}>
          <span className="text-ink-faint">{formatDateTime(e.at)}</span> · <span className="font-semibold">{e.user ?? "someone since removed"}</span> {ACTION_WORDS[e.action] ?? e.action}{" "}
          {e.action.startsWith("account.") || e.action === "setup" ? "" : e.target}
          {change(e.before, e.after)}
        </li>
      ))}
    </ul>
  );
}
