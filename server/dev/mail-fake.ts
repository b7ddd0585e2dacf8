/**
 * A local SMTP server that catches every message (demo and development
 * only). The app's mailer sends to it over real SMTP; the messages are kept
 * in memory, newest first, for `GET /api/dev/mail` and the Mailbox screen.
 *
 * Listens on 127.0.0.1 on a free port; no authentication, no TLS.
 */
import type { AddressInfo } from "node:net";
import { simpleParser, type AddressObject } from "mailparser";
import { SMTPServer } from "smtp-server";
import type { MailMessage } from "../../contract/views/system";

/** A caught message, as GET /api/dev/mail answers it (contract/views/system.ts). */
export type CaughtMail = MailMessage;

export interface MailFake {
  readonly host: string;
  readonly port: number;
  /** Caught messages, newest first. */
  messages(): CaughtMail[];
  /** Forgets every caught message. */
  clear(): void;
  close(): Promise<void>;
}

/** Keeps at most this many messages (oldest dropped first). */
const keep = 500;

export async function startMailFake(
  options: { host?: string; port?: number; clock?: () => Date } = {},
): Promise<MailFake> {
  const host = options.host ?? "127.0.0.1";
  const clock = options.clock ?? (() => new Date());
  const caught: CaughtMail[] = [];
  let counter = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["AUTH", "STARTTLS"],
    logger: false,
    banner: "Covarion local mail fake",
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((mail) => {
          const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
          counter += 1;
          caught.unshift({
            id: `m${counter}`,
            to: envelopeTo.join(", ") || addressText(mail.to),
            subject: mail.subject ?? "",
            text: mail.text ?? "",
            html: typeof mail.html === "string" ? mail.html : null,
            sentAt: clock().toISOString(),
          });
          if (caught.length > keep) caught.length = keep;
          callback();
        })
        .catch((error: Error) => callback(error));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => {
      server.off("error", reject);
      resolve();
    });
  });
  const address = server.server.address() as AddressInfo;
  return {
    host,
    port: address.port,
    messages: () => caught.map((m) => ({ ...m })),
    clear: () => {
      caught.length = 0;
    },
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}

function addressText(to: AddressObject | AddressObject[] | undefined): string {
  if (!to) return "";
  return (Array.isArray(to) ? to : [to]).map((a) => a.text).join(", ");
}
