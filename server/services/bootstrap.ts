import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { count } from "drizzle-orm";
import type { Config } from "../config";
import type { Db } from "../db";
import { studio, users } from "../db/schema";
import { createUser } from "./users";

/** The session secret: from the environment, else generated once and kept in the data folder. */
export function sessionSecret(cfg: Config): string {
  if (cfg.sessionSecret) return cfg.sessionSecret;
  const file = path.join(cfg.dataDir, "session-secret");
  try {
    return fs.readFileSync(file, "utf8").trim();
  } catch {
    fs.mkdirSync(cfg.dataDir, { recursive: true });
    const secret = crypto.randomBytes(48).toString("base64url");
    fs.writeFileSync(file, secret, { mode: 0o600, flag: "wx" });
    return fs.readFileSync(file, "utf8").trim();
  }
}

export interface FirstAdmin {
  email: string;
  password: string;
  generated: boolean;
  file: string | null;
}

/**
 * On an empty user table, creates the first admin: from PLATEN_ADMIN_EMAIL / PLATEN_ADMIN_PASSWORD,
 * else admin@platen.local with a random password written to .data/first-admin.txt (mode 600).
 */
export async function ensureFirstAdmin(db: Db, cfg: Config): Promise<FirstAdmin | null> {
  const [row] = await db.select({ n: count() }).from(users);
  if ((row?.n ?? 0) > 0) return null;
  const email = cfg.adminEmail ?? "admin@platen.local";
  const generated = !cfg.adminPassword;
  const password = cfg.adminPassword ?? crypto.randomBytes(9).toString("base64url");
  await createUser(db, { email, name: "Studio admin", role: "admin", password });
  let file: string | null = null;
  if (generated) {
    file = firstAdminFile(cfg);
    fs.mkdirSync(cfg.dataDir, { recursive: true });
    fs.writeFileSync(file, `e-mail: ${email}\npassword: ${password}\n`, { mode: 0o600 });
  }
  return { email, password, generated, file };
}

/** Where a generated first admin's password is kept until that admin chooses their own. */
export function firstAdminFile(cfg: Pick<Config, "dataDir">): string {
  return path.join(cfg.dataDir, "first-admin.txt");
}

/**
 * Removes the generated first-admin password file once the admin it names has chosen a password
 * of their own (it no longer signs anyone in, and a password left in plain text helps nobody).
 * A file naming someone else, or none, is left alone. Returns whether it was removed.
 */
export function forgetFirstAdminPassword(cfg: Pick<Config, "dataDir">, email: string): boolean {
  if (!firstAdminPasswordKept(cfg, email)) return false;
  fs.rmSync(firstAdminFile(cfg), { force: true });
  return true;
}

/** Whether the generated first-admin password file is still kept, naming `email`: that account still has it. */
export function firstAdminPasswordKept(cfg: Pick<Config, "dataDir">, email: string): boolean {
  let text: string;
  try {
    text = fs.readFileSync(firstAdminFile(cfg), "utf8");
  } catch {
    return false;
  }
  const named = /^e-mail: (.+)$/m.exec(text)?.[1]?.trim().toLowerCase();
  return named === email.trim().toLowerCase();
}

/** `file` as the start log shows it: from the checkout when it is inside it, else in full. */
export function shownPath(root: string, file: string): string {
  const rel = path.relative(root, file);
  return rel && !rel.startsWith("..") && !path.isAbsolute(rel) ? rel : file;
}

/**
 * The start log's lines on how to sign in. A generated password is shown with where it is kept
 * and the advice to choose one's own; a password given in PLATEN_ADMIN_PASSWORD is never echoed
 * into the log. On later starts the kept file is named only while it still exists.
 */
export function signInAdvice(admin: FirstAdmin | null, cfg: Pick<Config, "dataDir">, root: string): string[] {
  if (admin?.generated) {
    return [
      `  Sign in as ${admin.email} with password ${admin.password}${admin.file ? ` (also saved in ${shownPath(root, admin.file)})` : ""}.`,
      "  Then choose a password of your own on Your account; the saved copy is removed when you do.",
    ];
  }
  if (admin) return [`  Sign in as ${admin.email} with the password set in PLATEN_ADMIN_PASSWORD.`];
  const file = firstAdminFile(cfg);
  if (fs.existsSync(file)) {
    return [
      `  Sign in with your account. The first admin's generated password is still in ${shownPath(root, file)}:`,
      "  choose a password of your own on Your account and it is removed.",
    ];
  }
  return ["  Sign in with your account."];
}

/** Creates the studio row on first start. Returns true when it was created now. */
export async function ensureStudio(db: Db, cfg: Config, name: string, demo: boolean): Promise<boolean> {
  const created = await db
    .insert(studio)
    .values({ id: 1, name, defaultDpi: cfg.defaultDpi, demo })
    .onConflictDoNothing()
    .returning({ id: studio.id });
  return created.length > 0;
}
