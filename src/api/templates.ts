/**
 * Junction templates: `GET /api/templates` (each with its options as JSON Schema and an
 * example) and `POST /api/templates/:id {options}` → a generated rulebook, not saved.
 */
import { useMutation, useQuery } from "@tanstack/react-query";
import type { Rulebook } from "../../shared/rulebook/schema";
import { http } from "./http";

export interface TemplateDto {
  id: string;
  name?: string;
  description?: string;
  /** JSON Schema of the options. */
  options?: unknown;
  example?: unknown;
}

export const templateKeys = { all: ["templates"] as const };

export function useTemplates() {
  return useQuery({
    queryKey: templateKeys.all,
    queryFn: ({ signal }) => http.get<{ templates: TemplateDto[] }>("/api/templates", signal),
    select: (body) => body.templates,
    staleTime: 5 * 60_000,
  });
}

/** Generates a rulebook from options; a 400 lists bad options with their paths. */
export function useGenerateMutation() {
  return useMutation({
    mutationFn: (input: { template: string; options: unknown }) =>
      http.post<{ rulebook: Rulebook }>(`/api/templates/${encodeURIComponent(input.template)}`, { options: input.options }).then((body) => body.rulebook),
  });
}
