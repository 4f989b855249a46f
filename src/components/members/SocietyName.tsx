import { useForm } from "react-hook-form";
import { societyBodySchema, type SocietyBody } from "@shared/contract/accounts";
import { useRenameSociety } from "../../api/accounts";
import { zodResolver } from "../../lib/zodResolver";
import { Button } from "../ui/Button";

/** The society's name as the header, mail and the visitor display show it. */
export function SocietyName({ name }: { name: string | null }) {
  const rename = useRenameSociety();
  const form = useForm<SocietyBody>({ resolver: zodResolver(societyBodySchema), values: { name: name ?? "" } });
  return (
    <form noValidate className="flex flex-wrap items-end gap-3" onSubmit={form.handleSubmit((body) => rename.mutate(body))}>
      <div className="min-w-72 flex-1">
        <label htmlFor="society-name" className="block text-sm text-ink-soft">
          Society name
        </label>
        <input id="society-name" {...form.register("name")} className="w-full rounded-md border border-panel-600 bg-panel-950 px-2 py-1" />
      </div>
      <Button type="submit" disabled={rename.isPending}>
        Rename
      </Button>
      {form.formState.errors.name ? <p className="w-full text-sm text-notice-error">{form.formState.errors.name.message}</p> : null}
      {rename.isSuccess ? <p role="status" className="w-full text-sm text-notice-ok">Saved.</p> : null}
      {rename.isError ? <p role="alert" className="w-full text-sm text-notice-error">{rename.error.message}</p> : null}
    </form>
  );
}
