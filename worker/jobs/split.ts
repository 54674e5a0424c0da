import { eq } from "drizzle-orm";
import type PgBoss from "pg-boss";
import type { Database } from "../../server/db";
import { scans } from "../../server/db/schema";
import { withTx } from "../../server/db/tx";
import { replaceProposals } from "../../server/services/fragments";
import { notify } from "../../server/services/events";
import type { Storage } from "../../server/storage/storage";
import { isStorageError } from "../../server/storage/storage";
import type { Logger } from "../../server/logger";
import type { Config } from "../../server/config";
import { splitPayload } from "../../shared/schemas/jobs";
import { splitScan } from "../pipeline/split";
import { decodedCopyPath, roomForCopy, trimDecodedCopies } from "../decoded-copies";
import { ScanError } from "../pipeline/metadata";
import type { JobContext } from "./context";

export interface SplitDeps {
  database: Database;
  boss: PgBoss;
  library: Storage;
  config: Config;
  log: Logger;
}

export const DEFAULT_SENSITIVITY = 0.5;

type ScanRow = typeof scans.$inferSelect;

/**
 * Finds the pieces on an analysed scan and records them as proposed fragments, replacing the
 * previous split's proposals (approved and drawn fragments stay). Leaves the scan ready with a
 * stage line saying how many pieces were found, or that none were.
 */
export async function runSplit(deps: SplitDeps, scan: ScanRow, sensitivity: number, localOriginal?: string): Promise<number> {
  // The scan stays decoded for its render (worker/decoded-copies.ts), when there is room.
  const decodedCopy = decodedCopyPath(deps.config.decodedCopies, scan.sha256) ?? undefined;
  const split = async (original: string) => {
    const result = await splitScan(original, {
      dpi: scan.dpiSource === "assumed" && scan.dpiX ? scan.dpiX : undefined,
      setDpi: scan.dpiSource === "set" && scan.dpiX ? { x: scan.dpiX, y: scan.dpiY ?? scan.dpiX } : undefined,
      sensitivity,
      maxPixels: deps.config.maxPixels,
      decodedCopy,
      decodedCopyMaxBytes: decodedCopy ? await roomForCopy(deps.config.decodedCopies) : 0,
    });
    if (result.decodedCopy === "written") await trimDecodedCopies(deps.config.decodedCopies, decodedCopy);
    return result;
  };
  const result = localOriginal
    ? await split(localOriginal)
    : await deps.library.withLocalFile(scan.originalKey, split).catch((err: unknown) => {
        if (isStorageError(err, "missing"))
          throw new ScanError(
            "unreadable",
            "The original is missing from the library. Restore it from a backup, or drop the scan in the inbox again.",
          );
        throw err;
      });
  const found = await withTx(deps.database, deps.boss, async (tx) => {
    const n = await replaceProposals(tx, scan, result.fragments, scan.splitRun + 1);
    await tx.db
      .update(scans)
      .set({
        status: "ready",
        stage:
          result.fragments.length === 0
            ? "No pieces found on this scan"
            : `${result.fragments.length} ${result.fragments.length === 1 ? "piece" : "pieces"} found`,
        progress: 100,
        splitBackground: result.background,
        splitSensitivity: sensitivity,
        splitRun: scan.splitRun + 1,
        splitAt: new Date(),
        updatedAt: new Date(),
      })
      .where(eq(scans.id, scan.id));
    await tx.notify({ kind: "scan", scanId: scan.id, status: "ready" });
    return n;
  });
  return found;
}

/** The re-split job: an operator asked for another split with a different sensitivity. */
export async function splitScanJob(deps: SplitDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { scanId, sensitivity } = splitPayload.parse(data);
  const log = deps.log.child({ jobId: ctx.jobId, scanId });
  const [scan] = await deps.database.db.select().from(scans).where(eq(scans.id, scanId));
  if (!scan) return log.warn("split: scan no longer exists, nothing to do");
  await deps.database.db
    .update(scans)
    .set({
      status: "analysing",
      stage: "Finding the pieces again",
      progress: 50,
      updatedAt: new Date(),
    })
    .where(eq(scans.id, scanId));
  await notify(deps.database.pool, { kind: "scan", scanId, status: "analysing" });
  try {
    const n = await runSplit(deps, scan, sensitivity);
    log.info({ sensitivity, proposed: n }, "split: done");
  } catch (err) {
    const last = err instanceof ScanError || ctx.retryCount >= ctx.retryLimit;
    if (last) {
      // The analysis itself stands: the scan stays ready, with the reason the split failed.
      await deps.database.db
        .update(scans)
        .set({
          status: "ready",
          stage: `The split failed: ${(err as Error).message}`,
          progress: 100,
          updatedAt: new Date(),
        })
        .where(eq(scans.id, scanId));
      await notify(deps.database.pool, { kind: "scan", scanId, status: "ready" });
    }
    if (err instanceof ScanError) return;
    throw err;
  }
}
