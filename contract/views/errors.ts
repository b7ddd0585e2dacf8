/**
 * The API's one error envelope, `{ "error": { "code", "message", "details"? } }`:
 * the server's error middleware writes it (server/http/errors.ts) and the web
 * app reads it (hooks/api.ts).
 */
export interface ErrorBody {
  error: { code: string; message: string; details?: unknown };
}
