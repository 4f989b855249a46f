import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { PublishBody } from "@shared/contract/layoutEdit";
import type { SaveDraftBody } from "@shared/contract/rest";
import { api } from "./client";
import { layoutKeys } from "./layouts";

export const rulebookKeys = {
  all: (slug: string) => ["rulebooks", slug] as const,
  version: (slug: string, version: number) => [...rulebookKeys.all(slug), version] as const,
};

export function useRulebookVersion(slug: string | undefined, version: number | undefined) {
  return useQuery({
    queryKey: rulebookKeys.version(slug ?? "", version ?? 0),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug/rulebooks/:version", { slug: slug ?? "", version: version ?? 0, signal }),
    select: (body) => body.version,
    enabled: Boolean(slug) && typeof version === "number" && version > 0,
    // A stored version never changes except its status; keep it while the page is open.
    staleTime: 30_000,
  });
}

/** Saves a new draft version. A 400 lists the rulebook's errors as `[{path,message}]`. */
export function useSaveDraftMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: SaveDraftBody) => api("POST /api/layouts/:slug/rulebooks", { slug, body: input }),
    onSuccess: async () => {
      await queryClient.invalidateQueries({ queryKey: layoutKeys.detail(slug) });
    },
  });
}

export function usePublishMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    /** `withoutProof` and a `reason` for a version its last proof did not prove (audited). */
    mutationFn: ({ version, body = {} }: { version: number; body?: PublishBody }) => api("POST /api/layouts/:slug/rulebooks/:version/publish", { slug, version, body }),
    onSuccess: async () => {
      await Promise.all([
        queryClient.invalidateQueries({ queryKey: layoutKeys.all }),
        queryClient.invalidateQueries({ queryKey: rulebookKeys.all(slug) }),
      ]);
    },
  });
}
