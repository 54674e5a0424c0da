import { eq, sql } from "drizzle-orm";
import { scans, studio } from "../../server/db/schema";
import path from "node:path";
import { previewKey, thumbKey } from "../../server/storage/keys";
import { isStorageError } from "../../server/storage/storage";
import { notify } from "../../server/services/events";
import { noticeScanSettled } from "../../server/services/notices";
import { analysePayload } from "../../shared/schemas/jobs";
import { readScanHeader, writePreviews, ScanError } from "../pipeline/metadata";
import { ensureDecodedCopy } from "../pipeline/render/cut";
import { decodedCopyPath, roomForCopy, trimDecodedCopies, withDecodedCopy } from "../decoded-copies";
import { DEFAULT_SENSITIVITY, runSplit, type SplitDeps } from "./split";
import type { JobContext } from "./context";

export type AnalyseDeps = SplitDeps;

/**
 * Analyse one scan: read its pixel size, format, depth, colour and resolution, make its preview and
 * thumbnail, and move it queued → analysing → ready. A file that cannot be read is marked failed
 * with a message a person can act on (no retry: the original will not change). Anything else
 * (database, disk) throws so the queue retries with backoff. Safe to run twice.
 */
export async function analyseScan(deps: AnalyseDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { scanId } = analysePayload.parse(data);
  const { db, pool } = deps.database;
  const log = deps.log.child({ jobId: ctx.jobId, scanId });

  const [scan] = await db.select().from(scans).where(eq(scans.id, scanId));
  if (!scan) {
    log.warn("analyse: scan no longer exists, nothing to do");
    return;
  }
  if (scan.status === "ready" || scan.status === "duplicate") {
    log.info({ status: scan.status }, "analyse: already done");
    return;
  }

  const progress = async (stage: string, pct: number, extra: Partial<typeof scans.$inferInsert> = {}) => {
    await db
      .update(scans)
      .set({ stage, progress: pct, updatedAt: new Date(), ...extra })
      .where(eq(scans.id, scanId));
    await notify(pool, { kind: "scan", scanId, status: extra.status ?? "analysing" });
  };

  await progress("Reading the file", 5, {
    status: "analysing",
    error: null,
    errorCode: null,
    startedAt: new Date(),
    attempts: sql`${scans.attempts} + 1` as unknown as number,
  });

  const [studioRow] = await db.select({ defaultDpi: studio.defaultDpi }).from(studio).limit(1);
  const defaultDpi = studioRow?.defaultDpi ?? deps.config.defaultDpi;

  // Notices: a failure, and perhaps a finished intake. Queuing one never fails the job.
  const settled = (failed: boolean) =>
    noticeScanSettled(deps.boss, scan, failed).catch((err: unknown) => log.warn({ err }, "analyse: notice not queued"));

  try {
    // One local copy of the original for the whole analysis (on S3: fetched once into the cache).
    await deps.library
      .withLocalFile(scan.originalKey, (original) => analyseFile(original))
      .catch((err: unknown) => {
        if (!isStorageError(err, "missing")) throw err;
        throw new ScanError(
          "unreadable",
          "The original is missing from the library. Restore it from a backup, or drop the scan in the inbox again.",
        );
      });
  } catch (err) {
    if (err instanceof ScanError) {
      await progress("Failed", 100, { status: "failed", error: err.message, errorCode: err.code });
      log.warn({ code: err.code, reason: err.message }, "analyse: scan failed");
      await settled(true);
      return;
    }
    const last = ctx.retryCount >= ctx.retryLimit;
    const message = (err as Error).message;
    await progress(last ? "Failed" : "Will retry", last ? 100 : 0, {
      status: last ? "failed" : "queued",
      errorCode: last ? "worker" : null,
      error: last
        ? `Analysis failed after ${ctx.retryCount + 1} attempts: ${message}`
        : `Attempt ${ctx.retryCount + 1} failed (${message}); retrying.`,
    }).catch(() => {});
    if (last) await settled(true);
    throw err;
  }
  await settled(false);

  async function analyseFile(original: string) {
    const { info, inspected } = await readScanHeader(original, { defaultDpi, maxPixels: deps.config.maxPixels });
    await progress("Making the preview", 35, {
      width: info.width,
      height: info.height,
      format: info.format,
      bitDepth: info.bitDepth,
      channels: info.channels,
      colourSpace: info.colourSpace,
      hasIccProfile: info.hasIccProfile,
      iccDescription: info.iccDescription,
      hasAlpha: info.hasAlpha,
      dpiX: info.dpi.x,
      dpiY: info.dpi.y,
      dpiSource: info.dpi.source,
      resolutionOrigin: info.dpi.origin,
      fileDpiX: info.dpi.source === "embedded" ? info.dpi.x : null,
      fileDpiY: info.dpi.source === "embedded" ? info.dpi.y : null,
      fileResolutionOrigin: info.dpi.source === "embedded" ? info.dpi.origin : null,
    });
    if (deps.config.testAnalyseDelayMs > 0) await holdFor(deps.config.testAnalyseDelayMs, ctx.signal);
    // A scan decoded in full for its preview and its split is decoded once, into the copy its
    // render will cut from (worker/decoded-copies.ts); the preview and the split read that copy.
    const copies = deps.config.decodedCopies;
    const copyFile = decodedCopyPath(copies, scan!.sha256);
    const copy = copyFile ? await ensureDecodedCopy(original, inspected, deps.config.maxPixels, copyFile, await roomForCopy(copies)) : null;
    if (copy === "written") await trimDecodedCopies(copies, copyFile!);
    const pKey = previewKey(scanId);
    const tKey = thumbKey(scanId);
    // Made in scratch, then stored (locally a rename into place; on S3 an upload).
    await deps.library.withScratch(async (dir) => {
      const previewPath = path.join(dir, "preview.jpg");
      const thumbPath = path.join(dir, "thumb.jpg");
      // Read through a link, so that a trim elsewhere cannot pull the copy away while it is read.
      await withDecodedCopy(copies, copy ? scan!.sha256 : "", (decoded) =>
        writePreviews(original, { previewPath, thumbPath, maxPixels: deps.config.maxPixels, decoded: decoded ?? undefined }),
      );
      await deps.library.put(pKey, previewPath, { move: true });
      await deps.library.put(tKey, thumbPath, { move: true });
    });
    await progress("Finding the pieces", 70, {
      previewKey: pKey,
      thumbKey: tKey,
      analysedAt: new Date(),
    });
    const [analysed] = await db.select().from(scans).where(eq(scans.id, scanId));
    const proposed = await runSplit(deps, analysed!, DEFAULT_SENSITIVITY, original);
    log.info({ width: info.width, height: info.height, dpi: info.dpi, proposed }, "analyse: scan ready");
  }
}

/** Waits `ms`, ending early (with an error, so the job is released) when the worker stops. */
export function holdFor(ms: number, signal?: AbortSignal) {
  return new Promise<void>((resolve, reject) => {
    const t = setTimeout(resolve, ms);
    signal?.addEventListener("abort", () => {
      clearTimeout(t);
      reject(new Error("worker stopping; job released"));
    });
  });
}
