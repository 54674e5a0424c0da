import type PgBoss from "pg-boss";
import path from "node:path";
import { and, eq, sql } from "drizzle-orm";
import type { Database } from "../../server/db";
import { fragments, outputs, scans } from "../../server/db/schema";
import { notify } from "../../server/services/events";
import type { Storage } from "../../server/storage/storage";
import { isStorageError } from "../../server/storage/storage";
import type { S3Storage } from "../../server/storage/s3";
import { queueOffsiteCopy } from "../../server/services/offsite";
import type { Logger } from "../../server/logger";
import type { Config } from "../../server/config";
import { renderPayload } from "../../shared/schemas/jobs";
import type { RecipeInput } from "../../shared/schemas/recipes";
import { isRenderError, renderFragment } from "../pipeline/render";
import { isScanError } from "../pipeline/metadata";
import { recipeVersionFor } from "../../server/services/recipes";
import { settleBatchItem } from "../../server/services/batches";
import type { JobContext } from "./context";

export interface RenderDeps {
  database: Database;
  /** The queue, for the "batch finished" notice when this job closes a batch. */
  boss?: PgBoss;
  library: Storage;
  /** With an off-site bucket configured, each new master is queued for copying there. */
  offsite?: S3Storage | null;
  config: Config;
  log: Logger;
}

export const masterKey = (fragmentId: string) => `masters/${fragmentId}.tif`;
export const webKey = (fragmentId: string, format: "jpeg" | "webp") =>
  `web/${fragmentId}.${format === "jpeg" ? "jpg" : "webp"}`;

/**
 * Renders one approved fragment at one revision: the upright master and the web copy. A newer
 * revision or a fragment no longer approved makes the job a no-op; a revision already rendered is
 * not rendered again. Errors throw, so the queue retries; the last attempt records the message.
 */
export async function renderFragmentJob(
  deps: RenderDeps,
  data: unknown,
  ctx: JobContext,
): Promise<void> {
  const { fragmentId, revision, batchItemId } = renderPayload.parse(data);
  const { db, pool } = deps.database;
  const log = deps.log.child({ jobId: ctx.jobId, fragmentId, revision, batchItemId });
  const settle = async (state: "running" | "done" | "failed", error: string | null = null) => {
    if (batchItemId) await settleBatchItem(db, batchItemId, state, error, { boss: deps.boss });
  };
  const [row] = await db.select().from(fragments).where(eq(fragments.id, fragmentId));
  if (!row || row.status !== "approved" || row.mergedInto) {
    await settle("failed", "The fragment is no longer approved.");
    return log.info("render: fragment no longer approved");
  }
  if (row.revision !== revision) {
    // A newer edit queued its own render; this batch item follows whatever that makes.
    await settle("done");
    return log.info({ current: row.revision }, "render: a newer revision will be rendered");
  }
  const recipe = await recipeVersionFor(db, fragmentId);
  const made = (await db.select().from(outputs).where(eq(outputs.fragmentId, fragmentId))).filter(
    (o) => o.kind !== "preset",
  );
  if (
    made.length >= 2 &&
    made.every((o) => o.revision === revision && o.recipeVersionId === recipe.id)
  ) {
    await db.update(fragments).set({ renderState: "done" }).where(eq(fragments.id, fragmentId));
    await settle("done");
    await notify(pool, { kind: "scan", scanId: row.scanId });
    return log.info("render: already rendered with this recipe version");
  }
  const [scan] = await db.select().from(scans).where(eq(scans.id, row.scanId));
  if (!scan) return;
  await settle("running");

  const setState = async (state: "rendering" | "done" | "failed", error: string | null = null) => {
    await db
      .update(fragments)
      .set({ renderState: state, renderError: error })
      .where(and(eq(fragments.id, fragmentId), eq(fragments.revision, revision)));
    await notify(pool, { kind: "scan", scanId: row.scanId });
  };
  await setState("rendering");

  const webFormat = row.shape === "cutout" ? "webp" : "jpeg";
  const mKey = masterKey(fragmentId);
  const wKey = webKey(fragmentId, webFormat);
  try {
    // Rendered in scratch from a local copy of the original, then stored: master first, web copy
    // last, each atomically (locally a rename into place; on S3 an upload, in parts when large).
    const r = await deps.library
      .withScratch((dir) =>
        deps.library.withLocalFile(scan.originalKey, async (source) => {
          const masterPath = path.join(dir, path.basename(mKey));
          const webPath = path.join(dir, path.basename(wKey));
          const made = await renderFragment(
            {
              source,
              geometry: {
                box: row.box,
                angle: row.angle,
                rect: row.rect,
                outline: row.outline,
                shape: row.shape,
              },
              dpi: {
                x: scan.dpiX ?? deps.config.defaultDpi,
                y: scan.dpiY ?? scan.dpiX ?? deps.config.defaultDpi,
              },
              maxPixels: deps.config.maxPixels,
              metadata: { title: row.title ?? undefined },
              recipe: {
                recipe: { name: "recipe", steps: recipe.steps as RecipeInput["steps"] },
                background: scan.splitBackground?.rgb,
              },
            },
            { masterPath, webPath, webFormat },
          );
          await deps.library.put(mKey, masterPath, { move: true });
          await deps.library.put(wKey, webPath, { move: true });
          return made;
        }),
      )
      .catch((err: unknown) => {
        if (isStorageError(err, "missing"))
          throw Object.assign(new Error("The original of this scan is missing from the library."), {
            permanent: true,
          });
        throw err;
      });
    const now = new Date();
    for (const o of [
      {
        kind: "master" as const,
        key: mKey,
        format: "tiff",
        width: r.master.width,
        height: r.master.height,
        bitDepth: r.master.bitDepth,
        hasAlpha: r.master.hasAlpha,
        dpi: r.master.dpi,
        bytes: r.master.bytes,
      },
      {
        kind: "web" as const,
        key: wKey,
        format: r.web.format,
        width: r.web.width,
        height: r.web.height,
        bitDepth: 8,
        hasAlpha: webFormat === "webp",
        dpi: r.web.dpi,
        bytes: r.web.bytes,
      },
    ]) {
      const [saved] = await db
        .insert(outputs)
        .values({ fragmentId, revision, recipeVersionId: recipe.id, ...o })
        .onConflictDoUpdate({
          target: [outputs.fragmentId, outputs.kind],
          targetWhere: sql`${outputs.kind} in ('master', 'web')`,
          set: { ...o, revision, recipeVersionId: recipe.id, updatedAt: now, createdAt: now },
        })
        .returning({ id: outputs.id });
      // Every new master also goes off-site when a bucket is configured (a job of its own).
      if (o.kind === "master" && deps.offsite && deps.boss) await queueOffsiteCopy(deps.database, deps.boss, saved!.id, mKey);
    }
    await setState("done");
    await settle("done");
    log.info({ master: `${r.master.width}×${r.master.height}`, dpi: r.master.dpi }, "render: done");
  } catch (err) {
    // Bad geometry or an unreadable scan will not improve with a retry.
    const permanent =
      isScanError(err) ||
      (isRenderError(err) && err.code !== "failed") ||
      (err as { permanent?: boolean }).permanent === true;
    const last = permanent || ctx.retryCount >= ctx.retryLimit;
    await setState(last ? "failed" : "rendering", last ? (err as Error).message : null).catch(
      () => {},
    );
    if (last) await settle("failed", (err as Error).message).catch(() => {});
    if (permanent) return log.warn({ reason: (err as Error).message }, "render: failed");
    throw err;
  }
}
