import type { AddressInfo } from "node:net";
import { SMTPServer } from "smtp-server";
import { simpleParser, type AddressObject } from "mailparser";
import { newMailboxId, storeMessage } from "./mailbox";

/**
 * The project's local SMTP server for development and tests: it speaks real SMTP on 127.0.0.1,
 * accepts every message (no sign-in, no TLS) and keeps it in a mailbox folder (see mailbox.ts).
 * It never relays anything anywhere.
 */
export interface MailFake {
  host: string;
  port: number;
  dir: string;
  close(): Promise<void>;
}

const MAX_MESSAGE_BYTES = 10 * 1024 * 1024;

const addresses = (a: AddressObject | AddressObject[] | undefined): string[] =>
  (Array.isArray(a) ? a : a ? [a] : []).flatMap((o) => o.value.map((v) => v.address ?? "").filter(Boolean));

export async function startMailFake(opts: {
  dir: string;
  host?: string;
  port?: number;
  onMessage?: (id: string) => void;
}): Promise<MailFake> {
  const host = opts.host ?? "127.0.0.1";
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS"],
    logger: false,
    size: MAX_MESSAGE_BYTES,
    banner: "Platen local mail fake: messages are kept, never delivered",
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("error", callback);
      stream.on("end", () => {
        if (stream.sizeExceeded)
          return callback(Object.assign(new Error("Message too large for the local mailbox"), { responseCode: 552 }));
        const raw = Buffer.concat(chunks);
        const id = newMailboxId();
        simpleParser(raw)
          .then((mail) => {
            const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
            return storeMessage(opts.dir, id, raw, {
              id,
              receivedAt: new Date().toISOString(),
              from: addresses(mail.from)[0] ?? (session.envelope.mailFrom ? session.envelope.mailFrom.address : ""),
              to: envelopeTo.length ? envelopeTo : addresses(mail.to),
              subject: mail.subject ?? "",
              messageId: mail.messageId ?? null,
              text: mail.text ?? "",
              html: typeof mail.html === "string" ? mail.html : null,
            });
          })
          .then(
            () => {
              opts.onMessage?.(id);
              callback();
            },
            (err: Error) => callback(err),
          );
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(opts.port ?? 0, host, () => {
      server.off("error", reject);
      resolve();
    });
  });
  // A broken client connection must not stop the server.
  server.on("error", () => {});
  const port = (server.server.address() as AddressInfo).port;
  return {
    host,
    port,
    dir: opts.dir,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
