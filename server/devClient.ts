/**
 * `npm run dev`: the Vite dev server as a child of the launcher. Started through Vite's API
 * rather than its command line so that, like every other child, it stops when the launcher
 * goes (server/parentWatch.ts) instead of outliving it with its port bound.
 */
import { createServer } from "vite";
import { stopWhenLauncherGoes } from "./parentWatch";

const port = Number(process.env.VITE_PORT ?? 5173);
const server = await createServer({ server: { host: "127.0.0.1", port, strictPort: true } });
await server.listen();
server.printUrls();

let stopping = false;
const stop = async () => {
  if (stopping) return;
  stopping = true;
  await server.close();
  process.exit(0);
};
process.on("SIGINT", () => void stop());
process.on("SIGTERM", () => void stop());
stopWhenLauncherGoes(stop);
