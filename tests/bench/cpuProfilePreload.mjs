// Loaded with NODE_OPTIONS="--import …" by the sustained bench (--cpu-prof itself is not
// allowed in NODE_OPTIONS): profiles the server process only, written when it exits. With
// BENCH_CPU_PROFILE_ON=signal the profile starts at SIGUSR2 (the bench sends it when the load
// begins), so start-up (module loading, password hashing) stays out of it.
import fs from "node:fs";
import inspector from "node:inspector";
import path from "node:path";

const dir = process.env.BENCH_CPU_PROFILE_DIR;
if (dir && process.argv.some((arg) => arg.endsWith("server/index.ts"))) {
  const session = new inspector.Session();
  session.connect();
  session.post("Profiler.enable");
  session.post("Profiler.setSamplingInterval", { interval: 1000 });
  let started = false;
  const start = () => {
    if (started) return;
    started = true;
    session.post("Profiler.start");
  };
  if (process.env.BENCH_CPU_PROFILE_ON === "signal") process.once("SIGUSR2", start);
  else start();
  // The same-thread session answers synchronously, so this works inside the exit hook.
  process.once("exit", () => {
    if (!started) return;
    session.post("Profiler.stop", (err, result) => {
      if (!err) fs.writeFileSync(path.join(dir, `server.${process.pid}.cpuprofile`), JSON.stringify(result.profile));
    });
  });
}
