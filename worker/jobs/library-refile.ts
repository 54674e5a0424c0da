import type PgBoss from "pg-boss";
import type { Database } from "../../server/db";
import type { Storage } from "../../server/storage/storage";
import type { Logger } from "../../server/logger";
import { refileOriginal } from "../../server/services/library-refile";
import { refilePayload } from "../../shared/schemas/jobs";
import { QUEUES } from "../../server/jobs/queues";
import type { JobContext } from "./context";

/** Files one original the database does not know again, for the admin who asked. */
export async function libraryRefileJob(
  deps: { database: Database; boss: PgBoss; library: Storage; log: Logger },
  data: unknown,
  ctx: JobContext,
): Promise<void> {
  const { key, actorId, actorEmail } = refilePayload.parse(data);
  const log = deps.log.child({ jobId: ctx.jobId, key });
  const r = await refileOriginal({ ...deps, log }, key, { id: actorId, email: actorEmail });
  // Written a moment ago, it may be a filing under way: looked at again once it is old enough.
  if (r.outcome === "too-young")
    await deps.boss.send(QUEUES.libraryRefile, { key, actorId, actorEmail }, { startAfter: Math.ceil(r.retryInMs / 1000) + 1 });
  log.info({ outcome: r.outcome }, "refile: done");
}
