import path from "node:path";
import pg from "pg";
import { drizzle, type NodePgDatabase } from "drizzle-orm/node-postgres";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import * as schema from "./schema";
import { config } from "../config";

export type Db = NodePgDatabase<typeof schema>;
export interface Database {
  pool: pg.Pool;
  db: Db;
  close(): Promise<void>;
}

/** Opens a pool and its Drizzle handle. */
export function openDatabase(url: string, max = 10): Database {
  const pool = new pg.Pool({ connectionString: url, max, application_name: process.env.PLATEN_PROCESS ?? "platen" });
  // A dropped idle connection must not take the process down; the pool replaces it.
  pool.on("error", () => {});
  const db = drizzle(pool, { schema });
  return { pool, db, close: () => pool.end() };
}

/** Creates the database named in `url` when it does not exist yet (connects to `postgres`). */
export async function ensureDatabaseExists(url: string): Promise<void> {
  const target = new URL(url);
  const name = decodeURIComponent(target.pathname.slice(1));
  const admin = new URL(url);
  admin.pathname = "/postgres";
  const client = new pg.Client({ connectionString: admin.toString() });
  await client.connect();
  try {
    const { rowCount } = await client.query("select 1 from pg_database where datname = $1", [name]);
    if (!rowCount) await client.query(`create database "${name.replace(/"/g, '""')}"`);
  } finally {
    await client.end();
  }
}

/** Applies drizzle-kit's generated migrations from drizzle/. */
export async function migrateDatabase(db: Db): Promise<void> {
  await migrate(db, { migrationsFolder: path.join(config().root, "drizzle") });
}

export { schema };

/** PostgreSQL's error fields, where a failed query's error (or what it wraps) has them. */
export interface PgErrorFields {
  /** The SQLSTATE, e.g. "23505" unique_violation (PostgreSQL manual, Appendix A). */
  code: string;
  constraint?: string;
}

/**
 * The PostgreSQL error behind `err`: the error itself when pg threw it, or the one Drizzle wraps
 * in its "Failed query" error (as `cause`). Null for anything else.
 * Example: if (pgError(err)?.code === "23505") … a unique index refused the row.
 */
export function pgError(err: unknown): PgErrorFields | null {
  for (let e = err, depth = 0; e && typeof e === "object" && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
    const code = (e as { code?: unknown }).code;
    if (typeof code === "string" && /^[0-9A-Z]{5}$/.test(code)) return { code, constraint: (e as { constraint?: string }).constraint };
  }
  return null;
}

/** A unique index (the one named, if given) refused the row: another transaction got there first. */
export function isUniqueClash(err: unknown, constraint?: string): boolean {
  const e = pgError(err);
  return e?.code === "23505" && (!constraint || e.constraint === constraint);
}
