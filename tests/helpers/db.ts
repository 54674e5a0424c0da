import crypto from "node:crypto";
import pg from "pg";

/** Databases for tests, each cloned from a template that holds the migrated schema. */
/** This run's id (seconds since 1970 and the runner's pid), set by scripts/test.ts. */
export function runId(): string {
  const id = process.env.PLATEN_TEST_RUN;
  if (!id || !/^\d+_\d+$/.test(id)) throw new Error("PLATEN_TEST_RUN is not set: run the tests with `npm test`.");
  return id;
}
export const runPrefix = () => `platen_t_${runId()}_`;
export const templateDb = () => `${runPrefix()}template`;

export function adminUrl(): string {
  const url = process.env.PLATEN_TEST_ADMIN_URL;
  if (!url) throw new Error("PLATEN_TEST_ADMIN_URL is not set: run the tests with `npm test`.");
  return url;
}

export function urlFor(name: string): string {
  const u = new URL(adminUrl());
  u.pathname = `/${name}`;
  return u.toString();
}

export async function withAdmin<T>(fn: (c: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: adminUrl() });
  await client.connect();
  try {
    return await fn(client);
  } finally {
    await client.end();
  }
}

/** A fresh database for one test file, with the whole schema already in place. */
export async function createTestDatabase(): Promise<{ name: string; url: string; drop: () => Promise<void> }> {
  const name = `${runPrefix()}${crypto.randomBytes(4).toString("hex")}`;
  // CREATE DATABASE ... TEMPLATE needs the template to have no other sessions; retry briefly.
  for (let i = 0; ; i++) {
    try {
      await withAdmin((c) => c.query(`create database ${name} template ${templateDb()}`));
      break;
    } catch (err) {
      if (i >= 20) throw err;
      await new Promise((r) => setTimeout(r, 100 + Math.random() * 200));
    }
  }
  return {
    name,
    url: urlFor(name),
    drop: () => withAdmin((c) => c.query(`drop database if exists ${name} with (force)`)).then(() => {}),
  };
}
