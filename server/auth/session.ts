/**
 * Reads the signed-in person from the Auth.js database session.
 *
 * Auth.js (database strategy) stores a random session token in the cookie
 * `authjs.session-token` (`__Secure-authjs.session-token` over https) and a
 * row in `sessions`. `loadSession` looks the token up once per API request
 * and sets `res.locals.user`; `createSession` makes a row and cookie of the
 * same kind (demo one-tap sign-in).
 */
import { randomBytes } from "node:crypto";
import { eq, sql } from "drizzle-orm";
import type { Request, RequestHandler, Response } from "express";
import type { Database } from "../../db/client";
import { perDatabase } from "../../db/prepared";
import { cachedRead } from "../../db/read-cache";
import { sessions, users } from "../../db/schema";

export interface SessionUser {
  id: string;
  email: string;
  name: string | null;
}

export const sessionCookieName = (secure: boolean) =>
  secure ? "__Secure-authjs.session-token" : "authjs.session-token";
/** Auth.js's default session lifetime: 30 days. */
export const sessionMaxAgeSeconds = 30 * 24 * 60 * 60;

/** Reads one cookie value from the request's Cookie header (no dependency on a parser). */
export function readCookie(req: Request, name: string): string | null {
  const header = req.headers.cookie;
  if (!header) return null;
  for (const part of header.split(";")) {
    const eq = part.indexOf("=");
    if (eq < 0) continue;
    if (part.slice(0, eq).trim() === name) {
      try {
        return decodeURIComponent(part.slice(eq + 1).trim());
      } catch {
        return null;
      }
    }
  }
  return null;
}

/** Middleware: sets `res.locals.user` to the session's person or null. */
export function loadSession(db: Database, clock: () => Date): RequestHandler {
  return async (req, res, next) => {
    const token =
      readCookie(req, sessionCookieName(req.secure)) ??
      readCookie(req, sessionCookieName(!req.secure));
    res.locals.user = token ? await userForSession(db, token, clock()) : null;
    next();
  };
}

const sessionRow = perDatabase((db) =>
  db
    .select({ id: users.id, email: users.email, name: users.name, expires: sessions.expires })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .where(eq(sessions.sessionToken, sql.placeholder("token")))
    .limit(1)
    .prepare("session_row"),
);

/** The person of an unexpired session, or null. The row is kept until the next write (db/read-cache.ts). */
export async function userForSession(
  db: Database,
  token: string,
  now: Date,
): Promise<SessionUser | null> {
  const [row] = await cachedRead(db, `session ${token}`, () => sessionRow(db).execute({ token }));
  if (!row || !row.email || !(row.expires > now)) return null;
  return { id: row.id, email: row.email, name: row.name };
}

/** The signed-in person, or null. */
export function currentUser(res: Response): SessionUser | null {
  return (res.locals.user as SessionUser | null | undefined) ?? null;
}

/** The signed-in person; throws when called on a route not behind `authorize`. */
export function signedInUser(res: Response): SessionUser {
  const user = currentUser(res);
  if (!user) throw new Error("signedInUser() called on a route that does not require a session");
  return user;
}

/**
 * Creates a database session for `userId` and sets the same cookie Auth.js
 * would (HttpOnly, SameSite=Lax, Secure over https or when `forceSecure`).
 */
export async function createSession(
  db: Database,
  req: Request,
  res: Response,
  userId: string,
  now: Date,
  forceSecure = false,
): Promise<void> {
  const secure = req.secure || forceSecure;
  const sessionToken = randomBytes(32).toString("hex");
  const expires = new Date(now.getTime() + sessionMaxAgeSeconds * 1000);
  await db.insert(sessions).values({ sessionToken, userId, expires });
  res.cookie(sessionCookieName(secure), sessionToken, {
    httpOnly: true,
    sameSite: "lax",
    secure,
    path: "/",
    expires,
  });
}
