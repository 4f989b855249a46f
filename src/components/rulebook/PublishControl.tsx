import { useState } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { PUBLISH_REASON_MAX } from "@shared/contract/layoutEdit";
import type { RulebookVersionSummary } from "@shared/contract/rest";
import { usePublishMutation } from "../../api/rulebooks";
import { zodResolver } from "../../lib/zodResolver";
import { FormField, INPUT } from "../records/FormField";
import { Button } from "../ui/Button";
import { ConfirmDialog } from "../ui/ConfirmDialog";
import { SafetyNote } from "../ui/SafetyNote";
import { LoadError } from "../ui/Status";

const reasonSchema = z.object({
  withoutProof: z.literal(true, { error: "tick this to publish a version that is not proved" }),
  reason: z.string().trim().min(1, "say why it goes live without a proof").max(PUBLISH_REASON_MAX),
});
type ReasonValues = z.infer<typeof reasonSchema>;

interface PublishControlProps {
  slug: string;
  layoutName: string;
  version: Pick<RulebookVersionSummary, "version" | "status" | "live" | "verdict">;
  onPublished?: () => void;
}

/**
 * Publish a version. A version its last proof proved goes live after a plain confirmation; any
 * other (never proved, refuted, unfinished) only with "publish without proof" ticked and a
 * reason, which the audit log keeps.
 */
export function PublishControl({ slug, layoutName, version, onPublished }: PublishControlProps) {
  const [open, setOpen] = useState(false);
  const publish = usePublishMutation(slug);
  const proved = version.verdict === "proved";
  const form = useForm<ReasonValues>({ resolver: zodResolver(reasonSchema), defaultValues: { withoutProof: false as unknown as true, reason: "" } });
  if (version.live) return null;

  const done = {
    onSuccess: () => {
      setOpen(false);
      onPublished?.();
    },
  };
  const confirm = proved
    ? () => publish.mutate({ version: version.version }, done)
    : form.handleSubmit((v) => publish.mutate({ version: version.version, body: { withoutProof: true, reason: v.reason } }, done));
  const unprovedWords = version.verdict === "refuted" ? "Its last proof refuted it." : version.verdict === "unfinished" ? "Its last proof did not finish." : "It has not been proved.";

  return (
    <>
      <Button tone="primary" onClick={() => setOpen(true)}>
        Publish v{version.version}
      </Button>
      {open ? (
        <ConfirmDialog
          title={`Publish version ${version.version}?`}
          confirmLabel={proved ? `Publish v${version.version}` : `Publish v${version.version} without proof`}
          busy={publish.isPending}
          onConfirm={() => void confirm()}
          onCancel={() => setOpen(false)}
        >
          <p>Version {version.version} will run live on {layoutName} at once and drive its signals.</p>
          {proved ? null : (
            <form className="space-y-2 rounded-md border border-aspect-danger/60 bg-aspect-danger/10 p-3" onSubmit={(e) => e.preventDefault()} aria-label="Publish without proof">
              <p className="font-semibold text-notice-error">{unprovedWords}</p>
              <label className="flex items-center gap-2 text-ink">
                <input type="checkbox" {...form.register("withoutProof")} />
                Publish without proof
              </label>
              {form.formState.errors.withoutProof ? <p className="text-xs text-notice-error">{form.formState.errors.withoutProof.message}</p> : null}
              <FormField label="Reason (kept in the audit log)" error={form.formState.errors.reason?.message}>
                <textarea className={INPUT} rows={2} maxLength={PUBLISH_REASON_MAX} {...form.register("reason")} />
              </FormField>
            </form>
          )}
          {publish.isError ? <LoadError error={publish.error} what="publishing (nothing changed)" /> : null}
          <SafetyNote />
        </ConfirmDialog>
      ) : null}
    </>
  );
}
