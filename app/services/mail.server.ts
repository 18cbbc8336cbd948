import nodemailer, { type SMTPTransportOptions, type Transporter } from "nodemailer";
import { serverEnv } from "./env.server";

// Outgoing e-mail over SMTP. Locally (and in tests) every message goes to the SMTP sink that
// scripts/lib.sh starts (maildev on 127.0.0.1:11025, web UI on :11080); set SMTP_URL for a
// real relay with authentication. Code never sends directly: it queues a message in
// email_log (app/models/emails.server.ts) and the worker delivers it through this transport.

export type MailTransport = Transporter;

export type MailSettings = {
  SMTP_URL?: string;
  SMTP_HOST: string;
  SMTP_PORT: number;
};

// A message that cannot be handed over within these limits is marked failed and retried
// later; the outbox row stays locked while sending, so no call may hang for long.
const TIMEOUTS = { connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 30_000 } as const;

const LOOPBACK = new Set(["127.0.0.1", "localhost", "::1", "[::1]"]);

/** The transport options for the given settings (the environment by default). */
export function mailTransportOptions(settings: MailSettings = serverEnv()): SMTPTransportOptions {
  if (settings.SMTP_URL) {
    // smtps:// connects with TLS; smtp:// upgrades with STARTTLS when the server offers it.
    // User and password come from the URL.
    return { url: settings.SMTP_URL, ...TIMEOUTS };
  }
  const local = LOOPBACK.has(settings.SMTP_HOST);
  return {
    host: settings.SMTP_HOST,
    port: settings.SMTP_PORT,
    secure: false,
    // The local sink speaks plain SMTP; a remote host without SMTP_URL still gets STARTTLS.
    ignoreTLS: local,
    ...TIMEOUTS,
  };
}

/** A new transport; tests pass their own settings (e.g. a closed port). */
export function createMailTransport(settings?: MailSettings): MailTransport {
  return nodemailer.createTransport(mailTransportOptions(settings));
}

const globalForMail = globalThis as unknown as { __varrouteMailTransport?: MailTransport };

/** The process's shared transport, built from the environment on first use. */
export function mailTransport(): MailTransport {
  globalForMail.__varrouteMailTransport ??= createMailTransport();
  return globalForMail.__varrouteMailTransport;
}

/** The sender, e.g. `Varroute <bookings@varroute.test>` (env MAIL_FROM). */
export function mailFrom(): string {
  return serverEnv().MAIL_FROM;
}

/** The domain of the sender's address, for Message-IDs. */
export function mailDomain(from = mailFrom()): string {
  const match = /@([^>\s]+)>?\s*$/.exec(from);
  return match ? match[1].toLowerCase() : "varroute.local";
}
