/**
 * `npm start` rebuilds the client only when what the build reads has changed.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { decideClientBuild, writeSourceStamp } from "../../server/clientBuild";
import { claimLauncherLock, releaseLauncherLock } from "../../server/launcherLock";

const dirs: string[] = [];
function project(): string {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), "blocklight-build-"));
  dirs.push(root);
  fs.mkdirSync(path.join(root, "src"));
  fs.writeFileSync(path.join(root, "src/main.tsx"), "export {};\n");
  fs.writeFileSync(path.join(root, "index.html"), "<html></html>\n");
  return root;
}
function build(root: string): void {
  fs.mkdirSync(path.join(root, "dist"), { recursive: true });
  fs.writeFileSync(path.join(root, "dist/index.html"), "built");
  writeSourceStamp(root);
}
afterEach(() => {
  for (const dir of dirs.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});

describe("decideClientBuild", () => {
  it("builds when there is no build yet", () => {
    expect(decideClientBuild(project())).toMatchObject({ build: true, why: "no client build yet" });
  });
  it("skips the build when nothing changed since the last one", () => {
    const root = project();
    build(root);
    expect(decideClientBuild(root)).toMatchObject({ build: false });
  });
  it.each([
    ["a changed source", (root: string) => fs.writeFileSync(path.join(root, "src/main.tsx"), "export const x = 1;\n")],
    ["a new source file", (root: string) => fs.writeFileSync(path.join(root, "src/extra.ts"), "export {};\n")],
    ["a removed source file", (root: string) => fs.rmSync(path.join(root, "src/main.tsx"))],
    ["a changed shared module", (root: string) => (fs.mkdirSync(path.join(root, "shared")), fs.writeFileSync(path.join(root, "shared/a.ts"), "x"))],
    ["a build without a fingerprint", (root: string) => fs.rmSync(path.join(root, "dist/.source-hash"))],
  ])("builds after %s", (_what, change) => {
    const root = project();
    build(root);
    change(root);
    expect(decideClientBuild(root).build).toBe(true);
  });
});

describe("launcher lock", () => {
  it("is refused while another live launcher holds it and taken over when its owner is gone", () => {
    const dir = project();
    // A pid that is certainly not a launcher (this test runner): stale, so it is taken.
    fs.writeFileSync(path.join(dir, "launcher.pid"), String(process.pid));
    expect(claimLauncherLock(dir, 999_999_999)).toBeNull();
    expect(fs.readFileSync(path.join(dir, "launcher.pid"), "utf8")).toBe("999999999");
    releaseLauncherLock(dir, 999_999_999);
    expect(fs.existsSync(path.join(dir, "launcher.pid"))).toBe(false);
  });
});
