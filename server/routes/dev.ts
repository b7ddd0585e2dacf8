/**
 * Demo and development helpers, registered only when the app runs outside
 * production (in production these paths answer 404 like any unknown route).
 *
 * GET  /api/dev/mail            → messages caught by the local mail fake, newest first
 * POST /api/dev/demo-sign-in    → { email } of a demo person; starts a real database session (demo mode only)
 */
import { eq } from "drizzle-orm";
import { Router } from "express";
import { z } from "zod";
import { demoPeople } from "../../db/seed";
import { users } from "../../db/schema";
import { authorize } from "../auth/permissions";
import { createSession } from "../auth/session";
import { notFound } from "../http/errors";
import { emailSchema, noQuery, parsed, validate } from "../http/validate";
import type { RouteDeps } from "./deps";

const demoSignIn = { body: z.strictObject({ email: emailSchema }), query: noQuery };

export function devRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get("/dev/mail", authorize("dev.mail"), validate({ query: noQuery }), (_req, res) => {
    if (!deps.mailbox) throw notFound("The local mailbox is not running.");
    res.json(deps.mailbox.messages());
  });
  router.post(
    "/dev/demo-sign-in",
    authorize("dev.demo-sign-in"),
    validate(demoSignIn),
    async (req, res) => {
      if (!deps.config.demo) throw notFound("Demo sign-in is available in demo mode only.");
      const { email } = parsed(res, demoSignIn).body;
      if (!demoPeople.some((p) => p.email === email))
        throw notFound(`${email} is not a demo account.`);
      const [user] = await deps.db.select().from(users).where(eq(users.email, email)).limit(1);
      if (!user) throw notFound(`The demo account ${email} has not been created in this database.`);
      await createSession(
        deps.db,
        req,
        res,
        user.id,
        deps.clock(),
        deps.config.publicUrl.startsWith("https:"),
      );
      res.json({ id: user.id, email: user.email, name: user.name });
    },
  );
  return router;
}
