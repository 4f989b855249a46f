// Loaded with NODE_OPTIONS="--import …" by the sustained bench (--cpu-prof itself is not
// allowed in NODE_OPTIONS): profiles the server process only, written when it exits.
import fs from "node:fs";
import inspector from "node:inspector";
import path from "node:path";

const dir = process.env.BENCH_CPU_PROFILE_DIR;
if (dir && process.argv.some((arg) => arg.endsWith("server/index.ts"))) {
  const session = new inspector.Session();
  session.connect();
  session.post("Profiler.enable");
  session.post("Profiler.setSamplingInterval", { interval: 1000 });
  session.post("Profiler.start");
  // The same-thread session answers synchronously, so this works inside the exit hook.
  process.once("exit", () => {
    session.post("Profiler.stop", (err, result) => {
      if (!err) fs.writeFileSync(path.join(dir, `server.${process.pid}.cpuprofile`), JSON.stringify(result.profile));
    });
  });
}
