/**
 * Auth.js configuration for Express (`@auth/express`), mounted at /api/auth.
 *
 * Two ways in, both with database sessions through the Drizzle adapter:
 * - provider id `nodemailer`: an e-mail link sent through Covarion's mailer
 *   (the local mail fake in demo/development, SMTP_URL in production);
 * - provider id `institution`: OpenID Connect against the configured
 *   identity provider (the local fake in demo/development, OIDC_* in
 *   production). Its addresses are trusted, so an account is linked to an
 *   existing person with the same address.
 *
 * After sign-in the browser goes to the `callbackUrl` it asked for when that
 * is on this site, else to /studies. Auth.js's own pages are replaced by the
 * web app's /sign-in screen (errors arrive as `?error=<type>`).
 */
import Nodemailer from "@auth/core/providers/nodemailer";
import { DrizzleAdapter } from "@auth/drizzle-adapter";
import type { ExpressAuthConfig } from "@auth/express";
import type { Database } from "../../db/client";
import { accounts, sessions, users, verificationTokens } from "../../db/schema";
import { linkMail, type Mailer } from "../services/mailer";

export const emailProviderId = "nodemailer";
export const institutionProviderId = "institution";

export interface InstitutionProvider {
  issuer: string;
  clientId: string;
  clientSecret: string;
  name: string;
}

export interface AuthDeps {
  db: Database;
  mailer: Mailer;
  institution: InstitutionProvider | null;
  secret: string;
  /** Force Secure cookies (PUBLIC_URL is https); otherwise Auth.js follows the request's protocol. */
  secureCookies: boolean;
  log: (error: unknown, context: string) => void;
}

interface OidcProfile {
  sub: string;
  email?: string;
  name?: string;
  preferred_username?: string;
}

export function authConfig(deps: AuthDeps): ExpressAuthConfig {
  const providers: ExpressAuthConfig["providers"] = [
    Nodemailer({
      id: emailProviderId,
      name: "E-mail link",
      server: deps.mailer.server,
      from: deps.mailer.from,
      maxAge: 24 * 60 * 60,
      async sendVerificationRequest({ identifier, url, expires }) {
        const hours = Math.max(1, Math.round((expires.getTime() - Date.now()) / 3_600_000));
        await deps.mailer.send(
          linkMail({
            to: identifier,
            subject: "Your sign-in link for Covarion",
            lines: [
              `Someone (hopefully you) asked to sign in to Covarion as ${identifier}.`,
              `The link below signs you in. It works once and expires in ${hours} hour${hours === 1 ? "" : "s"}.`,
            ],
            linkLabel: "Sign in to Covarion",
            url,
            footer: "If you did not ask for this, you can ignore this e-mail.",
          }),
        );
      },
    }),
  ];
  if (deps.institution) {
    const inst = deps.institution;
    providers.push({
      id: institutionProviderId,
      name: inst.name,
      type: "oidc",
      issuer: inst.issuer,
      clientId: inst.clientId,
      clientSecret: inst.clientSecret,
      checks: ["pkce", "state", "nonce"],
      authorization: { params: { scope: "openid email profile" } },
      allowDangerousEmailAccountLinking: true,
      profile(profile: OidcProfile) {
        return {
          id: profile.sub,
          email: profile.email?.trim().toLowerCase() ?? null,
          name: profile.name ?? profile.preferred_username ?? null,
        };
      },
    });
  }
  return {
    // Auth.js builds its links from the request's host and protocol; server/app.ts pins both to
    // PUBLIC_URL before Auth.js runs (server/http/host-check.ts), so the host it trusts is ours.
    trustHost: true,
    secret: deps.secret,
    ...(deps.secureCookies ? { useSecureCookies: true } : {}),
    // Sessions it writes or deletes reach request look-ups at once: every write clears the read cache (db/read-cache.ts).
    adapter: DrizzleAdapter(deps.db, {
      usersTable: users,
      accountsTable: accounts,
      sessionsTable: sessions,
      verificationTokensTable: verificationTokens,
    }),
    session: { strategy: "database" },
    providers,
    pages: { signIn: "/sign-in", error: "/sign-in", verifyRequest: "/sign-in" },
    callbacks: {
      signIn: ({ user }) => typeof user.email === "string" && user.email.length > 0,
      redirect: ({ url, baseUrl }) => {
        const origin = new URL(baseUrl).origin;
        const target = url.startsWith("/") ? new URL(url, origin) : URL.parse(url);
        if (!target || target.origin !== origin) return `${origin}/studies`;
        if (target.pathname === "/" || target.pathname === "") return `${origin}/studies`;
        return target.toString();
      },
    },
    logger: {
      error: (error) => deps.log(error, "sign-in"),
      warn: () => {},
      debug: () => {},
    },
  };
}
