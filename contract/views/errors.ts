/**
 * The API's one error envelope, `{ "error": { "code", "message", "details"? } }`:
 * the server's error middleware writes it (server/http/errors.ts) and the web
 * app reads it (hooks/api.ts).
 */
/** One field a request got wrong: `{ field: "body.email", message: "must be an e-mail address" }` (the details of a 400 validation_failed). */
export interface ValidationDetail {
  field: string;
  message: string;
}

export interface ErrorBody {
  error: { code: string; message: string; details?: unknown };
}
