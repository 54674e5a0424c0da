/**
 * Tx.sendMany (server/db/tx.ts): many jobs queued with a few statements, inside the caller's
 * transaction, with the same settings one send gives. Real PostgreSQL and pg-boss.
 */
import type PgBoss from "pg-boss";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Database } from "../server/db";
import { testEnvironment } from "./helpers/stack";

let t: Awaited<ReturnType<typeof testEnvironment>>;
let database: Database;
let boss: PgBoss;

beforeAll(async () => {
  t = await testEnvironment({});
  const { overrideConfig } = await import("../server/config");
  const cfg = overrideConfig(t.env);
  const { openDatabase, migrateDatabase } = await import("../server/db");
  const { startBoss } = await import("../server/jobs/boss");
  database = openDatabase(cfg.databaseUrl, 4);
  await migrateDatabase(database.db);
  boss = await startBoss({ url: cfg.databaseUrl, log: (await import("../server/logger")).logger, supervise: false });
});

afterAll(async () => {
  await boss?.stop({ graceful: false, wait: true }).catch(() => {});
  await database?.close();
  await t?.cleanup();
});

/** The queued jobs of a queue with the settings pg-boss gave them. */
async function jobs(queue: string) {
  const { rows } = await database.pool.query<{
    data: { n?: number };
    retry_limit: number;
    retry_delay: number;
    retry_backoff: boolean;
    expire_in: string;
    policy: string | null;
    state: string;
  }>(
    "select data, retry_limit, retry_delay, retry_backoff, expire_in::text, policy, state from pgboss.job where name = $1 order by (data->>'n')::int",
    [queue],
  );
  return rows;
}

describe("queueing many jobs in one transaction", () => {
  it("queues every item across the statement boundary, each as one send would", async () => {
    const { withTx, SEND_CHUNK } = await import("../server/db/tx");
    const { QUEUES } = await import("../server/jobs/queues");
    const n = 2 * SEND_CHUNK + 345;
    let statements = 0;
    await withTx(database, boss, async (tx) => {
      const query = tx.client.query.bind(tx.client);
      tx.client.query = ((...args: Parameters<typeof query>) => (statements++, query(...args))) as typeof query;
      await tx.sendMany(
        QUEUES.offsiteCheck,
        Array.from({ length: n }, (_, i) => ({ n: i })),
      );
      tx.client.query = query;
      await tx.send(QUEUES.offsiteCheck, { n: n });
    });
    expect(statements).toBe(3); // ⌈2345 / 1000⌉
    const rows = await jobs(QUEUES.offsiteCheck);
    expect(rows.map((r) => r.data.n)).toEqual(Array.from({ length: n + 1 }, (_, i) => i));
    // The queue's own settings (server/jobs/queues.ts), exactly as the single send got them.
    const single = rows.at(-1)!;
    expect(single).toMatchObject({ state: "created", retry_backoff: true, retry_delay: 2 });
    for (const r of rows) {
      expect({ ...r, data: null }).toEqual({ ...single, data: null });
    }
  });

  it("queues nothing when the transaction rolls back", async () => {
    const { withTx } = await import("../server/db/tx");
    const { QUEUES } = await import("../server/jobs/queues");
    const before = (await jobs(QUEUES.render)).length;
    await expect(
      withTx(database, boss, async (tx) => {
        await tx.sendMany(
          QUEUES.render,
          Array.from({ length: 1500 }, (_, i) => ({ fragmentId: "00000000-0000-0000-0000-000000000000", revision: 1, n: i })),
        );
        throw new Error("changed my mind");
      }),
    ).rejects.toThrow("changed my mind");
    expect((await jobs(QUEUES.render)).length).toBe(before);
  });
});
