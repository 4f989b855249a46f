import { useState } from "react";
import { useForm } from "react-hook-form";
import { useNavigate } from "react-router-dom";
import { z } from "zod";
import { layoutFileSchema, slugSchema } from "@shared/layout/schema";
import { ApiError } from "../../api/http";
import { useCreateLayoutMutation } from "../../api/layouts";
import { COMMON_SCALES, CUSTOM_SCALE } from "../../lib/scales";
import { zodResolver } from "../../lib/zodResolver";
import { Button } from "../ui/Button";
import { FormField, INPUT } from "../records/FormField";
import { paths } from "../../lib/paths";

const scaleShape = layoutFileSchema.shape.scale.shape;
const newLayoutSchema = z
  .object({
    name: layoutFileSchema.shape.name,
    slug: slugSchema,
    scale: z.string(),
    customName: z.string().max(40),
    customRatio: z.number({ error: "a ratio such as 22.5 (for 1:22.5)" }).or(z.nan()),
  })
  .superRefine((v, ctx) => {
    if (v.scale !== CUSTOM_SCALE) return;
    if (!scaleShape.name.safeParse(v.customName.trim()).success) ctx.addIssue({ code: "custom", path: ["customName"], message: "name the scale (up to 40 characters)" });
    if (!(v.customRatio >= 1 && v.customRatio <= 1000)) ctx.addIssue({ code: "custom", path: ["customRatio"], message: "a ratio between 1 and 1000, e.g. 22.5 for 1:22.5" });
  });
type NewLayoutValues = z.infer<typeof newLayoutSchema>;

/** A slug from a name: "Kestrel Bank Junction" → "kestrel-bank-junction". */
export function slugFrom(name: string): string {
  return name
    .toLowerCase()
    .normalize("NFKD")
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 63);
}

/** "New layout": name, slug and scale; the records and drawing follow on the edit page. */
export function NewLayoutForm() {
  const navigate = useNavigate();
  const create = useCreateLayoutMutation();
  const [slugTouched, setSlugTouched] = useState(false);
  const form = useForm<NewLayoutValues>({
    resolver: zodResolver(newLayoutSchema),
    defaultValues: { name: "", slug: "", scale: "G", customName: "", customRatio: Number.NaN },
  });
  const { register, handleSubmit, formState, watch, setValue, setError } = form;
  const scale = watch("scale");

  const onSubmit = handleSubmit(async (v) => {
    const chosen = COMMON_SCALES.find((s) => s.name === v.scale);
    const body = { name: v.name, slug: v.slug, scale: chosen ? { name: chosen.name, ratio: chosen.ratio } : { name: v.customName.trim(), ratio: v.customRatio } };
    try {
      const res = await create.mutateAsync(body);
      navigate(paths.layoutEdit({ slug: res.slug }));
    } catch (error) {
      if (error instanceof ApiError && error.status === 409) setError("slug", { message: "a layout with this slug exists already" });
      else if (error instanceof ApiError && error.fieldErrors.length > 0) {
        for (const fe of error.fieldErrors) {
          const field = fe.path.replace(/^\$\./, "").split(/[.[]/)[0];
          setError(field === "scale" ? "customRatio" : (field as "name" | "slug"), { message: fe.message });
        }
      } else setError("root", { message: error instanceof Error ? error.message : String(error) });
    }
  });

  return (
    <form onSubmit={onSubmit} aria-label="New layout" className="grid gap-3 sm:grid-cols-2">
      <FormField label="Name" error={formState.errors.name?.message}>
        <input
          className={INPUT}
          {...register("name", {
            onChange: (e: { target: { value: string } }) => {
              if (!slugTouched) setValue("slug", slugFrom(e.target.value));
            },
          })}
        />
      </FormField>
      <FormField label="Slug" error={formState.errors.slug?.message} help="in addresses and MQTT topics; cannot change later">
        <input className={INPUT} {...register("slug", { onChange: () => setSlugTouched(true) })} />
      </FormField>
      <FormField label="Scale" error={formState.errors.scale?.message}>
        <select className={INPUT} {...register("scale")}>
          {COMMON_SCALES.map((s) => (
            <option key={s.name} value={s.name}>
              {s.name} — 1:{s.ratio} ({s.source})
            </option>
          ))}
          <option value={CUSTOM_SCALE}>Another scale (give its ratio)</option>
        </select>
      </FormField>
      {scale === CUSTOM_SCALE ? (
        <div className="grid grid-cols-2 gap-3">
          <FormField label="Scale name" error={formState.errors.customName?.message}>
            <input className={INPUT} {...register("customName")} />
          </FormField>
          <FormField label="Ratio (1:…)" error={formState.errors.customRatio?.message}>
            <input className={INPUT} type="number" step="any" {...register("customRatio", { valueAsNumber: true })} />
          </FormField>
        </div>
      ) : null}
      <div className="flex items-center gap-3 sm:col-span-2">
        <Button type="submit" tone="primary" disabled={create.isPending}>
          {create.isPending ? "Creating…" : "Create layout"}
        </Button>
        {formState.errors.root ? (
          <p role="alert" className="text-sm text-notice-error">
            {formState.errors.root.message}
          </p>
        ) : null}
      </div>
    </form>
  );
}
