import PgBoss from "pg-boss";
import { config } from "../config";
import type { Logger } from "../logger";
import { queuePolicies } from "./queues";

/**
 * Starts a pg-boss instance on the app database and makes sure every queue exists.
 * `supervise` runs maintenance (expiring jobs of dead workers); every process may do it,
 * pg-boss takes a lock so only one runs it at a time.
 */
export async function startBoss(opts: { url: string; log: Logger; supervise?: boolean }): Promise<PgBoss> {
  const cfg = config();
  const boss = new PgBoss({
    connectionString: opts.url,
    max: 4,
    application_name: `${process.env.PLATEN_PROCESS ?? "platen"}-boss`,
    supervise: opts.supervise ?? true,
    schedule: false,
    maintenanceIntervalSeconds: cfg.maintenanceSeconds,
    monitorStateIntervalSeconds: Math.max(cfg.maintenanceSeconds, 1),
  });
  // Only the error's own fields: a pg error can carry its whole client, which would flood the log.
  boss.on("error", (err: Error & { code?: string }) =>
    opts.log.error({ err: { type: err.name, message: err.message, code: err.code, stack: err.stack } }, "job queue error"),
  );
  await boss.start();
  for (const [name, policy] of Object.entries(queuePolicies())) {
    const existing = await boss.getQueue(name);
    if (!existing) {
      try {
        await boss.createQueue(name, { name, ...policy });
      } catch (err) {
        // Another process created it first.
        if (!(await boss.getQueue(name))) throw err;
      }
    } else {
      await boss.updateQueue(name, { name, ...policy });
    }
  }
  return boss;
}
