import type { ApiErrorBody } from "@shared/contract/rest";

/** One path/message pair, as the server lists validation failures in `details`. */
export interface FieldError {
  path: string;
  message: string;
}

/** A failed API call, carrying the server's `{"error":{code,message,details}}` body. */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly details: unknown;

  constructor(status: number, code: string, message: string, details?: unknown) {
    super(message);
    this.name = "ApiError";
    this.status = status;
    this.code = code;
    this.details = details;
  }

  /** The `details` list when the server sent `[{path,message}]`, otherwise empty. */
  get fieldErrors(): FieldError[] {
    return toFieldErrors(this.details);
  }
}

export function toFieldErrors(details: unknown): FieldError[] {
  if (!Array.isArray(details)) return [];
  return details
    .filter((d): d is { path: unknown; message: unknown } => typeof d === "object" && d !== null && "message" in d)
    .map((d) => ({
      path: Array.isArray(d.path) ? d.path.join(".") : String(d.path ?? ""),
      message: String(d.message),
    }));
}

function isErrorBody(body: unknown): body is ApiErrorBody {
  return (
    typeof body === "object" &&
    body !== null &&
    "error" in body &&
    typeof (body as ApiErrorBody).error === "object" &&
    (body as ApiErrorBody).error !== null
  );
}

export interface RequestOptions {
  method?: "GET" | "POST" | "PUT" | "PATCH" | "DELETE";
  body?: unknown;
  signal?: AbortSignal;
}

/**
 * JSON over fetch against our own origin; call it through `api()` (./client.ts), which names
 * the route and so the reply type. The session is an httpOnly cookie, so
 * `credentials: "same-origin"` is all the authentication the client does.
 */
export async function request<T>(path: string, options: RequestOptions = {}): Promise<T> {
  const { method = options.body === undefined ? "GET" : "POST", body, signal } = options;
  // A FormData body (file uploads) goes as multipart; the browser sets its boundary header.
  const multipart = body instanceof FormData;
  let response: Response;
  try {
    response = await fetch(path, {
      method,
      credentials: "same-origin",
      headers: {
        Accept: "application/json",
        ...(body === undefined || multipart ? {} : { "Content-Type": "application/json" }),
      },
      body: body === undefined ? undefined : multipart ? body : JSON.stringify(body),
      signal,
    });
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === "AbortError") throw cause;
    throw new ApiError(0, "network", "Cannot reach the Blocklight server. Check the clubroom network and try again.");
  }

  const text = await response.text();
  let parsed: unknown = undefined;
  if (text.length > 0) {
    try {
      parsed = JSON.parse(text);
    } catch {
      // A proxy error page or similar: report the status rather than a parse failure.
      parsed = undefined;
    }
  }

  if (!response.ok) {
    if (isErrorBody(parsed)) {
      const { code, message, details } = parsed.error;
      throw new ApiError(response.status, code, message, details);
    }
    throw new ApiError(response.status, "http_" + response.status, `The server answered ${response.status} ${response.statusText}`.trim());
  }
  return parsed as T;
}
