/**
 * Checks every parsed JSON body before any route sees it, for two things zod schemas let
 * through and PostgreSQL then refuses with an error the client cannot act on (a 500):
 * a NUL character (U+0000) in a string or key (text and jsonb cannot hold it), and nesting
 * deeper than {@link MAX_JSON_DEPTH} (jsonb, and recursive validators, run out of stack).
 * Both become a 400 with the path of the offending value, in the usual error shape.
 */
import type { RequestHandler } from "express";
import { HttpError } from "./errors";

/** Deeper than any layout file or rulebook condition a person writes; far below what jsonb or a recursive check can take. */
export const MAX_JSON_DEPTH = 64;
/** A body full of NULs is reported by its first few, not all of them. */
const MAX_REPORTED = 20;

export interface BodyProblem {
  path: string;
  message: string;
}

const childPath = (path: string, key: string | number) => (typeof key === "number" ? `${path}[${key}]` : `${path}.${key}`);

/** The NULs and the too-deep places of a parsed JSON value; iterative, so any depth is safe to walk. */
export function jsonBodyProblems(body: unknown): BodyProblem[] {
  const problems: BodyProblem[] = [];
  const stack: { value: unknown; path: string; depth: number }[] = [{ value: body, path: "$", depth: 0 }];
  while (stack.length > 0 && problems.length < MAX_REPORTED) {
    const { value, path, depth } = stack.pop()!;
    if (typeof value === "string") {
      if (value.includes("\u0000")) problems.push({ path, message: "must not contain a NUL character (\\u0000)" });
      continue;
    }
    if (typeof value !== "object" || value === null) continue;
    if (depth >= MAX_JSON_DEPTH) {
      problems.push({ path, message: `is nested too deeply (at most ${MAX_JSON_DEPTH} levels)` });
      continue;
    }
    if (Array.isArray(value)) {
      for (let i = value.length - 1; i >= 0; i--) stack.push({ value: value[i], path: childPath(path, i), depth: depth + 1 });
      continue;
    }
    const entries = Object.entries(value);
    for (let i = entries.length - 1; i >= 0; i--) {
      const [key, child] = entries[i];
      if (key.includes("\u0000")) {
        problems.push({ path, message: "has a key with a NUL character (\\u0000)" });
        continue;
      }
      stack.push({ value: child, path: childPath(path, key), depth: depth + 1 });
    }
  }
  return problems;
}

/** The refusal for a body with problems: `too_deep` when nesting is all that is wrong. */
export function bodyRefusal(problems: BodyProblem[]): HttpError {
  return problems.every((p) => p.message.startsWith("is nested too deeply"))
    ? new HttpError(400, "too_deep", `the request body is nested deeper than ${MAX_JSON_DEPTH} levels`, problems)
    : new HttpError(400, "invalid_input", "the request body holds values the server cannot store", problems);
}

export const guardJsonBody: RequestHandler = (req, _res, next) => {
  const body: unknown = req.body;
  if (typeof body !== "object" || body === null) return next();
  const problems = jsonBodyProblems(body);
  next(problems.length === 0 ? undefined : bodyRefusal(problems));
};
