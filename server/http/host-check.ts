/**
 * Which host a request may name, and the one address links are built from.
 *
 * A browser puts the name it resolved into the Host header, so the header
 * says nothing about which server the person meant: an attacker can send
 * `Host: attacker.example` straight to the server (to poison the sign-in
 * link mailed to a victim), and a page on a rebound DNS name reaches a
 * server on 127.0.0.1 under its own name (to read the local mailbox).
 *
 * - `hostGuard` answers 421 to a request whose host (the Host header, or
 *   X-Forwarded-Host from a proxy that TRUST_PROXY trusts) is not
 *   PUBLIC_URL's host. Outside production, where the server listens on
 *   127.0.0.1, `localhost`, `127.0.0.1` and `[::1]` on any port are
 *   answered too. Under /api the refusal is the JSON error envelope,
 *   elsewhere a line of plain text.
 * - `pinToPublicUrl` rewrites a request's host and protocol to PUBLIC_URL's
 *   before Auth.js reads them, so every sign-in link, callback and redirect
 *   it builds starts with PUBLIC_URL whatever the request said.
 */
import type { RequestHandler } from "express";
import { HttpError } from "./errors";

export interface HostPolicy {
  /** PUBLIC_URL: the address people use to reach Covarion. */
  publicUrl: string;
  /** Production answers PUBLIC_URL's host only; elsewhere loopback names too. */
  production: boolean;
}

interface HostName {
  /** Lower-case name; an IPv6 address keeps its brackets. */
  name: string;
  /** The port, or null when the host names none. */
  port: string | null;
}

const hostPattern = /^(\[[0-9a-f:.]+\]|[a-z0-9-]+(?:\.[a-z0-9-]+)*)(?::(\d{1,5}))?$/i;
const loopbackNames = new Set(["localhost", "127.0.0.1", "[::1]"]);

/** Splits a Host header value into name and port; null when it is not a plain host. */
export function parseHost(value: string | undefined): HostName | null {
  const match = value === undefined ? null : hostPattern.exec(value.trim());
  if (!match) return null;
  return { name: (match[1] as string).toLowerCase(), port: match[2] ?? null };
}

/** True for localhost, 127.0.0.1 and [::1] on any port. */
export function isLoopbackHost(value: string | undefined): boolean {
  const host = parseHost(value);
  return host !== null && loopbackNames.has(host.name);
}

/** A predicate telling whether a request's host is one this server answers for. */
export function allowedHost(policy: HostPolicy): (value: string | undefined) => boolean {
  const url = new URL(policy.publicUrl);
  const defaultPort = url.protocol === "https:" ? "443" : "80";
  const own = `${url.hostname.toLowerCase()}:${url.port || defaultPort}`;
  return (value) => {
    const host = parseHost(value);
    if (!host) return false;
    if (`${host.name}:${host.port ?? defaultPort}` === own) return true;
    return !policy.production && loopbackNames.has(host.name);
  };
}

/** Refuses requests addressed to another host (421 Misdirected Request). */
export function hostGuard(policy: HostPolicy): RequestHandler {
  const allowed = allowedHost(policy);
  const publicHost = new URL(policy.publicUrl).host;
  const accepted = policy.production
    ? publicHost
    : `${publicHost} or localhost, 127.0.0.1 and [::1] on any port`;
  return (req, res, next) => {
    const host = req.host;
    if (allowed(host)) return next();
    const message =
      `This server answers requests for ${accepted} only; this one was addressed to ${host ? JSON.stringify(host) : "no host"}.` +
      " If that is the address you use, set PUBLIC_URL to it.";
    if (req.path === "/api" || req.path.startsWith("/api/"))
      return next(new HttpError(421, "misdirected_request", message));
    res.status(421).type("text/plain").send(`${message}\n`);
  };
}

/**
 * Makes the request look as if it had been made to PUBLIC_URL (host and
 * protocol; forwarded-host and forwarded-protocol headers dropped), for the
 * handlers that build absolute addresses from the request (Auth.js).
 */
export function pinToPublicUrl(publicUrl: string): RequestHandler {
  const url = new URL(publicUrl);
  const protocol = url.protocol.slice(0, -1);
  return (req, _res, next) => {
    req.headers.host = url.host;
    delete req.headers["x-forwarded-host"];
    delete req.headers["x-forwarded-proto"];
    Object.defineProperty(req, "protocol", {
      value: protocol,
      configurable: true,
      enumerable: true,
    });
    next();
  };
}
