/**
 * The API's views of the signed-in person, the sign-in options and the
 * local mailbox, as the server sends them (server/routes/system.ts,
 * server/dev/mail-fake.ts) and the web app reads them.
 */

/** GET /api/me */
export interface Me {
  id: string;
  email: string;
  name: string | null;
}

/** A demo account offered on the sign-in screen (demo mode only). */
export interface DemoAccount {
  email: string;
  role: string;
  name: string;
}

/** GET /api/auth-options: the sign-in methods this server offers. */
export interface AuthOptions {
  email: { providerId: string } | null;
  institution: { providerId: string; name: string } | null;
  demoAccounts: DemoAccount[];
  /** Whether the local mailbox (demo and development) is running. */
  mailbox: boolean;
}

/** A message caught by the local mailbox (GET /api/dev/mail; demo and development only). */
export interface MailMessage {
  id: string;
  to: string;
  subject: string;
  text: string;
  html: string | null;
  sentAt: string;
}

/** GET /api/system/workers: a live worker process (PostgreSQL server; none with the embedded database). */
export interface LiveWorker {
  id: string;
  host: string;
  pid: number;
  startedAt: string;
  /** Its last heartbeat. */
  seenAt: string;
  /** Chunks of permutation tests it stored in the last minute. */
  chunksLastMinute: number;
}
