/**
 * Health, sign-in options and the signed-in person.
 *
 * GET /api/health        → { ok: true, version }
 * GET /api/auth-options  → enabled sign-in methods and, in demo mode, the demo accounts
 * GET /api/me            → { id, email, name } or 401
 */
import { Router } from "express";
import { demoPeople } from "../../db/seed";
import { authorize } from "../auth/permissions";
import { emailProviderId, institutionProviderId } from "../auth/auth-config";
import { signedInUser } from "../auth/session";
import { noQuery, validate } from "../http/validate";
import type { RouteDeps } from "./deps";

export function systemRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get("/health", authorize("health.read"), validate({ query: noQuery }), (_req, res) => {
    res.json({ ok: true, version: deps.version });
  });
  router.get(
    "/auth-options",
    authorize("auth.options"),
    validate({ query: noQuery }),
    (_req, res) => {
      const demo = deps.config.demo && deps.config.devServices;
      res.json({
        email: { providerId: emailProviderId },
        institution: deps.institution
          ? { providerId: institutionProviderId, name: deps.institution.name }
          : null,
        demoAccounts: demo
          ? demoPeople.map((p) => ({ email: p.email, role: p.role, name: p.name }))
          : [],
        mailbox: deps.mailbox !== null,
      });
    },
  );
  router.get("/me", authorize("me.read"), validate({ query: noQuery }), (_req, res) => {
    const user = signedInUser(res);
    res.json({ id: user.id, email: user.email, name: user.name });
  });
  return router;
}
