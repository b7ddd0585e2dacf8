/**
 * Response headers beyond helmet's defaults.
 *
 * - `Permissions-Policy`: Covarion uses no camera, microphone, location,
 *   motion sensors, payment, device ports or screen capture, so no page of
 *   it (nor anything injected into one) may ask for them.
 * - `Cache-Control: no-store` on every /api answer: answers carry a
 *   person's studies and data, and must not stay in a browser's or a
 *   proxy's cache after sign-out. It is set when the response starts, so a
 *   route that chooses its own caching (an ETag-validated view, server-sent
 *   events) overrides it with `res.set("Cache-Control", …)`.
 */
import type { RequestHandler } from "express";

export const permissionsPolicy = [
  "accelerometer=()",
  "autoplay=()",
  "camera=()",
  "display-capture=()",
  "geolocation=()",
  "gyroscope=()",
  "hid=()",
  "magnetometer=()",
  "microphone=()",
  "midi=()",
  "payment=()",
  "serial=()",
  "usb=()",
  "xr-spatial-tracking=()",
].join(", ");

export const setPermissionsPolicy: RequestHandler = (_req, res, next) => {
  res.set("Permissions-Policy", permissionsPolicy);
  next();
};

export const noStoreByDefault: RequestHandler = (_req, res, next) => {
  res.set("Cache-Control", "no-store");
  next();
};
