import type PgBoss from "pg-boss";
import type { Database } from "../../server/db";
import type { Storage } from "../../server/storage/storage";
import type { Logger } from "../../server/logger";
import { refileOriginals } from "../../server/services/library-refile";
import { refilePayload } from "../../shared/schemas/jobs";
import type { JobContext } from "./context";

/** Files the library's originals the database does not know again, for the admin who asked. */
export async function libraryRefileJob(
  deps: { database: Database; boss: PgBoss; library: Storage; log: Logger },
  data: unknown,
  ctx: JobContext,
): Promise<void> {
  const { actorId, actorEmail } = refilePayload.parse(data);
  const log = deps.log.child({ jobId: ctx.jobId });
  const report = await refileOriginals({ ...deps, log }, { id: actorId, email: actorEmail });
  log.info({ filed: report.filed.length, damaged: report.damaged.length, failed: report.failed.length, tooYoung: report.tooYoung }, "refile: done");
}
