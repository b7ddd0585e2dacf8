/**
 * The one error envelope of the API: every error answers
 * `{ "error": { "code", "message", "details"? } }`.
 *
 * Routes and services throw `HttpError` (or its helpers `notFound`,
 * `forbidden`, …); zod validation failures become 400, `StatsError` 422,
 * `IntakeError` its own status (400 unreadable file, 413 too large, 422
 * content not as asked) with its problems (file, row, column) in
 * `details`, body-parser's size errors 413, anything else 500 (logged on
 * the server, never a stack to the client).
 */
import type { ErrorRequestHandler, RequestHandler } from "express";
import { ZodError } from "zod";
import type { ErrorBody, ValidationDetail } from "../../contract/views/errors";
import { IntakeError } from "../intake/errors";
import { StatsError } from "../stats/errors";

export class HttpError extends Error {
  readonly status: number;
  readonly code: string;
  readonly details?: unknown;

  constructor(status: number, code: string, message: string, details?: unknown) {
    super(message);
    this.name = "HttpError";
    this.status = status;
    this.code = code;
    this.details = details;
  }
}

export const badRequest = (message: string, details?: unknown) =>
  new HttpError(400, "bad_request", message, details);
export const unauthorized = (message = "Sign in to continue.") =>
  new HttpError(401, "unauthorized", message);
export const forbidden = (message = "Your role in this study does not allow this.") =>
  new HttpError(403, "forbidden", message);
export const notFound = (message = "Not found.") => new HttpError(404, "not_found", message);
export const conflict = (message: string, details?: unknown) =>
  new HttpError(409, "conflict", message, details);
export const gone = (message: string) => new HttpError(410, "gone", message);

/** Turns a zod error into a list of `{ path, message }` naming each bad field. */
export function zodDetails(error: ZodError, where: string): ValidationDetail[] {
  return error.issues.map((issue) => ({
    field: [where, ...issue.path.map(String)].join("."),
    message: issue.message,
  }));
}

/** Answers unknown /api paths with the envelope. */
export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(
    new HttpError(404, "not_found", `No API route ${req.method} ${req.originalUrl.split("?")[0]}.`),
  );
};

/** Maps any thrown value to a status and envelope. Exported for tests. */
export function toErrorResponse(error: unknown): { status: number; body: ErrorBody } {
  if (error instanceof HttpError) {
    return { status: error.status, body: envelope(error.code, error.message, error.details) };
  }
  if (error instanceof ZodError) {
    const details = zodDetails(error, "body");
    return { status: 400, body: envelope("validation_failed", describeDetails(details), details) };
  }
  if (error instanceof StatsError) {
    return { status: 422, body: envelope(error.code, error.message, error.details) };
  }
  if (error instanceof IntakeError) {
    return {
      status: error.status,
      body: envelope(error.problems[0]?.code ?? "invalid_file", error.message, {
        problems: error.problems,
        problemCount: error.problemCount,
      }),
    };
  }
  const e = error as {
    name?: string;
    status?: number;
    statusCode?: number;
    type?: string;
    message?: string;
    code?: string;
    details?: unknown;
  };
  if (e && e.type === "entity.too.large") {
    return {
      status: 413,
      body: envelope("payload_too_large", "The request body is larger than the server accepts."),
    };
  }
  if (e && e.type === "entity.parse.failed") {
    return { status: 400, body: envelope("malformed_json", "The request body is not valid JSON.") };
  }
  const status = e?.status ?? e?.statusCode;
  if (typeof status === "number" && status >= 400 && status < 500) {
    return { status, body: envelope(`http_${status}`, String(e.message ?? "Request refused.")) };
  }
  return {
    status: 500,
    body: envelope("internal_error", "Something went wrong on the server. It has been logged."),
  };
}

export function describeDetails(details: readonly ValidationDetail[]): string {
  return details.map((d) => `${d.field}: ${d.message}`).join("; ");
}

function envelope(code: string, message: string, details?: unknown): ErrorBody {
  return details === undefined
    ? { error: { code, message } }
    : { error: { code, message, details } };
}

/** The one error middleware. `log` receives 5xx errors (default: console.error). */
export function errorHandler(
  log: (error: unknown, context: string) => void = defaultLog,
): ErrorRequestHandler {
  return (error, req, res, _next) => {
    const { status, body } = toErrorResponse(error);
    if (status >= 500) log(error, `${req.method} ${req.originalUrl}`);
    if (res.headersSent) {
      res.end();
      return;
    }
    res.status(status).json(body);
  };
}

function defaultLog(error: unknown, context: string): void {
  console.error(`[covarion] ${context} failed:`, error);
}
