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
    file = path.join(cfg.dataDir, "first-admin.txt");
    fs.mkdirSync(cfg.dataDir, { recursive: true });
    fs.writeFileSync(file, `e-mail: ${email}\npassword: ${password}\n`, { mode: 0o600 });
  }
  return { email, password, generated, file };
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
