/**
 * Time limits on receiving a request, so that a client sending slowly (or
 * not at all) cannot hold a connection and its memory for long.
 *
 * - headers: all of them within the idle limit (`headersTimeout`);
 * - the whole request, body included, within the total limit
 *   (`requestTimeout`; a 50 MB upload needs ~0.7 Mbit/s for the default
 *   10 minutes);
 * - a body that makes no progress for the idle limit is cut off with 408
 *   (`cutOffStalledBodies`). Bytes that have arrived but wait for the app to
 *   read them count as progress: that stall is the server's, not the
 *   sender's. Once a request has arrived in full, nothing here limits how
 *   long its answer takes (server-sent events stay open);
 * - an idle kept-alive connection closes after 5 s (`keepAliveTimeout`).
 *
 * Node checks the first two every `connectionsCheckingInterval`, which only
 * the server's constructor takes: `createHttpServer` sets it from the idle
 * limit. Every listening server of the app goes through `createHttpServer`
 * or `applyRequestTimeouts`.
 */
import {
  createServer,
  type IncomingMessage,
  type RequestListener,
  type Server,
  type ServerResponse,
} from "node:http";

export interface RequestTimeouts {
  /** Longest wait for the headers, and longest pause in a request body (ms). */
  idleMs: number;
  /** Longest time to receive a whole request (ms). */
  totalMs: number;
}

const keepAliveMs = 5_000;

/** An HTTP server for `app` with the request time limits in place. */
export function createHttpServer(app: RequestListener, timeouts: RequestTimeouts): Server {
  const server = createServer({
    connectionsCheckingInterval: Math.round(Math.min(5_000, Math.max(50, timeouts.idleMs / 4))),
    requestTimeout: timeouts.totalMs,
    headersTimeout: Math.min(timeouts.idleMs, timeouts.totalMs),
    keepAliveTimeout: keepAliveMs,
  });
  applyRequestTimeouts(server, timeouts);
  server.on("request", app);
  return server;
}

/** Sets the limits on a server made elsewhere (its checking interval stays Node's 30 s). */
export function applyRequestTimeouts(server: Server, timeouts: RequestTimeouts): void {
  server.requestTimeout = timeouts.totalMs;
  server.headersTimeout = Math.min(timeouts.idleMs, timeouts.totalMs);
  server.keepAliveTimeout = keepAliveMs;
  cutOffStalledBodies(server, timeouts.idleMs);
}

/** Answers 408 and closes the connection when a request body makes no progress for `idleMs`. */
export function cutOffStalledBodies(server: Server, idleMs: number): void {
  const tick = Math.max(25, Math.min(1_000, idleMs / 4));
  server.on("request", (req: IncomingMessage, res: ServerResponse) => {
    if (!hasBody(req)) return;
    const socket = req.socket;
    let lastBytes = socket.bytesRead;
    let lastProgress = Date.now();
    const timer = setInterval(() => {
      if (req.complete || socket.destroyed) {
        clearInterval(timer);
        return;
      }
      const bytes = socket.bytesRead;
      if (bytes !== lastBytes || req.readableLength > 0) {
        lastBytes = bytes;
        lastProgress = Date.now();
        return;
      }
      if (Date.now() - lastProgress < idleMs) return;
      clearInterval(timer);
      cutOff(req, res, idleMs);
    }, tick);
    res.once("close", () => clearInterval(timer));
  });
}

function hasBody(req: IncomingMessage): boolean {
  return (
    req.headers["transfer-encoding"] !== undefined || Number(req.headers["content-length"] ?? 0) > 0
  );
}

function cutOff(req: IncomingMessage, res: ServerResponse, idleMs: number): void {
  if (res.headersSent) {
    req.socket.destroy();
    return;
  }
  const message = `The request body stopped arriving: nothing came for ${idleMs / 1000} s, so the request was cut off. Send it again.`;
  // Express rewrites req.url inside mounted routers; originalUrl keeps the path as sent.
  const path = (req as IncomingMessage & { originalUrl?: string }).originalUrl ?? req.url ?? "";
  const api = path.startsWith("/api/");
  // Connection: close makes Node close the socket once this answer is written; the handler still
  // waiting for the body then sees the request aborted.
  const body = api
    ? JSON.stringify({ error: { code: "request_timeout", message } })
    : `${message}\n`;
  res.writeHead(408, {
    "Content-Type": api ? "application/json; charset=utf-8" : "text/plain; charset=utf-8",
    "Content-Length": Buffer.byteLength(body),
    Connection: "close",
  });
  res.end(body);
}
