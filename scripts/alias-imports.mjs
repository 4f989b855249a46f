#!/usr/bin/env node
/**
 * Rewrites relative imports of shared/ (`../../../shared/contract/rest`) in src/, server/,
 * broker/ and tests/ to the `@shared/…` alias (tsconfig.json paths, vite.config.ts and
 * vitest.config.ts resolve.alias; tsx reads tsconfig paths at run time). shared/ itself keeps
 * its own short relative imports.
 *
 * Idempotent: a rewritten import no longer starts with "." and is left alone, so it can be run
 * again after a merge brings in new relative imports.
 *
 *   node scripts/alias-imports.mjs          rewrite, and list the files changed
 *   node scripts/alias-imports.mjs --check  change nothing; exit 1 if a file would change
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const SHARED = path.join(ROOT, "shared");
const DIRS = ["src", "server", "broker", "tests"];
const SKIP = new Set(["node_modules", "dist", "artifacts"]);
const EXTENSIONS = /\.(ts|tsx|mts|cts)$/;

// Module specifiers only: `from "x"`, `import "x"`, `import("x")` (also `typeof import`),
// `vi.mock("x"`, `vi.importActual("x")`. A `new URL("../shared/…", import.meta.url)` names a
// file, not a module, and is left as it is.
const SPECIFIER = /(\bfrom\s+|\bimport\s+|\bimport\s*\(\s*|\bvi\.(?:mock|doMock|unmock|importActual)(?:<[^>]*>)?\s*\(\s*)(["'])(\.{1,2}\/[^"'\n]*)\2/g;

function* sourceFiles(dir) {
  if (!fs.existsSync(dir)) return;
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    if (SKIP.has(entry.name)) continue;
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) yield* sourceFiles(full);
    else if (EXTENSIONS.test(entry.name)) yield full;
  }
}

/** The alias for a relative specifier that lands in shared/, or null. */
function aliasOf(file, specifier) {
  const target = path.resolve(path.dirname(file), specifier);
  const inShared = path.relative(SHARED, target);
  if (inShared.startsWith("..") || path.isAbsolute(inShared)) return null;
  return inShared === "" ? "@shared" : `@shared/${inShared.split(path.sep).join("/")}`;
}

export function rewrite(file, text) {
  return text.replace(SPECIFIER, (match, lead, quote, specifier) => {
    const alias = aliasOf(file, specifier);
    return alias ? `${lead}${quote}${alias}${quote}` : match;
  });
}

const check = process.argv.includes("--check");
const changed = [];
for (const dir of DIRS) {
  for (const file of sourceFiles(path.join(ROOT, dir))) {
    const text = fs.readFileSync(file, "utf8");
    const next = rewrite(file, text);
    if (next === text) continue;
    changed.push(path.relative(ROOT, file));
    if (!check) fs.writeFileSync(file, next);
  }
}
for (const file of changed) console.log(`${check ? "would rewrite" : "rewrote"} ${file}`);
console.log(`${changed.length} file(s) ${check ? "still import shared/ by a relative path" : "rewritten"}`);
if (check && changed.length > 0) process.exitCode = 1;
