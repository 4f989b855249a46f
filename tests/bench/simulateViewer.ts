/**
 * The viewer of simulate.bench.ts, in a process of its own so that sending the body and
 * reading the reply do not run on the server's main thread: posts the body in BODY_FILE to
 * URL again and again until killed, printing each run's milliseconds (one line each).
 *
 * argv: URL COOKIE BODY_FILE
 */
import fs from "node:fs";

const [url, cookie, bodyFile] = process.argv.slice(2);
const body = fs.readFileSync(bodyFile);
for (;;) {
  const started = performance.now();
  const res = await fetch(url, { method: "POST", headers: { cookie, "content-type": "application/json" }, body });
  await res.arrayBuffer();
  if (res.status !== 200) {
    process.stderr.write(`the simulation was refused: ${res.status}\n`);
    process.exit(1);
  }
  process.stdout.write(`${Math.round(performance.now() - started)}\n`);
}
