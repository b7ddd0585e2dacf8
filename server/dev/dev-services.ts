/**
 * Starts the local stand-ins for hosted services (demo and development):
 * the SMTP mail fake and the fake OpenID Connect identity provider, and
 * builds the mailer and institution-provider settings the app uses — or,
 * in production, builds them from configuration alone.
 */
import { demoPeople } from "../../db/seed";
import type { InstitutionProvider } from "../auth/auth-config";
import type { Config } from "../config";
import { createMailer, type Mailer } from "../services/mailer";
import { startIdentityFake, type IdentityFake } from "./identity-fake";
import { startMailFake, type MailFake } from "./mail-fake";

export interface Services {
  mailer: Mailer;
  mailFake: MailFake | null;
  identityFake: IdentityFake | null;
  institution: InstitutionProvider | null;
  close(): Promise<void>;
}

export const institutionCallbackPath = "/api/auth/callback/institution";

const roleNotes: Record<string, string> = {
  owner: "demo Owner",
  analyst: "demo Analyst",
  reviewer: "demo Reviewer",
  viewer: "demo Viewer",
};

export async function startServices(config: Config): Promise<Services> {
  let mailFake: MailFake | null = null;
  let identityFake: IdentityFake | null = null;
  try {
    if (config.devServices && !config.smtpUrl) mailFake = await startMailFake();
    const mailer = createMailer(
      config.smtpUrl ?? {
        host: mailFake?.host ?? "127.0.0.1",
        port: mailFake?.port ?? 25,
        secure: false,
        ignoreTLS: true,
      },
      config.mailFrom,
    );
    let institution: InstitutionProvider | null = config.oidc;
    if (!institution && config.devServices) {
      identityFake = await startIdentityFake({
        people: demoPeople.map((p) => ({ email: p.email, name: p.name, note: roleNotes[p.role] })),
        clientSecret: config.secrets.identityClientSecret,
        cookieKeys: config.secrets.identityCookieKeys,
        redirectUris: [`${config.publicUrl}${institutionCallbackPath}`],
        callbackPath: institutionCallbackPath,
      });
      institution = {
        issuer: identityFake.issuer,
        clientId: identityFake.clientId,
        clientSecret: identityFake.clientSecret,
        name: `${config.oidcName} (local test service)`,
      };
    }
    const started = { mailFake, identityFake };
    return {
      mailer,
      mailFake,
      identityFake,
      institution,
      async close() {
        await Promise.all([started.mailFake?.close(), started.identityFake?.close()]);
      },
    };
  } catch (error) {
    await Promise.all([mailFake?.close(), identityFake?.close()]);
    throw error;
  }
}
