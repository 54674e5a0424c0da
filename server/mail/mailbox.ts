import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import { mailboxMessageSchema, type MailboxMessage, type MailboxSummary } from "../../shared/schemas/mail";

/**
 * The local fake's mailbox on disk: one `<id>.eml` (the message as received over SMTP) and one
 * `<id>.json` (parsed) per message. Ids start with the arrival time in milliseconds, so names
 * sort by time; the folder outlives restarts. The fake writes it, the server and tests read it.
 */

export const newMailboxId = () => `${String(Date.now()).padStart(13, "0")}-${crypto.randomBytes(4).toString("hex")}`;

/** Writes both files of one message, each through a temporary name and a rename. */
export async function storeMessage(dir: string, id: string, raw: Buffer, parsed: MailboxMessage): Promise<void> {
  await fs.mkdir(dir, { recursive: true });
  for (const [name, data] of [
    [`${id}.eml`, raw],
    [`${id}.json`, JSON.stringify(parsed, null, 2)],
  ] as const) {
    const tmp = path.join(dir, `.${name}.${process.pid}.tmp`);
    await fs.writeFile(tmp, data);
    await fs.rename(tmp, path.join(dir, name));
  }
}

/** Every message, newest first. */
export async function listMailbox(dir: string): Promise<MailboxMessage[]> {
  let names: string[];
  try {
    names = await fs.readdir(dir);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === "ENOENT") return [];
    throw err;
  }
  const ids = names.filter((n) => /^\d{13}-[0-9a-f]{8}\.json$/.test(n)).map((n) => n.slice(0, -5));
  ids.sort().reverse();
  const out: MailboxMessage[] = [];
  for (const id of ids) {
    const m = await readMailboxMessage(dir, id);
    if (m) out.push(m);
  }
  return out;
}

export async function readMailboxMessage(dir: string, id: string): Promise<MailboxMessage | null> {
  if (!/^\d{13}-[0-9a-f]{8}$/.test(id)) return null;
  try {
    return mailboxMessageSchema.parse(JSON.parse(await fs.readFile(path.join(dir, `${id}.json`), "utf8")));
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === "ENOENT") return null;
    throw err;
  }
}

export const summary = (m: MailboxMessage): MailboxSummary => ({
  id: m.id,
  receivedAt: m.receivedAt,
  from: m.from,
  to: m.to,
  subject: m.subject,
});
