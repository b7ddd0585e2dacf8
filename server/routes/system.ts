/**
 * Health, sign-in options and the signed-in person.
 *
 * GET /api/health        → { ok: true, version }
 * GET /api/auth-options  → enabled sign-in methods and, in demo mode, the demo accounts
 * GET /api/me            → { id, email, name } or 401
 * GET /api/me/preferences       → { preferences: { [key]: value } } (what the screens remember for this person)
 * PUT /api/me/preferences/:key  { value } → { key, value }; keys and shapes from contract/preferences.ts
 * DELETE /api/me/preferences/:key → 204 (the screen falls back to its default)
 */
import { Router } from "express";
import { demoPeople } from "../../db/seed";
import { authorize } from "../auth/permissions";
import { emailProviderId, institutionProviderId } from "../auth/auth-config";
import { signedInUser } from "../auth/session";
import { z } from "zod";
import { preferenceKeys, preferenceSchemas } from "../../contract/preferences";
import type { AuthOptions, Me } from "../../contract/views/system";
import { HttpError, describeDetails, zodDetails } from "../http/errors";
import { noQuery, parsed, validate } from "../http/validate";
import { clearPreference, readPreferences, writePreference } from "../services/preferences";
import type { RouteDeps } from "./deps";

const preferenceParams = z.object({
  key: z.enum(preferenceKeys, { error: "is not a preference Covarion keeps" }),
});
const preferenceWrite = {
  params: preferenceParams,
  query: noQuery,
  body: z.object({ value: z.unknown() }).strict(),
};

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
      const options: AuthOptions = {
        email: { providerId: emailProviderId },
        institution: deps.institution
          ? { providerId: institutionProviderId, name: deps.institution.name }
          : null,
        demoAccounts: demo
          ? demoPeople.map((p) => ({ email: p.email, role: p.role, name: p.name }))
          : [],
        mailbox: deps.mailbox !== null,
      };
      res.json(options);
    },
  );
  router.get("/me", authorize("me.read"), validate({ query: noQuery }), (_req, res) => {
    const user = signedInUser(res);
    const me: Me = { id: user.id, email: user.email, name: user.name };
    res.json(me);
  });

  router.get(
    "/me/preferences",
    authorize("me.read"),
    validate({ query: noQuery }),
    async (_req, res) => {
      res.json({ preferences: await readPreferences(deps.db, signedInUser(res).id) });
    },
  );
  router.put(
    "/me/preferences/:key",
    authorize("me.preferences"),
    validate(preferenceWrite),
    async (_req, res) => {
      const { params, body } = parsed(res, preferenceWrite);
      const checked = preferenceSchemas[params.key].safeParse(body.value);
      if (!checked.success) {
        const details = zodDetails(checked.error, "body.value");
        throw new HttpError(400, "validation_failed", describeDetails(details), details);
      }
      await writePreference(deps.db, signedInUser(res).id, params.key, checked.data, deps.clock());
      res.json({ key: params.key, value: checked.data });
    },
  );
  router.delete(
    "/me/preferences/:key",
    authorize("me.preferences"),
    validate({ params: preferenceParams, query: noQuery }),
    async (_req, res) => {
      await clearPreference(
        deps.db,
        signedInUser(res).id,
        parsed(res, { params: preferenceParams }).params.key,
      );
      res.status(204).end();
    },
  );
  return router;
}
