/** What route modules receive from `createApp` (no route imports the composition root). */
import type { Database } from "../../db/client";
import type { Config } from "../config";
import type { Mailer } from "../services/mailer";
import type { CaughtMail } from "../dev/mail-fake";
import type { InstitutionProvider } from "../auth/auth-config";

export interface RouteDeps {
  db: Database;
  config: Config;
  mailer: Mailer;
  clock: () => Date;
  /** The local mail fake's messages (demo/development), or null. */
  mailbox: { messages(): CaughtMail[] } | null;
  institution: InstitutionProvider | null;
  version: string;
}
