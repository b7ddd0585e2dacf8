/**
 * Rate limits for sign-in e-mail requests and invitation accepts, per IP
 * and per e-mail address, with express-rate-limit (in-memory store: one
 * server process owns the data directory). Over the limit the request is
 * answered 429 with the error envelope and a `Retry-After` header.
 */
import type { Request, RequestHandler, Response } from "express";
import { rateLimit } from "express-rate-limit";
import { HttpError } from "./errors";

export interface RateLimitSettings {
  windowMs: number;
  perAddress: number;
  perIp: number;
}

/**
 * Two limiters for one kind of request: by client IP, and by the address
 * `addressOf` returns (requests without an address are limited by IP only).
 */
export function limitByIpAndAddress(
  what: string,
  settings: RateLimitSettings,
  addressOf: (req: Request, res: Response) => string | null,
): RequestHandler[] {
  const handler = (req: Request, res: Response, next: (error: unknown) => void) => {
    const reset = (req as Request & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime;
    const seconds = reset
      ? Math.max(1, Math.ceil((reset.getTime() - Date.now()) / 1000))
      : Math.ceil(settings.windowMs / 1000);
    res.set("Retry-After", String(seconds));
    const minutes = Math.ceil(seconds / 60);
    next(
      new HttpError(
        429,
        "rate_limited",
        `Too many ${what} requests; try again in ${minutes} minute${minutes === 1 ? "" : "s"}.`,
      ),
    );
  };
  const byIp = rateLimit({
    windowMs: settings.windowMs,
    limit: settings.perIp,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    identifier: `${what} per IP`,
    handler,
  });
  const byAddress = rateLimit({
    windowMs: settings.windowMs,
    limit: settings.perAddress,
    standardHeaders: false,
    legacyHeaders: false,
    identifier: `${what} per address`,
    skip: (req, res) => addressOf(req, res) === null,
    keyGenerator: (req, res) => `address:${addressOf(req, res)}`,
    handler,
  });
  return [byIp, byAddress];
}
