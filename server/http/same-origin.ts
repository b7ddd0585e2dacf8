/**
 * Same-origin check for state-changing API requests (POST, PUT, PATCH,
 * DELETE): a browser request from another site is refused with 403.
 *
 * Browsers send `Sec-Fetch-Site` and `Origin` on such requests; both are
 * checked when present. Requests without either header (command-line
 * clients, server-to-server calls) carry no ambient browser credentials
 * from another site and pass.
 */
import type { RequestHandler } from "express";
import { HttpError } from "./errors";

const safeMethods = new Set(["GET", "HEAD", "OPTIONS"]);

export function sameOrigin(publicUrl: string): RequestHandler {
  const publicOrigin = new URL(publicUrl).origin;
  return (req, _res, next) => {
    if (safeMethods.has(req.method)) return next();
    const site = req.get("sec-fetch-site");
    if (site !== undefined && site !== "same-origin" && site !== "none") {
      return next(refusal(`Sec-Fetch-Site is ${site}`));
    }
    const origin = req.get("origin");
    if (origin !== undefined) {
      const own = `${req.protocol}://${req.get("host")}`;
      if (origin !== own && origin !== publicOrigin) return next(refusal(`Origin ${origin} is not this site`));
    }
    next();
  };
}

function refusal(reason: string): HttpError {
  return new HttpError(403, "cross_origin", `State-changing requests must come from Covarion's own pages (${reason}).`);
}
