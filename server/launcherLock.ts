/**
 * One launcher per DATA_DIR: `DATA_DIR/launcher.pid` holds the pid of the launcher that owns
 * it. A pid file whose process is gone (or is no longer a launcher) is stale: the launcher
 * that wrote it died, and what it left running may be stopped by the next one.
 */
import fs from "node:fs";
import path from "node:path";

const LOCK_FILE = "launcher.pid";

function isLauncher(pid: number): boolean {
  try {
    const stat = fs.readFileSync(`/proc/${pid}/stat`, "utf8");
    if (stat.slice(stat.lastIndexOf(")") + 2, stat.lastIndexOf(")") + 3) === "Z") return false;
    return fs.readFileSync(`/proc/${pid}/cmdline`, "utf8").includes("launcher");
  } catch {
    return false;
  }
}

/** Takes the lock; returns the pid of another live launcher that holds it, or null when taken. */
export function claimLauncherLock(dataDir: string, pid = process.pid): number | null {
  const file = path.join(dataDir, LOCK_FILE);
  const held = fs.existsSync(file) ? Number(fs.readFileSync(file, "utf8").trim()) : NaN;
  if (Number.isInteger(held) && held !== pid && isLauncher(held)) return held;
  fs.writeFileSync(file, String(pid));
  return null;
}

export function releaseLauncherLock(dataDir: string | null, pid = process.pid): void {
  if (!dataDir) return;
  const file = path.join(dataDir, LOCK_FILE);
  try {
    if (Number(fs.readFileSync(file, "utf8").trim()) === pid) fs.rmSync(file);
  } catch {
    /* already gone */
  }
}
