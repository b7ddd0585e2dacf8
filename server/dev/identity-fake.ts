/**
 * A local OpenID Connect identity provider standing in for an institution's
 * sign-in service (demo and development only), built on the `oidc-provider`
 * package and listening on 127.0.0.1 on its own port.
 *
 * Its login page lists the demo people (and accepts any other address) and
 * finishes the login interaction itself; consent is granted automatically
 * for its one client, Covarion. Id tokens carry `email`, `email_verified`
 * and `name` (`conformIdTokenClaims: false`).
 *
 * Redirect URIs: the configured public URL's callback, and the same path on
 * any loopback host and port (so tests and local runs on other ports work).
 * Requests naming another host than a loopback name are refused (421).
 */
import { createHash, generateKeyPairSync } from "node:crypto";
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import express from "express";
import Provider, { type Configuration } from "oidc-provider";
import { isLoopbackHost } from "../http/host-check";
import { escapeHtml } from "../services/mailer";

export interface FakePerson {
  email: string;
  name: string;
  note?: string;
}

export interface IdentityFake {
  readonly issuer: string;
  readonly clientId: string;
  readonly clientSecret: string;
  close(): Promise<void>;
}

export interface IdentityFakeOptions {
  /** People offered on the login page. */
  people: readonly FakePerson[];
  clientSecret: string;
  cookieKeys: readonly string[];
  /** Allowed callback URLs besides loopback ones (production-like public URL). */
  redirectUris: readonly string[];
  /** Path of the callback on the app (loopback hosts are allowed on any port). */
  callbackPath: string;
  host?: string;
  port?: number;
}

const clientId = "covarion";

/** Subject identifier for an address: stable, opaque. */
export function subjectFor(email: string): string {
  return createHash("sha256").update(email.toLowerCase()).digest("hex").slice(0, 32);
}

export async function startIdentityFake(options: IdentityFakeOptions): Promise<IdentityFake> {
  const host = options.host ?? "127.0.0.1";
  const directory = new Map<string, FakePerson>();
  for (const person of options.people) directory.set(subjectFor(person.email), person);

  const app = express();
  app.disable("x-powered-by");
  // A page on a rebound DNS name reaches 127.0.0.1 under its own name: answer loopback names only.
  app.use((req, res, next) => {
    if (isLoopbackHost(req.get("host"))) return next();
    res
      .status(421)
      .type("text/plain")
      .send(
        "The local test identity service answers requests for localhost, 127.0.0.1 and [::1] only.\n",
      );
  });
  const server: Server = createServer(app);
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => resolve());
  });
  const { port } = server.address() as AddressInfo;
  const issuer = `http://${host}:${port}`;

  const { privateKey } = generateKeyPairSync("rsa", { modulusLength: 2048 });
  const jwk = {
    ...(privateKey.export({ format: "jwk" }) as Record<string, string>),
    kid: "fake-1",
    alg: "RS256",
    use: "sig",
  };

  const configuration: Configuration = {
    clients: [
      {
        client_id: clientId,
        client_secret: options.clientSecret,
        redirect_uris: [...options.redirectUris],
        grant_types: ["authorization_code"],
        response_types: ["code"],
        token_endpoint_auth_method: "client_secret_basic",
      },
    ],
    jwks: { keys: [jwk] },
    cookies: { keys: [...options.cookieKeys] },
    claims: { openid: ["sub"], email: ["email", "email_verified"], profile: ["name"] },
    conformIdTokenClaims: false,
    features: { devInteractions: { enabled: false } },
    ttl: {
      Interaction: 3600,
      Session: 8 * 3600,
      Grant: 8 * 3600,
      AccessToken: 3600,
      IdToken: 3600,
      AuthorizationCode: 300,
    },
    interactions: { url: (_ctx, interaction) => `/interaction/${interaction.uid}` },
    async findAccount(_ctx, sub) {
      const person = directory.get(sub);
      if (!person) return undefined;
      return {
        accountId: sub,
        async claims() {
          return { sub, email: person.email, email_verified: true, name: person.name };
        },
      };
    },
    async loadExistingGrant(ctx) {
      const accountId = ctx.oidc.session?.accountId;
      const client = ctx.oidc.client;
      if (!accountId || !client) return undefined;
      const existing = ctx.oidc.session?.grantIdFor(client.clientId);
      if (existing) {
        const grant = await ctx.oidc.provider.Grant.find(existing);
        if (grant) return grant;
      }
      const grant = new ctx.oidc.provider.Grant({ clientId: client.clientId, accountId });
      grant.addOIDCScope("openid email profile");
      await grant.save();
      return grant;
    },
  };
  const provider = new Provider(issuer, configuration);
  const allowed = provider.Client.prototype.redirectUriAllowed;
  provider.Client.prototype.redirectUriAllowed = function redirectUriAllowed(
    this: unknown,
    uri: string,
  ) {
    return allowed.call(this, uri) || isLoopbackCallback(uri, options.callbackPath);
  };

  app.get("/interaction/:uid", async (req, res, next) => {
    try {
      const details = await provider.interactionDetails(req, res);
      res.type("html").send(loginPage(details.uid, options.people));
    } catch (error) {
      next(error);
    }
  });
  app.post(
    "/interaction/:uid/login",
    express.urlencoded({ extended: false, limit: "8kb" }),
    async (req, res, next) => {
      try {
        await provider.interactionDetails(req, res);
        const email = String(req.body?.email ?? "")
          .trim()
          .toLowerCase();
        if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(email)) {
          res
            .status(400)
            .type("html")
            .send(
              page(
                "Sign-in",
                '<p>Enter a valid e-mail address.</p><p><a href="javascript:history.back()">Back</a></p>',
              ),
            );
          return;
        }
        const known = options.people.find((p) => p.email === email);
        const name = known?.name ?? (String(req.body?.name ?? "").trim() || email.split("@")[0]);
        const sub = subjectFor(email);
        directory.set(sub, { email, name });
        await provider.interactionFinished(
          req,
          res,
          { login: { accountId: sub } },
          { mergeWithLastSubmission: false },
        );
      } catch (error) {
        next(error);
      }
    },
  );
  app.use(provider.callback());

  return {
    issuer,
    clientId,
    clientSecret: options.clientSecret,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

function isLoopbackCallback(uri: string, callbackPath: string): boolean {
  const url = URL.parse(uri);
  if (!url || (url.protocol !== "http:" && url.protocol !== "https:")) return false;
  const loopback =
    url.hostname === "127.0.0.1" || url.hostname === "localhost" || url.hostname === "[::1]";
  return loopback && url.pathname === callbackPath && url.search === "" && url.hash === "";
}

function page(title: string, body: string): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(title)}</title>
<style>body{font-family:system-ui,sans-serif;max-width:28rem;margin:2rem auto;padding:0 1rem;color:#1b2430}button{display:block;width:100%;margin:.4rem 0;padding:.7rem;font-size:1rem;border:1px solid #8795a8;border-radius:.5rem;background:#f3f6fa;text-align:left;cursor:pointer}input{width:100%;box-sizing:border-box;padding:.6rem;margin:.25rem 0;font-size:1rem}small{color:#55606e}</style></head><body>${body}</body></html>`;
}

function loginPage(uid: string, people: readonly FakePerson[]): string {
  const action = `/interaction/${encodeURIComponent(uid)}/login`;
  const buttons = people
    .map(
      (p) =>
        `<form method="post" action="${action}"><input type="hidden" name="email" value="${escapeHtml(p.email)}"><button type="submit">${escapeHtml(p.name)}<br><small>${escapeHtml(p.email)}${p.note ? ` · ${escapeHtml(p.note)}` : ""}</small></button></form>`,
    )
    .join("\n");
  return page(
    "Institution sign-in (local test service)",
    `<h1>Institution sign-in</h1>
<p><small>Local test identity service for demo and development. Choose a person to sign in as.</small></p>
${buttons}
<h2>Someone else</h2>
<form method="post" action="${action}"><label>E-mail<input name="email" type="email" required autocomplete="off"></label><label>Name<input name="name" autocomplete="off"></label><button type="submit">Sign in</button></form>`,
  );
}
