/**
 * One error shape for every REST reply (CONTRACT.md §6): `{"error":{"code","message","details"?}}`.
 * Handlers throw `HttpError`; the error middleware turns anything else into a 500 without
 * leaking internals.
 */
import type { ErrorRequestHandler, RequestHandler } from "express";
import type { Logger } from "pino";
import { z } from "zod";

export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
}

export const badRequest = (message: string, details?: unknown) => new HttpError(400, "bad_request", message, details);
export const notFound = (what: string) => new HttpError(404, "not_found", `${what} not found`);
export const conflict = (message: string) => new HttpError(409, "conflict", message);

/** zod issues as `[{path:"$.a[0].b", message}]`, the same path style as file validation. */
export function zodDetails(error: z.ZodError): { path: string; message: string }[] {
  return error.issues.map((issue) => ({
    path: "$" + issue.path.map((p) => (typeof p === "number" ? `[${p}]` : `.${String(p)}`)).join(""),
    message: issue.message,
  }));
}

/** Parses a body or query with a zod schema or throws a 400 listing every problem. */
export function parseWith<T extends z.ZodType>(schema: T, value: unknown, what = "request body"): z.infer<T> {
  const result = schema.safeParse(value);
  if (!result.success) throw new HttpError(400, "invalid_input", `the ${what} is not valid`, zodDetails(result.error));
  return result.data;
}

export const notFoundApi: RequestHandler = (req, _res, next) => {
  next(new HttpError(404, "not_found", `no API route ${req.method} ${req.path}`));
};

export function errorHandler(logger: Logger): ErrorRequestHandler {
  return (err, _req, res, _next) => {
    if (err instanceof HttpError) {
      res.status(err.status).json({ error: { code: err.code, message: err.message, ...(err.details !== undefined ? { details: err.details } : {}) } });
      return;
    }
    // body-parser's errors carry a status (bad JSON 400, too large 413)
    const status = typeof err?.status === "number" && err.status >= 400 && err.status < 500 ? err.status : 500;
    if (status === 500) logger.error({ err }, "unhandled error in a request");
    const message = status === 500 ? "internal error" : String(err?.message ?? "bad request");
    const code = status === 500 ? "internal" : status === 413 ? "too_large" : "bad_request";
    res.status(status).json({ error: { code, message } });
  };
}
