/**
 * Lists the routes registered on an Express app by walking its router
 * stack (Express 5 / router 2 keep each layer's path as `rawPath`), with
 * the permission action each route's `authorize` middleware carries.
 * The authorization-matrix test enumerates routes with it, so a route
 * added without a matrix row fails that test.
 */
import type { Express } from "express";
import { permissionTag } from "../auth/permissions";

export interface RouteInfo {
  method: string;
  path: string;
  /** Actions of the `authorize` middlewares on the route (exactly one expected). */
  actions: string[];
}

interface Layer {
  rawPath?: unknown;
  handle: { stack?: Layer[] } & Record<PropertyKey, unknown>;
  route?: { path: unknown; methods: Record<string, boolean>; stack: Layer[] };
}

export function listRoutes(app: Express): RouteInfo[] {
  const out: RouteInfo[] = [];
  const root = (app as unknown as { router: { stack: Layer[] } }).router;
  walk(root.stack, "", out);
  return out;
}

function walk(stack: readonly Layer[], prefix: string, out: RouteInfo[]): void {
  for (const layer of stack) {
    if (layer.route) {
      const path = join(prefix, String(layer.route.path));
      const actions = layer.route.stack
        .map((l) => l.handle[permissionTag])
        .filter((a): a is string => typeof a === "string");
      for (const method of Object.keys(layer.route.methods).filter(
        (m) => layer.route?.methods[m],
      )) {
        out.push({ method: method.toUpperCase(), path, actions });
      }
    } else if (Array.isArray(layer.handle.stack)) {
      const mount = typeof layer.rawPath === "string" ? layer.rawPath : "";
      walk(layer.handle.stack, join(prefix, mount), out);
    }
  }
}

function join(a: string, b: string): string {
  const joined = `${a.replace(/\/+$/, "")}/${b.replace(/^\/+/, "")}`;
  return joined.length > 1 ? joined.replace(/\/+$/, "") : joined;
}
