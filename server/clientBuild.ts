/**
 * `npm start` builds the client only when its sources changed since the last build.
 *
 * The fingerprint is a SHA-256 over the path, size and content of every file the build reads
 * (src/, shared/, index.html, the Vite/Tailwind/TypeScript configs, package-lock.json). It is
 * written to `dist/.source-hash` after a successful build; a missing or different fingerprint,
 * or a missing `dist/index.html`, means build. Hashing the few hundred source files takes tens
 * of milliseconds, far less than the build it saves.
 */
import { createHash } from "node:crypto";
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";

const SOURCE_DIRS = ["src", "shared"];
const SOURCE_FILES = ["index.html", "vite.config.ts", "tailwind.config.ts", "tsconfig.json", "package-lock.json"];
const STAMP_FILE = ".source-hash";

function listFiles(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  const out: string[] = [];
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) out.push(...listFiles(full));
    else if (entry.isFile()) out.push(full);
  }
  return out;
}

/** The fingerprint of everything the client build reads, relative to `root`. */
export function clientSourceHash(root: string): string {
  const files = [...SOURCE_DIRS.flatMap((d) => listFiles(path.join(root, d))), ...SOURCE_FILES.map((f) => path.join(root, f)).filter((f) => fs.existsSync(f))];
  const hash = createHash("sha256");
  for (const file of files.sort()) {
    const content = fs.readFileSync(file);
    hash.update(`${path.relative(root, file)}\0${content.length}\0`);
    hash.update(content);
  }
  return hash.digest("hex");
}

export type BuildDecision = { build: false; why: string } | { build: true; why: string };

export function decideClientBuild(root: string, distDir = path.join(root, "dist")): BuildDecision & { hash: string } {
  const hash = clientSourceHash(root);
  if (!fs.existsSync(path.join(distDir, "index.html"))) return { build: true, why: "no client build yet", hash };
  const stampPath = path.join(distDir, STAMP_FILE);
  const stamp = fs.existsSync(stampPath) ? fs.readFileSync(stampPath, "utf8").trim() : "";
  if (!stamp) return { build: true, why: "the last build left no fingerprint", hash };
  if (stamp !== hash) return { build: true, why: "client sources changed since the last build", hash };
  return { build: false, why: "client sources unchanged since the last build", hash };
}

/** Builds with Vite when needed; returns what was decided, or throws when the build fails. */
export function ensureClientBuilt(root: string, say: (line: string) => void): BuildDecision {
  const decision = decideClientBuild(root);
  if (!decision.build) {
    say(`${decision.why}: not rebuilding`);
    return decision;
  }
  say(`building the client (${decision.why})…`);
  const res = spawnSync(process.execPath, [path.join(root, "node_modules/vite/bin/vite.js"), "build", "--logLevel", "warn"], { cwd: root, stdio: "inherit" });
  if (res.status !== 0) throw new Error(`the client build failed (vite exited with ${res.status ?? res.signal})`);
  return decision;
}

/** Called by the Vite build when it has written `dist/` (vite.config.ts). */
export function writeSourceStamp(root: string, distDir = path.join(root, "dist")): void {
  if (fs.existsSync(distDir)) fs.writeFileSync(path.join(distDir, STAMP_FILE), clientSourceHash(root));
}
