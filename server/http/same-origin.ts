/**
 * Same-origin check for state-changing API requests (POST, PUT, PATCH,
 * DELETE): a browser request from another site is refused with 403.
 *
 * Browsers send `Sec-Fetch-Site` and `Origin` on such requests; both are
 * checked when present. Origin must be PUBLIC_URL's origin: the Host header
 * is chosen by whoever sends the request, so `Origin: http://evil.example`
 * with `Host: evil.example` proves nothing. Outside production (the server
 * listens on 127.0.0.1) a page's own loopback origin (http://localhost:3000
 * asking localhost:3000) is accepted too. Requests without either header
 * (command-line clients, server-to-server calls) carry no ambient browser
 * credentials from another site and pass.
 */
import type { RequestHandler } from "express";
import { HttpError } from "./errors";
import { type HostPolicy, isLoopbackHost } from "./host-check";

const safeMethods = new Set(["GET", "HEAD", "OPTIONS"]);

export function sameOrigin(policy: HostPolicy): RequestHandler {
  const publicOrigin = new URL(policy.publicUrl).origin;
  return (req, _res, next) => {
    if (safeMethods.has(req.method)) return next();
    const site = req.get("sec-fetch-site");
    if (site !== undefined && site !== "same-origin" && site !== "none") {
      return next(refusal(`Sec-Fetch-Site is ${site}`));
    }
    const origin = req.get("origin");
    if (
      origin !== undefined &&
      origin !== publicOrigin &&
      !(!policy.production && isOwnLoopbackOrigin(origin, req.protocol, req.host))
    ) {
      return next(refusal(`Origin ${origin} is not this site`));
    }
    next();
  };
}

function isOwnLoopbackOrigin(origin: string, protocol: string, host: string | undefined): boolean {
  return isLoopbackHost(host) && origin.toLowerCase() === `${protocol}://${host}`.toLowerCase();
}

function refusal(reason: string): HttpError {
  return new HttpError(
    403,
    "cross_origin",
    `State-changing requests must come from Covarion's own pages (${reason}).`,
  );
}
