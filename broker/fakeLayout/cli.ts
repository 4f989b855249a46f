/**
 * `npm run fake-layout -- --layout kestrel-bank [--scenario FILE] [--speed N] [--loop]
 *    [--broker mqtt://127.0.0.1:1883] [--secrets FILE] [--layout-file FILE] [--verbose]`
 *
 * Plays a scenario of trains into the broker as real boards would: one MQTT client per node
 * with that node's own secret (demo secrets from DATA_DIR/secrets/nodes/<slug>.json, written
 * by the launcher when DEMO is on).
 */
import fs from "node:fs";
import path from "node:path";
import { parseArgs } from "node:util";
import { fileURLToPath } from "node:url";
import { kestrelBankLayout, wrenfoldLoopLayout } from "@shared/demo/fernmoor";
import type { LayoutFile } from "@shared/layout/schema";
import { validateLayoutFile } from "@shared/rulebook/validate";
import { realScheduler } from "./clock";
import { MqttBoards } from "./mqttBoards";
import { FAKE_FIRMWARE, FakeLayoutPlayer, type TrainEvent } from "./player";
import { checkScenarioAgainstLayout, loadScenarioFile, ScenarioInvalidError } from "./scenario";
import { stopWhenLauncherGoes } from "../../server/parentWatch";

const HERE = path.dirname(fileURLToPath(import.meta.url));
const DEMO_LAYOUTS: Record<string, () => LayoutFile> = {
  "kestrel-bank": kestrelBankLayout,
  "wrenfold-loop": wrenfoldLoopLayout,
};
const USAGE = `usage: npm run fake-layout -- --layout SLUG [--scenario FILE] [--speed N] [--loop]
       [--broker mqtt://127.0.0.1:1883] [--secrets FILE] [--layout-file FILE] [--verbose]
  --layout       a demo layout (${Object.keys(DEMO_LAYOUTS).join(", ")}), or the slug of --layout-file
  --layout-file  play on any layout file (blocklight.layout/1) instead of a demo layout
  --scenario     scenario file (default: scenarios/<slug>-day.json beside this script)
  --speed        time multiplier, e.g. 10 plays ten scenario seconds per second (default 1)
  --loop         start the day again when every train has left
  --broker       MQTT broker (default: MQTT_URL, else mqtt://127.0.0.1:MQTT_PORT or 1883)
  --secrets      JSON {"<node>":"<secret>"} (default: DATA_DIR/secrets/nodes/<slug>.json)
  --verbose      log every pulse and lamp-proving report`;

/** Pulses closer together than this look like a flickering detector to the server. */
const CHATTER_WARNING_MS = 50;
const log = (line: string) => process.stdout.write(`${new Date().toISOString().slice(11, 19)} ${line}\n`);

function fail(message: string): never {
  process.stderr.write(`fake layout: ${message}\n`);
  process.exit(2);
}

function loadLayout(slug: string | undefined, file: string | undefined): LayoutFile {
  if (file) {
    let json: unknown;
    try {
      json = JSON.parse(fs.readFileSync(file, "utf8"));
    } catch (err) {
      fail(`cannot read layout file ${file}: ${(err as Error).message}`);
    }
    const result = validateLayoutFile(json);
    if (!result.ok) fail(`${file} is not a valid layout file:\n${result.errors.map((e) => `  ${e.path}: ${e.message}`).join("\n")}`);
    if (slug && result.layout.slug !== slug) fail(`${file} is layout "${result.layout.slug}", not "${slug}"`);
    return result.layout;
  }
  if (!slug) fail(`--layout is required\n${USAGE}`);
  const demo = DEMO_LAYOUTS[slug];
  if (!demo) fail(`no demo layout "${slug}" (demo layouts: ${Object.keys(DEMO_LAYOUTS).join(", ")}); use --layout-file for others`);
  return demo();
}

function loadSecrets(file: string, layout: LayoutFile): Record<string, string> {
  if (!fs.existsSync(file)) {
    fail(`no board secrets at ${file}: start Blocklight once with DEMO on (npm start), or pass --secrets FILE`);
  }
  const secrets = JSON.parse(fs.readFileSync(file, "utf8")) as Record<string, string>;
  const missing = layout.nodes.filter((n) => typeof secrets[n.id] !== "string").map((n) => n.id);
  if (missing.length) log(`no secret for board(s) ${missing.join(", ")} in ${file}: they will be refused by the broker`);
  return secrets;
}

function describe(event: TrainEvent): string {
  switch (event.type) {
    case "appears":
      return `${event.name} (train ${event.train}) appears on ${event.route}`;
    case "waits":
      return `${event.name} (train ${event.train}) waits at ${event.signal}`;
    case "proceeds":
      return `${event.name} (train ${event.train}) proceeds past ${event.signal} (${event.aspect})`;
    case "takes-road":
      return `${event.name} (train ${event.train}) takes the ${event.route} road`;
    case "leaves":
      return `${event.name} (train ${event.train}) has left`;
    case "day-over":
      return `every train of day ${event.cycle} has left`;
  }
}

async function main(): Promise<void> {
  let args;
  try {
    args = parseArgs({
      options: {
        layout: { type: "string" },
        "layout-file": { type: "string" },
        scenario: { type: "string" },
        speed: { type: "string", default: "1" },
        broker: { type: "string" },
        secrets: { type: "string" },
        loop: { type: "boolean", default: false },
        verbose: { type: "boolean", default: false },
        help: { type: "boolean", default: false },
      },
    }).values;
  } catch (err) {
    fail(`${(err as Error).message}\n${USAGE}`);
  }
  if (args.help) {
    process.stdout.write(USAGE + "\n");
    return;
  }
  const speed = Number(args.speed);
  if (!Number.isFinite(speed) || speed <= 0 || speed > 10_000) fail(`--speed must be a number above 0 (got "${args.speed}")`);
  const layout = loadLayout(args.layout, args["layout-file"]);
  const scenarioFile = args.scenario ?? path.join(HERE, "scenarios", `${layout.slug}-day.json`);
  let scenario;
  try {
    scenario = loadScenarioFile(scenarioFile);
    checkScenarioAgainstLayout(scenario, layout, scenarioFile);
  } catch (err) {
    if (err instanceof ScenarioInvalidError) fail(err.message);
    throw err;
  }
  const closestAxlesMs = Math.min(...scenario.trains.map((t) => (t.axleSpacingM / t.speedMps) * 1000)) / speed;
  if (closestAxlesMs < CHATTER_WARNING_MS) {
    log(`at ${speed}× some axles pass a detector ${closestAxlesMs.toFixed(0)} ms apart: the server may raise chatter and axle-count alarms (keep it above ${CHATTER_WARNING_MS} ms with a lower --speed)`);
  }
  const dataDir = path.resolve(process.env.DATA_DIR ?? ".data");
  const secrets = loadSecrets(args.secrets ?? path.join(dataDir, "secrets", "nodes", `${layout.slug}.json`), layout);
  const brokerUrl = args.broker ?? process.env.MQTT_URL ?? `mqtt://127.0.0.1:${process.env.MQTT_PORT ?? 1883}`;

  let boards: MqttBoards | null = null;
  let stopping = false;
  const stop = async (why: string, code = 0) => {
    if (stopping) return;
    stopping = true;
    log(`stopping (${why})`);
    player.stop();
    await boards?.close();
    process.exit(code);
  };
  const player = new FakeLayoutPlayer({
    layout,
    scenario,
    scheduler: realScheduler(speed),
    speed,
    loop: args.loop,
    send: (message) => {
      if (args.verbose) log(`${message.node} ${message.kind} ${JSON.stringify(message.payload)}`);
      boards?.send(message);
    },
    onEvent: (event) => {
      log(describe(event));
      // Without --loop, finish once the day is over (QoS 1 messages are flushed by close()).
      if (event.type === "day-over" && !args.loop) setImmediate(() => void stop("the day is over"));
    },
  });
  boards = new MqttBoards({
    brokerUrl,
    layout: layout.slug,
    boards: player.boards,
    secrets,
    firmware: FAKE_FIRMWARE,
    onAspect: (node, signal, payload) => player.onAspect(node, signal, payload),
    onPointsSet: (node, points, payload) => player.onPointsSet(node, points, payload),
    log,
  });
  log(`playing "${scenario.name}" on ${layout.name} at ${speed}× via ${brokerUrl}${args.loop ? ", looping" : ""}`);
  await boards.connect();
  player.start();

  process.on("SIGINT", () => void stop("SIGINT"));
  process.on("SIGTERM", () => void stop("SIGTERM"));
  stopWhenLauncherGoes(stop);
}

main().catch((err: unknown) => fail(err instanceof Error ? (err.stack ?? err.message) : String(err)));
