/**
 * Proof jobs of stored rulebook versions: start, follow, cancel. A job is followed over the
 * app's one socket (`proof:watch`, pushes written into the query cache) and, in case the
 * socket is down, by polling `GET /api/proofs/:jobId` while it runs.
 */
import { useEffect } from "react";
import { useMutation, useQuery, useQueryClient, type QueryClient } from "@tanstack/react-query";
import type { Ack } from "@shared/contract/live";
import type { ProofJobDto } from "@shared/contract/rest";
import { api } from "./client";
import { layoutKeys } from "./layouts";
import { rulebookKeys } from "./rulebooks";
import { acquireLiveSocket, releaseLiveSocket } from "./socket";

/** Polling while a job runs: slow, because socket pushes normally arrive first. */
export const PROOF_POLL_INTERVAL_MS = 1_500;

export const proofKeys = {
  all: ["proofs"] as const,
  job: (jobId: string) => [...proofKeys.all, "job", jobId] as const,
  active: (slug: string) => [...proofKeys.all, "active", slug] as const,
};

export function isJobRunning(job: ProofJobDto | undefined): boolean {
  return job?.state === "queued" || job?.state === "running";
}

/** Jobs of the layout still running, so a reopened page picks up a proof in progress. */
export function useActiveProofJobs(slug: string) {
  return useQuery({
    queryKey: proofKeys.active(slug),
    queryFn: ({ signal }) => api("GET /api/layouts/:slug/proofs", { slug, signal }),
    select: (body) => body.jobs,
    enabled: Boolean(slug),
  });
}

/** The version's status and stored proof change when a job ends: read them again. */
async function refreshAfterJob(queryClient: QueryClient, job: Pick<ProofJobDto, "slug" | "version">): Promise<void> {
  await Promise.all([
    queryClient.invalidateQueries({ queryKey: rulebookKeys.version(job.slug, job.version) }),
    queryClient.invalidateQueries({ queryKey: layoutKeys.detail(job.slug) }),
    queryClient.invalidateQueries({ queryKey: proofKeys.active(job.slug) }),
  ]);
}

/** One job, kept current by socket pushes, with polling as the fallback. */
export function useProofJob(jobId: string | null) {
  const queryClient = useQueryClient();
  const query = useQuery({
    queryKey: proofKeys.job(jobId ?? ""),
    queryFn: ({ signal }) => api("GET /api/proofs/:jobId", { jobId: jobId ?? "", signal }).then((body) => body.job),
    enabled: Boolean(jobId),
    refetchInterval: (q) => (isJobRunning(q.state.data) ? PROOF_POLL_INTERVAL_MS : false),
  });

  useEffect(() => {
    if (!jobId) return;
    const socket = acquireLiveSocket();
    const key = proofKeys.job(jobId);
    const watch = () =>
      socket.emit("proof:watch", { jobId }, (reply: Ack<ProofJobDto>) => {
        if (reply.ok) queryClient.setQueryData(key, reply.data);
      });
    const onProgress = (update: { jobId: string; progress: ProofJobDto["progress"] }) => {
      if (update.jobId !== jobId) return;
      queryClient.setQueryData<ProofJobDto>(key, (job) => (job && isJobRunning(job) ? { ...job, state: "running", progress: update.progress } : job));
    };
    const onDone = (job: ProofJobDto) => {
      if (job.jobId === jobId) queryClient.setQueryData(key, job);
    };
    socket.on("connect", watch);
    socket.on("proof:progress", onProgress);
    socket.on("proof:done", onDone);
    if (socket.connected) watch();
    return () => {
      socket.off("connect", watch);
      socket.off("proof:progress", onProgress);
      socket.off("proof:done", onDone);
      if (socket.connected) socket.emit("proof:unwatch", { jobId });
      releaseLiveSocket();
    };
  }, [jobId, queryClient]);

  // However the end arrives (push or poll), refresh the version it proved once.
  const ended = query.data && !isJobRunning(query.data) ? query.data : null;
  const endedKey = ended ? `${ended.jobId}:${ended.state}` : null;
  const endedSlug = ended?.slug;
  const endedVersion = ended?.version;
  useEffect(() => {
    if (endedKey && endedSlug && endedVersion) void refreshAfterJob(queryClient, { slug: endedSlug, version: endedVersion });
  }, [endedKey, endedSlug, endedVersion, queryClient]);

  return query;
}

export function useStartProofMutation(slug: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (version: number) => api("POST /api/layouts/:slug/rulebooks/:version/proofs", { slug, version }),
    onSuccess: async () => {
      await queryClient.invalidateQueries({ queryKey: proofKeys.active(slug) });
    },
  });
}

export function useCancelProofMutation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (jobId: string) => api("DELETE /api/proofs/:jobId", { jobId }).then((body) => body.job),
    onSuccess: (job) => {
      queryClient.setQueryData(proofKeys.job(job.jobId), job);
    },
  });
}
