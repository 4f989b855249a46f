/**
 * Bounds every request body shares, checked before any schema runs: zod walks nested values
 * recursively, so a body nested thousands deep overflowed the stack (a 500) before it could be
 * refused. Walks here are iterative.
 */
import type { RequestHandler } from "express";
import { z } from "zod";
import { HttpError } from "./errors";

/**
 * Deepest JSON nesting a body may have. A layout file puts a rule's condition about six levels
 * down and each `not`/`all`/`any` adds one or two, so this allows conditions nested ~25 deep.
 */
export const MAX_JSON_DEPTH = 64;
/** PostgreSQL's bigint (event ids). */
export const BIGINT_MAX = 9223372036854775807n;

const step = (path: string, key: string | number) => (typeof key === "number" ? `${path}[${key}]` : `${path}.${key}`);

/** The path of the first value nested deeper than `maxDepth`, or null. */
export function findTooDeep(value: unknown, maxDepth = MAX_JSON_DEPTH): string | null {
  const stack: { value: unknown; path: string; depth: number }[] = [{ value, path: "$", depth: 0 }];
  while (stack.length > 0) {
    const item = stack.pop()!;
    if (item.value === null || typeof item.value !== "object") continue;
    if (item.depth >= maxDepth) return item.path;
    const entries = Array.isArray(item.value) ? item.value.map((v, i) => [i, v] as const) : Object.entries(item.value);
    for (const [key, child] of entries) stack.push({ value: child, path: step(item.path, key), depth: item.depth + 1 });
  }
  return null;
}

/** The path of the first string (or key) holding a NUL character, which PostgreSQL cannot store, or null. */
export function findNul(value: unknown): string | null {
  const stack: { value: unknown; path: string }[] = [{ value, path: "$" }];
  while (stack.length > 0) {
    const item = stack.pop()!;
    if (typeof item.value === "string") {
      if (item.value.includes("\u0000")) return item.path;
      continue;
    }
    if (item.value === null || typeof item.value !== "object") continue;
    const entries = Array.isArray(item.value) ? item.value.map((v, i) => [i, v] as const) : Object.entries(item.value);
    for (const [key, child] of entries) {
      if (typeof key === "string" && key.includes("\u0000")) return step(item.path, key.replaceAll("\u0000", "\\u0000"));
      stack.push({ value: child, path: step(item.path, key) });
    }
  }
  return null;
}

export function tooDeep(path: string, maxDepth = MAX_JSON_DEPTH): HttpError {
  return new HttpError(400, "too_deep", `the request body is nested deeper than ${maxDepth} levels`, [{ path, message: `nested deeper than ${maxDepth} levels` }]);
}

/** Refuses a JSON body nested deeper than MAX_JSON_DEPTH (400 with the path), for every route. */
export const jsonDepthLimit: RequestHandler = (req, _res, next) => {
  const path = findTooDeep(req.body);
  next(path ? tooDeep(path) : undefined);
};

/** An event id as text: digits that fit PostgreSQL's bigint. */
export const eventIdText = z
  .string()
  .regex(/^\d{1,19}$/, "an event id")
  // zod runs this even when the pattern failed: only digits are compared.
  .refine((s) => !/^\d+$/.test(s) || BigInt(s) <= BIGINT_MAX, `an event id is at most ${BIGINT_MAX}`);
