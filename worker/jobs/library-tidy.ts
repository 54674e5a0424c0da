import type { Database } from "../../server/db";
import type { Config } from "../../server/config";
import type { Storage } from "../../server/storage/storage";
import type { Logger } from "../../server/logger";
import { regularTidyDue, runTidy } from "../../server/services/library-tidy";
import { recordAudit } from "../../server/services/audit";
import { formatBytes } from "../../shared/units";
import type { JobContext } from "./context";

/**
 * The worker's regular tidy: removes left-over library files past their grace period, when the
 * last tidy (the worker's or an admin's) is PLATEN_TIDY_EVERY_HOURS old. Workers ask every hour.
 */
export async function libraryTidyJob(
  deps: { database: Database; library: Storage; log: Logger; config: Pick<Config, "tidyEveryHours"> },
  _data: unknown,
  ctx: JobContext,
): Promise<void> {
  if (!(await regularTidyDue(deps.database.db, deps.config.tidyEveryHours))) return;
  const report = await runTidy(deps.database.db, deps.library, null);
  // Held, it removed only unfinished writes (no database names them; runTidy records those).
  if (report.held)
    return deps.log.warn(
      { jobId: ctx.jobId, caution: report.caution, removed: report.removed, bytes: report.removedBytes },
      "library tidy held: an admin can look at it on the Library screen",
    );
  const kept = report.folders.reduce((n, f) => n + f.tooYoung, 0);
  deps.log.info(
    { jobId: ctx.jobId, removed: report.removed, bytes: report.removedBytes, tooYoung: kept, failed: report.failed },
    "library tidied",
  );
  if (report.removed)
    await recordAudit(
      deps.database.db,
      {
        action: "library.tidy",
        subjectType: "studio",
        subjectId: null,
        summary: `The worker tidied the library: removed ${report.removed} left-over ${report.removed === 1 ? "file" : "files"} (${formatBytes(report.removedBytes)})`,
        after: { removed: report.removed, bytes: report.removedBytes },
      },
      { actor: null },
    );
}
