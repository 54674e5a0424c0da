import { Router } from "express";
import { sql } from "drizzle-orm";
import { API } from "../../../shared/api";
import { handle } from "../define";
import type { AppDeps } from "../../app";
import { lastTidy, runTidy, tidyLibrary } from "../../services/library-tidy";
import { recordAudit } from "../../services/audit";
import { unknownAmong } from "../../services/library-refile";
import { withTx } from "../../db/tx";
import { QUEUES } from "../../jobs/queues";
import { conflict } from "../../errors";
import { formatBytes } from "../../../shared/units";
import type { LibraryOverview } from "../../../shared/schemas/library";

/** The library screen's data and its one action: tidy away the files nothing names any more. */
export function libraryRouter(deps: AppDeps): Router {
  const router = Router();
  const { db } = deps.database;
  handle(router, API.library, async (): Promise<LibraryOverview> => {
    let offsite: LibraryOverview["offsite"] = null;
    if (deps.offsite) {
      const { rows } = await db.execute<{ status: string; n: number }>(
        sql`select status, count(*)::int as n from offsite_copies group by status`,
      );
      offsite = {
        target: deps.offsite.description.replace(/^the bucket /, ""),
        counts: Object.fromEntries(rows.map((r) => [r.status, r.n])),
      };
    }
    const kept = await db.execute<{ id: string; title: string | null; position: number; scan: string; files: number; bytes: string }>(sql`
      select f.id, f.title, f.position, s.original_name as scan, count(o.id)::int as files, sum(o.bytes)::bigint as bytes
        from fragments f join scans s on s.id = f.scan_id join outputs o on o.fragment_id = f.id
       where f.status = 'rejected' and f.merged_into is null
       group by f.id, s.original_name order by sum(o.bytes) desc, f.id`);
    return {
      rejectedKept: {
        pieces: kept.rows.length,
        files: kept.rows.reduce((n, r) => n + r.files, 0),
        bytes: kept.rows.reduce((n, r) => n + Number(r.bytes), 0),
        // Named on the screen as every piece is (fragmentName), from its title, scan and position.
        largest: kept.rows.slice(0, 5).map((r) => ({
          id: r.id,
          title: r.title,
          scanName: r.scan,
          position: r.position,
          files: r.files,
          bytes: Number(r.bytes),
        })),
      },
      library: { kind: deps.library.kind, description: deps.library.description },
      offsite,
      tidy: await tidyLibrary(db, deps.library, { dryRun: true }),
      lastTidy: await lastTidy(db),
      tidyEveryHours: deps.config.tidyEveryHours,
    };
  });
  handle(router, API.libraryTidy, async ({ body, req, user }) => {
    const report = body.dryRun
      ? await tidyLibrary(db, deps.library, { dryRun: true })
      : await runTidy(db, deps.library, user.id, { allowLarge: body.allowLarge, upTo: body.upTo });
    if (report.held) throw conflict(`${report.removed ? "No left-over file was removed." : "Nothing was removed."} ${report.caution}`);
    req.log.info({ removed: report.removed, bytes: report.removedBytes, dryRun: report.dryRun }, "library tidied");
    if (!report.dryRun)
      await recordAudit(db, {
        action: "library.tidy",
        subjectType: "studio",
        subjectId: null,
        summary: `Tidied the library: removed ${report.removed} left-over ${report.removed === 1 ? "file" : "files"} (${formatBytes(report.removedBytes)})`,
        after: { removed: report.removed, bytes: report.removedBytes },
      });
    return report;
  });
  handle(router, API.libraryRefile, async ({ body, user, res }) => {
    const listed = await deps.library.list("originals/");
    const unknown = await unknownAmong(db, listed);
    if (unknown.length === 0) throw conflict("The database knows every original in the library: there is nothing to file again.");
    // A database that names none of them may be another library's: filing would bring this whole
    // archive into it, for good (scans are never deleted). Only on the admin's explicit word.
    if (unknown.length === listed.length && !body.anyway)
      throw conflict(
        `${listed.length === 1 ? "The database does not name the library's one original" : `The database names none of the library's ${listed.length} originals`}: it may not be this library's database. Filing them would bring the whole archive into it as new scans, which cannot be undone. Confirm it if this is the library's own database restored from an older backup.`,
      );
    // An original already waiting to be filed (asked before) is not queued again.
    const { rows: waiting } = await db.execute<{ key: string }>(
      sql`select data->>'key' as key from pgboss.job where name = ${QUEUES.libraryRefile} and state in ('created', 'retry', 'active')`,
    );
    const busy = new Set(waiting.map((w) => w.key));
    const fresh = unknown.filter((k) => !busy.has(k));
    await withTx(deps.database, deps.boss, async (tx) => {
      await tx.sendMany(
        QUEUES.libraryRefile,
        fresh.map((key) => ({ key, actorId: user.id, actorEmail: user.email })),
      );
      await recordAudit(tx, {
        action: "library.refile",
        subjectType: "studio",
        subjectId: null,
        summary: `Asked for the ${unknown.length === 1 ? "original" : `${unknown.length} originals`} the database did not know to be filed again as new scans${fresh.length < unknown.length ? ` (${unknown.length - fresh.length} already waiting)` : ""}`,
        after: { originals: unknown.length, queued: fresh.length },
      });
    });
    res.status(202);
    return { originals: unknown.length, queued: fresh.length };
  });
  return router;
}
