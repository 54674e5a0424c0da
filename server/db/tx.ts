import type pg from "pg";
import type PgBoss from "pg-boss";
import { drizzle } from "drizzle-orm/node-postgres";
import * as schema from "./schema";
import type { Database, Db } from "./index";
import type { LiveEvent } from "../../shared/schemas/queue";
import { notify } from "../services/events";

export interface Tx {
  db: Db;
  client: pg.PoolClient;
  /** Queues a job that exists only if this transaction commits. */
  send(queue: string, data: object): Promise<void>;
  /** Queues one job per item the same way, a thousand to a statement. */
  sendMany(queue: string, data: object[]): Promise<void>;
  /** Tells every open page about a change, delivered at commit. */
  notify(event: LiveEvent): Promise<void>;
}

/** Jobs (and rows) written by one statement when many are queued at once. */
export const SEND_CHUNK = 1000;

/**
 * Runs `fn` in one transaction on one connection, with Drizzle, pg-boss and NOTIFY all on it,
 * so a row and the job that needs it are committed together or not at all.
 */
export async function withTx<T>(database: Database, boss: PgBoss, fn: (tx: Tx) => Promise<T>): Promise<T> {
  const client = await database.pool.connect();
  try {
    await client.query("begin");
    const tx: Tx = {
      db: drizzle(client, { schema }),
      client,
      send: async (queue, data) => {
        await boss.send(queue, data, { db: { executeSql: (text, values) => client.query(text, values) } });
      },
      // pg-boss's insert takes each queue's own retry, expiry and retention settings, as send does.
      sendMany: async (queue, data) => {
        for (let i = 0; i < data.length; i += SEND_CHUNK) {
          const jobs = data.slice(i, i + SEND_CHUNK).map((d) => ({ name: queue, data: d }));
          await boss.insert(jobs, { db: { executeSql: (text, values) => client.query(text, values) } });
        }
      },
      notify: (event) => notify(client, event),
    };
    try {
      const result = await fn(tx);
      await client.query("commit");
      return result;
    } catch (err) {
      await client.query("rollback").catch(() => {});
      throw err;
    }
  } finally {
    client.release();
  }
}
