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
