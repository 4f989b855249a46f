/**
 * Junction templates: `GET /api/templates` (each with its options as JSON Schema and an
 * example) and `POST /api/templates/:id {options}` → a generated rulebook, not saved.
 */
import { useMutation, useQuery } from "@tanstack/react-query";
import { api } from "./client";

export const templateKeys = { all: ["templates"] as const };

export function useTemplates() {
  return useQuery({
    queryKey: templateKeys.all,
    queryFn: ({ signal }) => api("GET /api/templates", { signal }),
    select: (body) => body.templates,
    staleTime: 5 * 60_000,
  });
}

/** Generates a rulebook from options; a 400 lists bad options with their paths (`$.options.routes[0].signal`). */
export function useGenerateMutation() {
  return useMutation({
    mutationFn: (input: { template: string; options: unknown }) =>
      api("POST /api/templates/:id", { id: input.template, body: { options: input.options } }).then((body) => body.rulebook),
  });
}
