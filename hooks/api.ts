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
  if (!response.ok) throw errorOf(response.status, body);
  return body as T;
}

/** The ApiError of a refused answer's body (any non-JSON answer, a proxy's error page, has no envelope). */
function errorOf(status: number, body: unknown): ApiError {
  const envelope = (body as Partial<ErrorBody> | null)?.error;
  // A validation failure is said in sentences, without field paths (the details keep them).
  const plain = envelope?.code === "validation_failed" ? validationWords(envelope.details) : null;
  return new ApiError(
    status,
    envelope?.code ?? `http_${status}`,
    plain ?? envelope?.message ?? `The server answered ${status}.`,
    envelope?.details,
  );
}

/** A file the API answers (a figure drawn from a posted question): its bytes, or an ApiError as apiFetch throws. */
export async function apiFile(path: string, init: RequestInit): Promise<Blob> {
  const headers = new Headers(init.headers);
  if (typeof init.body === "string" && !headers.has("Content-Type")) {
    headers.set("Content-Type", "application/json");
  }
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
  if (!response.ok) {
    const text = await response.text();
    throw errorOf(response.status, text ? safeJson(text) : null);
  }
  return response.blob();
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
