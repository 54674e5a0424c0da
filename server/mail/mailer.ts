import nodemailer from "nodemailer";
import type { Config } from "../config";
import type { Logger } from "../logger";
import type { Message } from "./layout";

export interface OutgoingMail extends Message {
  to: string;
  /** Shown as the sender's name: the studio, so people know who writes. */
  studio: string;
  /** A stable Message-ID: the same message sent again carries the same one, so it can be told apart. */
  messageId?: string;
}

export interface Mailer {
  /** False when no mail server is configured; `reason` then says what to set. */
  enabled: boolean;
  reason: string | null;
  /** True when mail goes to the project's local SMTP fake (development and tests). */
  fake: boolean;
  /** Hands one message to the mail server; resolves once the server has accepted it. */
  send(mail: OutgoingMail): Promise<{ messageId: string }>;
  close(): void;
}

export const MAIL_OFF_REASON =
  "E-mail is not set up on this server: set PLATEN_SMTP_HOST (with PLATEN_SMTP_PORT, PLATEN_SMTP_USER, PLATEN_SMTP_PASSWORD and PLATEN_MAIL_FROM) to send invitations, password resets and notices.";

/** A nodemailer transport from the configuration (PLATEN_SMTP_*), or a mailer that refuses clearly. */
export function createMailer(cfg: Config["mail"], log?: Logger): Mailer {
  if (!cfg.host) {
    return {
      enabled: false,
      reason: MAIL_OFF_REASON,
      fake: false,
      send: () => Promise.reject(new Error(MAIL_OFF_REASON)),
      close: () => {},
    };
  }
  const fake = cfg.mailboxDir !== undefined;
  const transport = nodemailer.createTransport({
    host: cfg.host,
    port: cfg.port,
    secure: cfg.secure,
    // The local fake speaks plain SMTP on 127.0.0.1; a real server is asked for STARTTLS when it offers it.
    ignoreTLS: fake,
    auth: cfg.user ? { user: cfg.user, pass: cfg.password ?? "" } : undefined,
    connectionTimeout: 15_000,
    greetingTimeout: 10_000,
    socketTimeout: 30_000,
  });
  return {
    enabled: true,
    reason: null,
    fake,
    async send(mail) {
      const info = await transport.sendMail({
        from: { name: `${mail.studio} · Platen`, address: cfg.from },
        to: mail.to,
        subject: mail.subject,
        text: mail.text,
        html: mail.html,
        messageId: mail.messageId,
      });
      log?.info({ to: mail.to, subject: mail.subject, messageId: info.messageId }, "mail sent");
      return { messageId: info.messageId };
    },
    close: () => transport.close(),
  };
}

/** The host part of Message-IDs Platen makes: the sender address's domain. */
export function messageIdFor(cfg: Config["mail"], id: string): string {
  const domain = cfg.from.split("@")[1] ?? "platen.local";
  return `<${id}@${domain}>`;
}
