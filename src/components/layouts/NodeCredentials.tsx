import { useState } from "react";
import { useForm } from "react-hook-form";
import type { CreateNodeBody, LayoutDetail, NodeDto } from "@shared/contract/rest";
import { ApiError, toFieldErrors } from "../../api/http";
import { useRegisterNodeMutation } from "../../api/layouts";
import { Button } from "../ui/Button";
import { ConfirmDialog } from "../ui/ConfirmDialog";
import { ErrorList } from "../ui/ErrorList";

/**
 * Board credentials for engineers, maintainers and admins: register a board or issue a new
 * secret for one. The secret is shown once, here, and must be set on the board; the old one
 * stops working at the board's next connection.
 */
export function NodeCredentials({ layout }: { layout: LayoutDetail }) {
  const register = useRegisterNodeMutation(layout.slug);
  const [reissue, setReissue] = useState<NodeDto | null>(null);
  const [issued, setIssued] = useState<{ id: string; secret: string } | null>(null);
  const form = useForm<{ id: string; name: string; detectors: string[]; signals: string[] }>({
    defaultValues: { id: "", name: "", detectors: [], signals: [] },
  });

  const send = (node: CreateNodeBody) =>
    register.mutate(node, {
      onSuccess: (reply) => {
        setIssued(reply);
        setReissue(null);
        form.reset();
      },
    });
  const errors = register.error instanceof ApiError ? toFieldErrors(register.error.details) : [];

  return (
    <div className="space-y-4">
      {issued ? (
        <div role="status" className="rounded-md border border-brass p-3 text-sm">
          <p className="font-bold">New secret for board {issued.id} — shown only now:</p>
          <code className="mt-1 block break-all rounded bg-panel-950 p-2 text-base" data-node-secret={issued.id}>
            {issued.secret}
          </code>
          <p className="mt-1 text-ink-soft">Set it as the board&apos;s MQTT password (user name {issued.id}). Blocklight keeps only its hash.</p>
          <Button className="mt-2" onClick={() => setIssued(null)}>
            Done
          </Button>
        </div>
      ) : null}
      <ul className="flex flex-wrap gap-2">
        {layout.nodes.map((node) => (
          <li key={node.id}>
            <Button onClick={() => setReissue(node)}>New secret for {node.id}</Button>
          </li>
        ))}
      </ul>
      <form
        className="grid gap-2 text-sm md:grid-cols-2"
        onSubmit={form.handleSubmit((values) => send({ id: values.id.trim(), name: values.name.trim(), detectors: values.detectors, signals: values.signals }))}
      >
        <label className="grid gap-1">
          <span>Board id</span>
          <input className="rounded border border-panel-600 bg-panel-950 px-2 py-1" {...form.register("id", { required: true, pattern: /^[A-Za-z0-9_-]{1,32}$/ })} />
        </label>
        <label className="grid gap-1">
          <span>Board name</span>
          <input className="rounded border border-panel-600 bg-panel-950 px-2 py-1" {...form.register("name", { required: true })} />
        </label>
        <fieldset className="grid gap-1">
          <legend>Detectors it serves</legend>
          <div className="flex flex-wrap gap-3">
            {layout.detectors.map((d) => (
              <label key={d.id} className="flex items-center gap-1">
                <input type="checkbox" value={d.id} {...form.register("detectors")} /> {d.id}
              </label>
            ))}
          </div>
        </fieldset>
        <fieldset className="grid gap-1">
          <legend>Signals it drives</legend>
          <div className="flex flex-wrap gap-3">
            {layout.signals.map((s) => (
              <label key={s.id} className="flex items-center gap-1">
                <input type="checkbox" value={s.id} {...form.register("signals")} /> {s.id}
              </label>
            ))}
          </div>
        </fieldset>
        <div className="md:col-span-2">
          <Button type="submit" tone="primary" disabled={register.isPending}>
            Register board
          </Button>
        </div>
      </form>
      {errors.length > 0 ? <ErrorList title="The board was not registered" errors={errors} /> : null}
      {register.error && errors.length === 0 ? <p className="text-notice-error">{register.error.message}</p> : null}
      {reissue ? (
        <ConfirmDialog
          title={`New secret for ${reissue.id}?`}
          confirmLabel="Issue a new secret"
          busy={register.isPending}
          onCancel={() => setReissue(null)}
          onConfirm={() => send({ id: reissue.id, name: reissue.name, detectors: reissue.detectors, signals: reissue.signals })}
        >
          <p>The board&apos;s present secret stops working the next time it connects. Set the new one on the board straight away.</p>
        </ConfirmDialog>
      ) : null}
    </div>
  );
}
