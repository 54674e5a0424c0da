import type PgBoss from "pg-boss";
import crypto from "node:crypto";
import path from "node:path";
import { and, eq, sql } from "drizzle-orm";
import type { Database } from "../../server/db";
import { batchItems, fragments, outputs, presetVersions, scans } from "../../server/db/schema";
import { notify } from "../../server/services/events";
import { closeIfSettled, settleBatchItem } from "../../server/services/batches";
import { dedupeKey } from "../../server/services/output-batches";
import { studioRights } from "../../server/services/studio";
import { outputTitle } from "../../server/presenters/fragment";
import type { Storage } from "../../server/storage/storage";
import { isStorageError } from "../../server/storage/storage";
import type { Logger } from "../../server/logger";
import type { Config } from "../../server/config";
import { outputPayload } from "../../shared/schemas/jobs";
import { presetSchema } from "../../shared/schemas/presets";
import { isOutputError, outputExtension, renderOutput, rightsCarried } from "../pipeline/output";
import type { JobContext } from "./context";

export interface OutputDeps {
  database: Database;
  /** The queue, for the "batch finished" notice when this job closes a batch. */
  boss?: PgBoss;
  library: Storage;
  config: Config;
  log: Logger;
}

/**
 * Makes one batch item: a preset's output from the fragment's master. The same fragment revision,
 * recipe version and preset version, with the same title and rights written into the file
 * (rightsCarried), give the same file, made once and reused. Waits (by retrying)
 * for a master that is still being rendered; a cancelled item does nothing.
 */
export async function outputJob(deps: OutputDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { batchItemId } = outputPayload.parse(data);
  const { db, pool } = deps.database;
  const log = deps.log.child({ jobId: ctx.jobId, batchItemId });
  const [item] = await db.select().from(batchItems).where(eq(batchItems.id, batchItemId));
  if (!item || item.state === "cancelled") return;
  // Made already: this is a retry after the item was settled, whose close (or its notice) failed.
  if (item.state === "done") return removeRetired(deps, await closeIfSettled(db, item.batchId, { boss: deps.boss, again: true }));
  const fail = async (message: string) => {
    await settleBatchItem(db, batchItemId, "failed", message, { boss: deps.boss });
    await notify(pool, { kind: "worker" });
    log.warn({ reason: message }, "output: failed");
  };
  const [f] = await db.select().from(fragments).where(eq(fragments.id, item.fragmentId));
  const [pv] = await db.select().from(presetVersions).where(eq(presetVersions.id, item.presetVersionId!));
  if (!f || !pv) return fail("The fragment or the preset is gone.");
  if (f.status !== "approved") return fail("The fragment is no longer approved.");
  const [master] = await db
    .select()
    .from(outputs)
    .where(and(eq(outputs.fragmentId, f.id), eq(outputs.kind, "master")));
  if (!master || f.renderState !== "done" || master.revision !== f.revision) {
    const last = ctx.retryCount >= ctx.retryLimit;
    if (last) return fail("The fragment's master is not rendered; approve it again or retry once its render is done.");
    throw new Error("waiting for the fragment's master to be rendered");
  }
  await settleBatchItem(db, batchItemId, "running");
  // The piece's title and the studio's creator and copyright as this output is made: the ones its
  // file carries are part of what identifies it (a mock-up carries none, so a change of them reuses it).
  const parsed = presetSchema.safeParse(pv.settings);
  const [scan] = await db.select({ name: scans.originalName }).from(scans).where(eq(scans.id, f.scanId));
  const title = outputTitle(f.title, scan?.name, f.position);
  const rights = { title, ...(await studioRights(db)) };
  const key = dedupeKey(
    f.id,
    f.revision,
    master.recipeVersionId ?? "none",
    pv.id,
    parsed.success ? rightsCarried(parsed.data, rights) : rights,
  );
  const [made] = await db.select().from(outputs).where(eq(outputs.dedupeKey, key));
  // Reused: linked only while the output row still stands (locked against a replacing re-run
  // retiring it at this moment); gone, it is made again below.
  const linked =
    made &&
    (await deps.library.exists(made.key)) &&
    (await db.transaction(async (tx) => {
      const [still] = await tx.select({ id: outputs.id }).from(outputs).where(eq(outputs.id, made.id)).for("share");
      if (!still) return false;
      // Still approved, under the lock a rejection or merge takes on the piece's row.
      const [piece] = await tx
        .select({ status: fragments.status, mergedInto: fragments.mergedInto })
        .from(fragments)
        .where(eq(fragments.id, f.id))
        .for("share");
      if (piece?.status !== "approved" || piece.mergedInto !== null) return "not approved" as const;
      await tx.update(batchItems).set({ outputId: made.id }).where(eq(batchItems.id, batchItemId));
      return true;
    }));
  if (linked === "not approved") return fail("The fragment is no longer approved.");
  if (linked) {
    await removeRetired(deps, await settleBatchItem(db, batchItemId, "done", null, { boss: deps.boss }));
    await notify(pool, { kind: "worker" });
    return log.info("output: reused");
  }
  if (!parsed.success)
    return fail(
      `The preset's saved settings are no longer valid: ${parsed.error.issues[0]?.message ?? "unknown"}. Save the preset again, then retry.`,
    );
  const preset = parsed.data;
  // Each made file has a name of its own (a short random part): a file made again never takes the
  // name of one a replacing re-run is removing at that moment. The dedupe key is what identifies it.
  const fileKey = `outputs/${f.id}/${pv.id}-r${f.revision}-${(master.recipeVersionId ?? "none").slice(0, 8)}-${crypto.randomBytes(4).toString("hex")}.${outputExtension(preset)}`;
  try {
    // Made in scratch from a local copy of the master, then stored atomically under its key.
    const report = await deps.library.withScratch((dir) =>
      deps.library.withLocalFile(master.key, async (masterPath) => {
        const target = path.join(dir, path.basename(fileKey));
        const made = await renderOutput(
          {
            master: masterPath,
            dpi: master.dpi,
            ...rights,
            shape: f.shape,
            maxPixels: deps.config.maxPixels,
          },
          preset,
          { path: target },
        );
        await deps.library.put(fileKey, target, { move: true });
        return made;
      }),
    );
    // The row and the item's link commit together: the row's lock keeps a replacing re-run from
    // retiring it between the two.
    const stored = await db.transaction(async (tx) => {
      // Under the render's own lock: a render storing a new master now has either finished (and
      // is seen below) or not begun.
      await tx.execute(sql`select pg_advisory_xact_lock(hashtextextended(${`fragment-render:${f.id}`}, 0))`);
      const [fNow] = await tx
        .select({ revision: fragments.revision, status: fragments.status, mergedInto: fragments.mergedInto })
        .from(fragments)
        .where(eq(fragments.id, f.id));
      const [mNow] = await tx
        .select({ revision: outputs.revision, recipeVersionId: outputs.recipeVersionId, dpi: outputs.dpi, key: outputs.key })
        .from(outputs)
        .where(and(eq(outputs.fragmentId, f.id), eq(outputs.kind, "master")));
      // A new revision (a resolution set, an edit) or a new master since this began: what was made
      // is not what the key would say. It is thrown away and made again from the piece as it is.
      // A piece rejected or merged meanwhile (neither changes its revision) keeps no copy either:
      // the retry finds it no longer approved and says so.
      if (
        !fNow ||
        fNow.status !== "approved" ||
        fNow.mergedInto !== null ||
        fNow.revision !== f.revision ||
        !mNow ||
        mNow.revision !== master.revision ||
        mNow.recipeVersionId !== master.recipeVersionId ||
        mNow.dpi !== master.dpi ||
        mNow.key !== master.key
      )
        return false;
      const [row] = await tx
        .insert(outputs)
        .values({
          fragmentId: f.id,
          kind: "preset",
          key: fileKey,
          format: report.format,
          width: report.pixelWidth,
          height: report.pixelHeight,
          bitDepth: 8,
          hasAlpha: false,
          dpi: report.effectiveDpi ?? master.dpi,
          bytes: report.bytes,
          revision: f.revision,
          recipeVersionId: master.recipeVersionId,
          presetVersionId: pv.id,
          dedupeKey: key,
          report: {
            printedIn: report.printedIn,
            effectiveDpi: report.effectiveDpi,
            warnings: report.warnings,
          },
        })
        .onConflictDoUpdate({
          target: outputs.dedupeKey,
          set: { key: fileKey, bytes: report.bytes, updatedAt: new Date() },
        })
        .returning({ id: outputs.id });
      await tx.update(batchItems).set({ outputId: row!.id }).where(eq(batchItems.id, batchItemId));
      return true;
    });
    if (!stored) {
      await deps.library
        .remove(fileKey)
        .catch((err: unknown) => log.warn({ err, key: fileKey }, "output: a discarded file stays until the library tidy"));
      // Rejected or merged meanwhile: said now, not after retries that cannot make it.
      const [now] = await db
        .select({ status: fragments.status, mergedInto: fragments.mergedInto })
        .from(fragments)
        .where(eq(fragments.id, f.id));
      if (now?.status !== "approved" || now.mergedInto !== null) return fail("The fragment is no longer approved.");
      throw new MasterChanged();
    }
    // The last item of a replacing re-run retires the old batch's files.
    await removeRetired(deps, await settleBatchItem(db, batchItemId, "done", null, { boss: deps.boss }));
    await notify(pool, { kind: "worker" });
    log.info({ preset: preset.kind, warnings: report.warnings }, "output: made");
  } catch (err) {
    if (isOutputError(err) && err.code !== "failed") return fail((err as Error).message);
    // The row says the master is made but its file is gone: retrying will not bring it back.
    if (isStorageError(err, "missing"))
      return fail(
        "The fragment's master does not exist in the library: render it again (reset and approve the fragment), then retry this item.",
      );
    // Settled already (what failed was closing its batch): never turned into a failure. A retry
    // closes the batch; after the last, the worker's sweep of open batches does (closeStaleBatches).
    const [now] = await db
      .select({ state: batchItems.state })
      .from(batchItems)
      .where(eq(batchItems.id, batchItemId))
      .catch(() => []);
    if (now?.state !== "done" && ctx.retryCount >= ctx.retryLimit)
      await fail(
        err instanceof MasterChanged
          ? "The piece kept changing while this copy was being made; retry it once the piece is settled."
          : (err as Error).message,
      );
    throw err;
  }
}

/** The piece or its master changed while a copy was being made from it: made again by the retry. */
class MasterChanged extends Error {
  constructor() {
    super("The piece changed while this copy was being made (a new resolution, an edit or a new master); it is made again.");
  }
}

/**
 * Removes the files of outputs a replacing re-run retired (their rows are gone). A file that cannot
 * be removed now is only logged: the item is done, and the library tidy takes the file later.
 */
async function removeRetired(deps: OutputDeps, keys: string[]): Promise<void> {
  for (const key of keys)
    await deps.library
      .remove(key)
      .catch((err: unknown) => deps.log.warn({ err, key }, "output: a retired file stays until the library tidy"));
}
