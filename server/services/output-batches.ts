import crypto from "node:crypto";
import { and, eq, inArray, isNull, sql, type SQL } from "drizzle-orm";
import type PgBoss from "pg-boss";
import type { Database, Db } from "../db";
import { batchItems, batches, fragments, outputs, presetVersions, presets, scans, studio as studioTable } from "../db/schema";
import { SEND_CHUNK, withTx } from "../db/tx";
import { QUEUES } from "../jobs/queues";
import { badRequest, conflict, notFound } from "../errors";
import { getBatch, laterRuns, replaceOutcome } from "./batches";
import { presetsForRun } from "./presets";
import { recipeVersionFor } from "./recipes";
import type { CreateBatchBody } from "../../shared/schemas/preset-api";
import { outputFileName, outputTitle } from "../presenters/fragment";
import { recordAudit } from "./audit";
import { madeFromVisibleTo } from "./fragments";
import { studioRights } from "./studio";
import { rightsCarried } from "../../worker/pipeline/output";
import type { Role } from "../../shared/roles";
import { estimateOutputBytes, type MasterFacts } from "./output-estimate";
import { dpiWarning, placePiece, printPage } from "../../shared/paper";

/** The approved fragments a selection names. Batches make copies of approved work only. */
export async function selectFragments(db: Db, selection: CreateBatchBody["selection"]) {
  const where: (SQL | undefined)[] = [eq(fragments.status, "approved"), isNull(fragments.mergedInto)];
  if (selection.fragmentIds) where.push(inArray(fragments.id, selection.fragmentIds));
  const f = selection.filter;
  if (f?.scanId) where.push(eq(fragments.scanId, f.scanId));
  if (f?.intakeId) where.push(sql`${fragments.scanId} in (select id from scans where intake_id = ${f.intakeId})`);
  if (f?.tag) where.push(sql`${f.tag} = any(${fragments.tags})`);
  if (f?.shape) where.push(eq(fragments.shape, f.shape));
  if (f?.q) {
    const like = `%${f.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    where.push(
      sql`(${fragments.title} ilike ${like} or exists (select 1 from scans s where s.id = ${fragments.scanId} and s.original_name ilike ${like}))`,
    );
  }
  return db
    .select({
      id: fragments.id,
      revision: fragments.revision,
      title: fragments.title,
      position: fragments.position,
      scanName: scans.originalName,
    })
    .from(fragments)
    .innerJoin(scans, eq(scans.id, fragments.scanId))
    .where(and(...where));
}

/**
 * What identifies an output: the same fragment revision, recipe version and preset version, with
 * the same title, studio creator and copyright written into it (`rightsCarried` of the preset:
 * only what the file carries), give the same file. The creator and copyright make one part of the
 * key and the title another, each present only when the file carries it, so an output that
 * carries none of them (a mock-up) keeps the key it had before these were part of it, and one that
 * carries the rights but no title (a web copy that leaves the title out) keeps its key too.
 * Example: ("f1", 2, "rv1", "pv1", { title: "Blue gull" }) → "f1:r2:rv1:pv1:t<16 hex digits>".
 */
export const dedupeKey = (
  fragmentId: string,
  revision: number,
  recipeVersionId: string,
  presetVersionId: string,
  rights: { title?: string; creator?: string; copyright?: string } = {},
) => `${fragmentId}:r${revision}:${recipeVersionId}:${presetVersionId}${rightsTag(rights)}${titleTag(rights.title)}`;

const digest16 = (parts: (string | null)[]) => crypto.createHash("sha256").update(JSON.stringify(parts)).digest("hex").slice(0, 16);

function rightsTag({ creator, copyright }: { creator?: string; copyright?: string }): string {
  if (!creator && !copyright) return "";
  return `:c${digest16([creator ?? null, copyright ?? null])}`;
}

function titleTag(title: string | undefined): string {
  return title ? `:t${digest16([title])}` : "";
}

/**
 * The batch builder's review: how many outputs, how many are made already (and reused), and the
 * expected bytes of the rest, from each fragment's master (estimateOutputBytes). A fragment whose
 * master is not made yet counts at its size in the scan with a typical busyness; one whose master
 * is of an older revision, at its size now with that master's busyness.
 */
export async function estimateBatch(db: Db, body: CreateBatchBody) {
  const picked = await selectFragments(db, body.selection);
  const list = await presetsForRun(db, body.presetIds);
  const studio = await studioRights(db);
  const [studioRow] = await db.select({ defaultDpi: studioTable.defaultDpi }).from(studioTable).limit(1);
  const assumedDpi = studioRow?.defaultDpi ?? 300;
  const facts = new Map<string, MasterFacts>();
  for (let i = 0; i < picked.length; i += SEND_CHUNK) {
    const ids = picked.slice(i, i + SEND_CHUNK).map((f) => f.id);
    const rows = await db
      .select({ id: fragments.id, revision: fragments.revision, rect: fragments.rect, scanDpi: scans.dpiX, master: outputs })
      .from(fragments)
      .innerJoin(scans, eq(scans.id, fragments.scanId))
      .leftJoin(outputs, and(eq(outputs.fragmentId, fragments.id), eq(outputs.kind, "master")))
      .where(inArray(fragments.id, ids));
    for (const r of rows) {
      const m = r.master;
      const width = Math.round(r.rect.width);
      const height = Math.round(r.rect.height);
      // A scan reads its resolution (or is given the studio's assumed one) before it has pieces;
      // one without any yet counts at the old master's, else at the studio's assumed resolution.
      const dpi = r.scanDpi ?? m?.dpi ?? assumedDpi;
      facts.set(
        r.id,
        m && m.revision === r.revision
          ? { width: m.width, height: m.height, dpi: m.dpi, bytes: m.bytes, bitDepth: m.bitDepth, hasAlpha: m.hasAlpha }
          : m
            ? // A master of an older revision (an edit or a new resolution since; its new master is
              // on its way): the piece's size and resolution now, the old file's busyness per pixel.
              {
                width,
                height,
                dpi,
                bytes: Math.round((m.bytes * width * height) / Math.max(1, m.width * m.height)),
                bitDepth: m.bitDepth,
                hasAlpha: m.hasAlpha,
              }
            : { width, height, dpi, bytes: 0, bitDepth: 8, hasAlpha: false },
      );
    }
  }
  let reused = 0;
  let expectedBytes = 0;
  // Print outputs that would come out below the preset's minimum resolution, by preset: said
  // before the run, with the same geometry the worker lays the page out with (shared/paper).
  const soft = new Map<string, number>();
  for (const f of picked) {
    const recipe = await recipeVersionFor(db, f.id);
    for (const p of list) {
      const fact = facts.get(f.id)!;
      if (p.settings.kind === "print" && fact.width > 0 && fact.height > 0) {
        const piece = { widthPx: fact.width, heightPx: fact.height, dpi: fact.dpi };
        try {
          const place = placePiece(piece, printPage(p.settings, piece).area, p.settings.scale, p.settings.placement);
          if (dpiWarning(place.effectiveDpi, p.settings.minDpi)) soft.set(p.name, (soft.get(p.name) ?? 0) + 1);
        } catch {
          // Settings that leave no print area: the output itself fails with the reason.
        }
      }
      const rights = { title: outputTitle(f.title, f.scanName, f.position), ...studio };
      const key = dedupeKey(f.id, f.revision, recipe.id, p.versionId, rightsCarried(p.settings, rights));
      const [made] = await db.select({ id: outputs.id }).from(outputs).where(eq(outputs.dedupeKey, key));
      if (made) reused++;
      else expectedBytes += estimateOutputBytes(facts.get(f.id)!, p.settings);
    }
  }
  const warnings = picked.length === 0 ? ["No approved fragment matches this selection."] : [];
  for (const p of list) {
    const n = soft.get(p.name);
    if (n && p.settings.kind === "print")
      warnings.push(
        `${p.name}: ${n} of ${picked.length} ${picked.length === 1 ? "piece prints" : "pieces print"} below ${p.settings.minDpi} DPI and may look soft`,
      );
  }
  return { fragments: picked.length, presets: list.length, outputs: picked.length * list.length, reused, expectedBytes, warnings };
}

/** Records a batch of fragments × presets and queues one output job per pair, in one transaction. */
export async function createOutputBatch(
  database: Database,
  boss: PgBoss,
  actorId: string,
  body: CreateBatchBody,
  rerun?: { of: string; replaceOld: boolean },
) {
  const picked = await selectFragments(database.db, body.selection);
  if (!picked.length) throw badRequest("No approved fragment matches this selection.", "selection");
  const list = await presetsForRun(database.db, body.presetIds);
  const id = await withTx(database, boss, async (tx) => {
    const name =
      body.name?.trim() || `${list.map((p) => p.name).join(" + ")} × ${picked.length} ${picked.length === 1 ? "fragment" : "fragments"}`;
    const [batch] = await tx.db
      .insert(batches)
      .values({ name, kind: "outputs", createdBy: actorId, rerunOf: rerun?.of ?? null, replaceOld: rerun?.replaceOld ?? false })
      .returning();
    // Items and their jobs a thousand to a statement: a batch of a whole library is made in a
    // few round trips rather than two per output.
    const pairs = picked.flatMap((f) => list.map((p) => ({ batchId: batch!.id, fragmentId: f.id, presetVersionId: p.versionId })));
    for (let i = 0; i < pairs.length; i += SEND_CHUNK) {
      const items = await tx.db
        .insert(batchItems)
        .values(pairs.slice(i, i + SEND_CHUNK))
        .returning({ id: batchItems.id });
      await tx.sendMany(
        QUEUES.output,
        items.map((item) => ({ batchItemId: item.id })),
      );
    }
    await recordAudit(tx, {
      action: rerun ? "batch.rerun" : "batch.create",
      subjectType: "batch",
      subjectId: batch!.id,
      summary: `${rerun ? "Ran again as" : "Started"} the batch "${name}": ${picked.length * list.length} ${picked.length * list.length === 1 ? "output" : "outputs"}${rerun?.replaceOld ? ", replacing the old outputs" : ""}`,
      after: {
        name,
        fragments: picked.length,
        presets: list.map((p) => ({ id: p.id, name: p.name, version: p.version })),
        ...(rerun ? { rerunOf: rerun.of, replaceOld: rerun.replaceOld } : {}),
      },
    });
    await tx.notify({ kind: "worker" });
    return batch!.id;
  });
  return getBatch(database.db, id);
}

/**
 * A batch and its items, as `role` may see them: a viewer gets only the items whose fragment is
 * still approved (a piece rejected or merged since the batch ran drops out of their list and zip).
 */
export async function batchDetail(db: Db, id: string, role: Role) {
  // Counted as `role` sees the items (a viewer: "2 of 2 made" over the 2 rows they get); the
  // replacing promise is judged on every item, as the close judges it.
  const [batch, whole] = await Promise.all([getBatch(db, id, role), getBatch(db, id)]);
  const rows = await db
    .select({
      item: batchItems,
      fragment: fragments,
      scanName: scans.originalName,
      presetName: presets.name,
      presetKind: presets.kind,
      output: outputs,
    })
    .from(batchItems)
    .innerJoin(fragments, eq(fragments.id, batchItems.fragmentId))
    .innerJoin(scans, eq(scans.id, fragments.scanId))
    .leftJoin(presetVersions, eq(presetVersions.id, batchItems.presetVersionId))
    .leftJoin(presets, eq(presets.id, presetVersions.presetId))
    .leftJoin(outputs, eq(outputs.id, batchItems.outputId))
    .where(and(eq(batchItems.batchId, id), madeFromVisibleTo(role)))
    // Scan name, then the scan itself (two scans of one name stay apart), position and preset
    // name, and the item last: one order every time, which the zip and its CSV follow too.
    .orderBy(scans.originalName, scans.id, fragments.position, presets.name, batchItems.id);
  // For a re-run: how many of the old batch's outputs are replaced now (done, their file gone).
  let oldReplaced: number | null = null;
  if (batch.rerunOf) {
    const [n] = await db
      .select({ n: sql<number>`count(*)::int` })
      .from(batchItems)
      .innerJoin(fragments, eq(fragments.id, batchItems.fragmentId))
      .where(
        and(eq(batchItems.batchId, batch.rerunOf.id), eq(batchItems.state, "done"), isNull(batchItems.outputId), madeFromVisibleTo(role)),
      );
    oldReplaced = n?.n ?? 0;
  }
  return {
    batch,
    replaceOutcome: replaceOutcome(whole),
    oldReplaced,
    laterRuns: await laterRuns(db, id),
    items: rows.map((r) => ({
      id: r.item.id,
      fragmentId: r.fragment.id,
      fragmentTitle: r.fragment.title,
      scanName: r.scanName,
      position: r.fragment.position,
      preset: r.presetName ?? (batch.kind === "recipe" ? "master + web" : "?"),
      presetKind: r.presetKind,
      state: r.item.state,
      error: r.item.error,
      fileName: r.output ? outputFileName(r.scanName, r.fragment.position, r.presetName ?? r.output.kind, r.output.format) : null,
      pixelWidth: r.output?.width ?? null,
      pixelHeight: r.output?.height ?? null,
      // A printed size and resolution belong to prints: the report of a web copy or a master
      // records the DPI written in its file, which says nothing of any printing.
      printedIn: r.presetKind === "print" ? (r.output?.report?.printedIn ?? null) : null,
      effectiveDpi: r.presetKind === "print" ? (r.output?.report?.effectiveDpi ?? null) : null,
      warnings: r.output?.report?.warnings ?? [],
      bytes: r.output?.bytes ?? null,
    })),
  };
}

/** Queues the failed items of a batch again. */
export async function retryFailed(database: Database, boss: PgBoss, id: string) {
  await getBatch(database.db, id);
  await withTx(database, boss, async (tx) => {
    // Locked first, as closing it does: a close counting its items either sees these queued or waits.
    const [batch] = await tx.db.select({ name: batches.name }).from(batches).where(eq(batches.id, id)).for("update");
    const failed = await tx.db
      .update(batchItems)
      .set({ state: "queued", error: null, updatedAt: new Date() })
      .where(and(eq(batchItems.batchId, id), eq(batchItems.state, "failed")))
      .returning();
    if (!failed.length) throw conflict("Nothing in this batch has failed.");
    const outputsAgain = failed.filter((i) => i.presetVersionId);
    await tx.sendMany(
      QUEUES.output,
      outputsAgain.map((i) => ({ batchItemId: i.id })),
    );
    // A recipe batch's items render their fragment again: it reads as queued, as when first applied.
    const rendersAgain = failed.filter((i) => !i.presetVersionId);
    let queuedAgain = outputsAgain.length;
    for (let i = 0; i < rendersAgain.length; i += SEND_CHUNK) {
      const chunk = rendersAgain.slice(i, i + SEND_CHUNK);
      const rows = await tx.db
        .update(fragments)
        .set({ renderState: "queued", renderError: null })
        // Only pieces still approved: an item whose piece was rejected or merged since fails again at once.
        .where(
          and(
            inArray(
              fragments.id,
              chunk.map((c) => c.fragmentId),
            ),
            eq(fragments.status, "approved"),
            isNull(fragments.mergedInto),
          ),
        )
        .returning({ id: fragments.id, revision: fragments.revision });
      const revision = new Map(rows.map((r) => [r.id, r.revision]));
      const [queued, gone] = [chunk.filter((c) => revision.has(c.fragmentId)), chunk.filter((c) => !revision.has(c.fragmentId))];
      await tx.sendMany(
        QUEUES.render,
        queued.map((c) => ({ fragmentId: c.fragmentId, revision: revision.get(c.fragmentId)!, batchItemId: c.id })),
      );
      queuedAgain += queued.length;
      if (gone.length)
        await tx.db
          .update(batchItems)
          .set({ state: "failed", error: "The fragment is no longer approved.", updatedAt: new Date() })
          .where(
            inArray(
              batchItems.id,
              gone.map((c) => c.id),
            ),
          );
    }
    // Open again while anything runs; when nothing could be queued, it stays finished.
    if (queuedAgain) await tx.db.update(batches).set({ finishedAt: null, updatedAt: new Date() }).where(eq(batches.id, id));
    const again = failed.length - queuedAgain;
    await recordAudit(tx, {
      action: "batch.retry",
      subjectType: "batch",
      subjectId: id,
      summary: `Queued ${queuedAgain} of the ${failed.length} failed ${failed.length === 1 ? "item" : "items"} of the batch "${batch!.name}" again${again ? ` (${again} failed again at once: the piece is no longer approved)` : ""}`,
      before: { failed: failed.length },
      after: { queued: queuedAgain, items: failed.map((i) => i.id) },
    });
    await tx.notify({ kind: "worker" });
  });
  return getBatch(database.db, id);
}

/** Stops what has not started: queued items are cancelled (their jobs find them so and do nothing). */
export async function cancelBatch(db: Db, id: string) {
  const before = await getBatch(db, id);
  await db.transaction(async (tx) => {
    const cancelled = await tx
      .update(batchItems)
      .set({ state: "cancelled", updatedAt: new Date() })
      .where(and(eq(batchItems.batchId, id), eq(batchItems.state, "queued")))
      .returning({ id: batchItems.id });
    const [open] = await tx
      .select({ n: sql<number>`count(*)::int` })
      .from(batchItems)
      .where(and(eq(batchItems.batchId, id), eq(batchItems.state, "running")));
    if (!open?.n)
      await tx
        .update(batches)
        .set({ finishedAt: new Date(), updatedAt: new Date() })
        .where(and(eq(batches.id, id), isNull(batches.finishedAt)));
    await recordAudit(tx, {
      action: "batch.cancel",
      subjectType: "batch",
      subjectId: id,
      summary: `Cancelled the batch "${before.name}": ${cancelled.length} queued ${cancelled.length === 1 ? "item" : "items"} will not run`,
      before: { queued: before.counts.queued },
      after: { queued: 0, cancelled: before.counts.cancelled + cancelled.length },
    });
  });
  return getBatch(db, id);
}

/** The same fragments again, with other presets (or the newest versions of the same ones). */
export async function rerunBatch(
  database: Database,
  boss: PgBoss,
  actorId: string,
  id: string,
  body: { presetIds?: string[]; replaceOld: boolean },
) {
  const [old] = await database.db.select().from(batches).where(eq(batches.id, id));
  if (!old) throw notFound("That batch");
  const items = await database.db.select().from(batchItems).where(eq(batchItems.batchId, id));
  const fragmentIds = [...new Set(items.map((i) => i.fragmentId))];
  let presetIds = body.presetIds;
  if (!presetIds) {
    const versions = await database.db
      .select({ presetId: presetVersions.presetId })
      .from(presetVersions)
      .where(inArray(presetVersions.id, items.map((i) => i.presetVersionId!).filter(Boolean)));
    presetIds = [...new Set(versions.map((v) => v.presetId))];
  }
  if (!presetIds.length) throw conflict("This batch made no preset outputs to run again.");
  return createOutputBatch(
    database,
    boss,
    actorId,
    { name: `${old.name} (again)`, selection: { fragmentIds }, presetIds },
    { of: id, replaceOld: body.replaceOld },
  );
}

/**
 * Keys and names of a finished batch's files that `role` may see, for the zip: in the order of
 * the batch page (batchDetail's), so the zip's entries and its CSV rows read as the page does.
 */
export async function batchFiles(db: Db, id: string, role: Role) {
  const detail = await batchDetail(db, id, role);
  const rows = await db
    .select({ itemId: batchItems.id, key: outputs.key, format: outputs.format })
    .from(batchItems)
    .innerJoin(outputs, eq(outputs.id, batchItems.outputId))
    .innerJoin(fragments, eq(fragments.id, batchItems.fragmentId))
    .where(and(eq(batchItems.batchId, id), eq(batchItems.state, "done"), madeFromVisibleTo(role)));
  const place = new Map(detail.items.map((item, n) => [item.id, n]));
  // An item the detail did not list (made between the two reads) goes last rather than nowhere.
  const at = (itemId: string) => place.get(itemId) ?? Number.MAX_SAFE_INTEGER;
  const files = rows.sort((a, b) => at(a.itemId) - at(b.itemId));
  return { detail, files };
}
