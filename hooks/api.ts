/**
 * The web app's one way to call the Covarion API: same-origin fetch with the
 * session cookie, JSON in and out, and every error envelope
 * `{ error: { code, message, details } }` turned into an `ApiError`.
 */
import type { ErrorBody } from "../contract/views/errors";
import { validationWords } from "./validation-words";

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
}

/** Base address of the API: same origin unless EXPO_PUBLIC_API_URL says otherwise (dev server). */
export const apiBase: string = process.env.EXPO_PUBLIC_API_URL ?? "";

export async function apiFetch<T>(path: string, init: RequestInit = {}): Promise<T> {
  const headers = new Headers(init.headers);
  if (init.body !== undefined && typeof init.body === "string" && !headers.has("Content-Type")) {
    headers.set("Content-Type", "application/json");
  }
  headers.set("Accept", "application/json");
  let response: Response;
  try {
    response = await fetch(`${apiBase}${path}`, { credentials: "include", ...init, headers });
  } catch {
    throw new ApiError(
      0,
      "network",
      "Covarion's server could not be reached. Check your connection and try again.",
    );
  }
  const text = await response.text();
  const body: unknown = text ? safeJson(text) : null;
  if (!response.ok) {
    // Any non-JSON answer (a proxy's error page) has no envelope.
    const envelope = (body as Partial<ErrorBody> | null)?.error;
    // A validation failure is said in sentences, without field paths (the details keep them).
    const plain = envelope?.code === "validation_failed" ? validationWords(envelope.details) : null;
    throw new ApiError(
      response.status,
      envelope?.code ?? `http_${response.status}`,
      plain ?? envelope?.message ?? `The server answered ${response.status}.`,
      envelope?.details,
    );
  }
  return body as T;
}

/** JSON body helper for mutations. */
export function jsonBody(
  method: "POST" | "PATCH" | "PUT" | "DELETE",
  value?: unknown,
): RequestInit {
  return value === undefined ? { method } : { method, body: JSON.stringify(value) };
}

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return null;
  }
}
