/**
 * Proof progress over the app's one socket.io server: a signed-in socket sends
 * `proof:watch {jobId}`, joins the room `proof:<jobId>` and gets the job as it stands;
 * `proof:progress` and `proof:done` follow in that room.
 */
import type { ProofJobDto, ProofProgressDto } from "@shared/contract/rest";
import type { AppDeps } from "../../deps";
import type { LiveIo } from "../live/socket";
import { proofJobs } from "./service";

const room = (jobId: string) => `proof:${jobId}`;

export function attachProofSocket(io: LiveIo, deps: AppDeps): { close(): void } {
  const jobs = proofJobs(deps);
  io.on("connection", (socket) => {
    socket.on("proof:watch", async (request, ack) => {
      const reply = typeof ack === "function" ? ack : () => {};
      if (socket.data.userId === null) {
        reply({ ok: false, error: { code: "unauthenticated", message: "sign in first" } });
        return;
      }
      const jobId = String(request?.jobId ?? "");
      const job = jobs.find(jobId);
      if (!job) {
        reply({ ok: false, error: { code: "not_found", message: `no proof job ${jobId}` } });
        return;
      }
      await socket.join(room(jobId));
      // Read again after joining: a job that ended in between is seen as ended, not missed.
      reply({ ok: true, data: jobs.find(jobId) ?? job });
    });
    socket.on("proof:unwatch", (request) => {
      void socket.leave(room(String(request?.jobId ?? "")));
    });
  });

  const onProgress = (update: { jobId: string; progress: ProofProgressDto }) =>
    io.to(room(update.jobId)).emit("proof:progress", update);
  const onDone = (job: ProofJobDto) => io.to(room(job.jobId)).emit("proof:done", job);
  jobs.on("progress", onProgress);
  jobs.on("done", onDone);
  return {
    close: () => {
      jobs.off("progress", onProgress);
      jobs.off("done", onDone);
    },
  };
}
