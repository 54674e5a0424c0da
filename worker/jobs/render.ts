import type PgBoss from "pg-boss";
import path from "node:path";
import { setTimeout as sleep } from "node:timers/promises";
import { and, eq, inArray, sql } from "drizzle-orm";
import { drizzle } from "drizzle-orm/node-postgres";
import type { Database } from "../../server/db";
import * as schema from "../../server/db/schema";
import { batchItems, fragments, outputs, scans } from "../../server/db/schema";
import { notify } from "../../server/services/events";
import type { Storage } from "../../server/storage/storage";
import { isStorageError } from "../../server/storage/storage";
import type { S3Storage } from "../../server/storage/s3";
import { queueOffsiteCopy } from "../../server/services/offsite";
import { premakeOutputPicture } from "../../server/services/output-thumbs";
import type { Logger } from "../../server/logger";
import type { Config } from "../../server/config";
import { renderPayload, type RightsPayload } from "../../shared/schemas/jobs";
import type { RecipeInput } from "../../shared/schemas/recipes";
import { isRenderError, renderEach, type BatchItem, type RenderResult } from "../pipeline/render";
import { cleanRights, recordedRights, type Rights } from "../pipeline/render/rights";
import { isScanError } from "../pipeline/metadata";
import { studioRights } from "../../server/services/studio";
import { dropDecodedCopy, withDecodedCopy } from "../decoded-copies";
import { recipeVersionFor } from "../../server/services/recipes";
import { settleBatchItem } from "../../server/services/batches";
import { holdFor } from "./analyse";
import { QUEUES } from "../../server/jobs/queues";
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
export const webKey = (fragmentId: string, format: "jpeg" | "webp") => `web/${fragmentId}.${format === "jpeg" ? "jpg" : "webp"}`;

/**
 * At most this many fragments are rendered by one job from one decode of their scan (the job's
 * own first): bounds the job's run time well inside the render queue's expiry.
 */
export const RENDER_GROUP_MAX = 16;
/**
 * …and at most this many times the scan's own pixels in upright rectangles: a render's cost
 * follows the pixels cut, so a group costs at most about two renders of the whole bed.
 */
export const RENDER_GROUP_SCAN_AREAS = 2;
/** How often a job whose fragment another job is rendering looks again, ms. */
const CLAIM_POLL_MS = 250;

type FragmentRow = typeof fragments.$inferSelect;
type ScanRow = typeof scans.$inferSelect;
type RecipeVersion = Awaited<ReturnType<typeof recipeVersionFor>>;

/**
 * Renders one approved fragment at one revision: the upright master and the web copy, together
 * with the other fragments of its scan that are waiting for their own render (approved, queued),
 * all cut from one decode of the scan. Each fragment is claimed (render_state 'rendering', this
 * job's id, the time) by one atomic UPDATE, so no two jobs render it at once; their own jobs, on
 * finding it claimed, wait for the outcome and then find it made. A claim older than the queue's
 * expiry is abandoned (its worker died) and is taken over. A newer revision or a fragment no
 * longer approved makes the job a no-op; a revision already rendered is not rendered again; files
 * are stored only while the fragment is still at the revision they were made from. Errors of the
 * job's own fragment throw, so the queue retries; the last attempt records the message. A
 * fragment of the group whose render fails is put back for its own job to render and report.
 */
export async function renderFragmentJob(deps: RenderDeps, data: unknown, ctx: JobContext): Promise<void> {
  try {
    await renderAttempt(deps, data, ctx);
  } catch (err) {
    // However the last attempt ends (a wait cut short by a stop, the database gone), its batch
    // item must not stay running: a batch whose items never settle never finishes.
    const { batchItemId } = renderPayload.parse(data);
    if (batchItemId && ctx.retryCount >= ctx.retryLimit) {
      const { db } = deps.database;
      const [item] = await db
        .select({ state: batchItems.state })
        .from(batchItems)
        .where(eq(batchItems.id, batchItemId))
        .catch(() => []);
      if (item && (item.state === "queued" || item.state === "running"))
        await settleBatchItem(db, batchItemId, "failed", (err as Error).message, { boss: deps.boss }).catch(() => {});
    }
    throw err;
  }
}

async function renderAttempt(deps: RenderDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { fragmentId, revision, batchItemId } = renderPayload.parse(data);
  const { db, pool } = deps.database;
  const log = deps.log.child({ jobId: ctx.jobId, fragmentId, revision, batchItemId });
  const settle = async (state: "running" | "done" | "failed", error: string | null = null) => {
    if (batchItemId) await settleBatchItem(db, batchItemId, state, error, { boss: deps.boss });
  };
  let running = false;
  for (;;) {
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
    if (await alreadyRendered(deps, row, recipe)) {
      await db.update(fragments).set({ renderState: "done", renderJobId: null, renderClaimedAt: null }).where(eq(fragments.id, fragmentId));
      await settle("done");
      await notify(pool, { kind: "scan", scanId: row.scanId });
      return log.info("render: already rendered with this recipe version");
    }
    const [scan] = await db.select().from(scans).where(eq(scans.id, row.scanId));
    if (!scan) return;
    if (!running) await settle("running");
    running = true;

    const claimed = await claimGroup(deps, scan, row, ctx.jobId);
    if (!claimed.includes(fragmentId)) {
      // Another job is rendering it (with others of its scan): wait for that, then look again.
      if ((await waitWhileClaimed(deps, fragmentId, revision, ctx)) === "stopping") {
        // Nothing of this job's own is in hand: rather than fail (and spend an attempt, the
        // last one failing its batch item), it goes back to the queue whole, as a new job with
        // the same data, and this one ends. Render jobs are idempotent, so a copy that also
        // survives (the send committed, the completion did not) finds its piece made.
        if (!deps.boss) throw new Error("The worker is stopping; the render goes back to the queue.");
        // Pieces this job claimed on an earlier attempt go back to their own jobs at once, rather
        // than waiting out the claim's expiry under an id that will not run again.
        await db
          .update(fragments)
          .set({ renderState: "queued", renderJobId: null, renderClaimedAt: null })
          .where(and(eq(fragments.renderJobId, ctx.jobId), eq(fragments.renderState, "rendering")));
        const again = await deps.boss.send(QUEUES.render, renderPayload.parse(data));
        return log.info({ again }, "render: handed back to the queue as the worker stops");
      }
      continue;
    }
    if (deps.config.testRenderDelayMs > 0) await holdFor(deps.config.testRenderDelayMs, ctx.signal);
    const own = await renderGroup(deps, scan, claimed, ctx.jobId, log);
    if (own.kind === "skipped") continue; // edited, unapproved or taken over meanwhile: look again
    if (own.kind === "done") {
      await settle("done");
      return;
    }
    const err = own.error;
    // Bad geometry or an unreadable scan will not improve with a retry.
    const permanent =
      isScanError(err) || (isRenderError(err) && err.code !== "failed") || (err as { permanent?: boolean }).permanent === true;
    const last = permanent || ctx.retryCount >= ctx.retryLimit;
    // Not the last attempt: the fragment stays claimed by this job, whose retry takes it again.
    await db
      .update(fragments)
      .set(
        last
          ? { renderState: "failed", renderError: (err as Error).message, renderJobId: null, renderClaimedAt: null }
          : { renderState: "rendering", renderError: null },
      )
      .where(and(eq(fragments.id, fragmentId), eq(fragments.revision, revision)))
      .catch(() => {});
    await notify(pool, { kind: "scan", scanId: row.scanId }).catch(() => {});
    if (last) await settle("failed", (err as Error).message).catch(() => {});
    if (permanent) return log.warn({ reason: (err as Error).message }, "render: failed");
    throw err;
  }
}

/** Its master and web copy exist, made from this revision with this recipe version. */
async function alreadyRendered(deps: RenderDeps, row: FragmentRow, recipe: RecipeVersion): Promise<boolean> {
  const made = (await deps.database.db.select().from(outputs).where(eq(outputs.fragmentId, row.id))).filter((o) => o.kind !== "preset");
  return made.length >= 2 && made.every((o) => o.revision === row.revision && o.recipeVersionId === recipe.id);
}

/**
 * Claims the job's own fragment (at its revision) and, with it, the other fragments of the scan
 * that wait for a render of their own (approved, not merged, queued: an edit or an approval sets
 * 'queued' in the same transaction that queues the render of the current revision), up to
 * RENDER_GROUP_MAX fragments and RENDER_GROUP_SCAN_AREAS scans' worth of pixels, in one statement.
 * The own fragment is taken unless another job holds a claim on it younger than the queue's
 * expiry; fragments this job claimed on an earlier attempt are taken again. Rows another claim is
 * taking at this very moment are skipped (SKIP LOCKED), so two jobs never wait on each other.
 * Returns the ids claimed: the own one first, or none when it could not be claimed.
 */
async function claimGroup(deps: RenderDeps, scan: ScanRow, row: FragmentRow, jobId: string): Promise<string[]> {
  const expire = deps.config.jobExpireSeconds;
  const budget = RENDER_GROUP_SCAN_AREAS * (scan.width && scan.height ? scan.width * scan.height : deps.config.maxPixels);
  const { rows } = await deps.database.pool.query<{ id: string }>(
    `with candidates as (
       select id, position, (rect->>'width')::float8 * (rect->>'height')::float8 as px
         from fragments
        where scan_id = $1 and status = 'approved' and merged_into is null
          and ((id = $2 and revision = $3
                and not (render_state = 'rendering' and render_job_id is distinct from $4
                         and coalesce(render_claimed_at > now() - make_interval(secs => $5), false)))
            or (id <> $2 and (render_state = 'queued' or (render_state = 'rendering' and render_job_id = $4))))
        order by id = $2 desc, position
          for update skip locked
     ), picked as (
       select id from (
         select id, row_number() over w as n, sum(px) over w as run
           from candidates window w as (order by id = $2 desc, position)
       ) c
        where exists (select 1 from candidates where id = $2) and (id = $2 or (n <= $6 and run <= $7))
     )
     update fragments f
        set render_state = 'rendering', render_error = null, render_job_id = $4, render_claimed_at = now()
       from picked where f.id = picked.id
     returning f.id`,
    [scan.id, row.id, row.revision, jobId, expire, RENDER_GROUP_MAX, budget],
  );
  const ids = rows.map((r) => r.id);
  // Only a hint for the screens to look again: a failure to send it must not fail the claim it
  // follows (the claimed rows would wait for this job's retry).
  if (ids.length > 0)
    await notify(deps.database.pool, { kind: "scan", scanId: scan.id }).catch((err: unknown) =>
      deps.log.warn({ err }, "render: could not announce the claim"),
    );
  return ids.includes(row.id) ? [row.id, ...ids.filter((id) => id !== row.id)] : ids;
}

/**
 * Waits while another job's live claim holds the fragment at this revision: until that job has
 * finished it (or put it back), it was edited, or the claim grew older than the queue's expiry.
 */
async function waitWhileClaimed(deps: RenderDeps, fragmentId: string, revision: number, ctx: JobContext): Promise<"ended" | "stopping"> {
  const expireMs = deps.config.jobExpireSeconds * 1000;
  // Only waiting: the worker slot goes to other jobs meanwhile (a scan someone waits to review),
  // and is taken back before this job renders anything itself.
  const parked = ctx.park?.() ?? false;
  let outcome: "ended" | "stopping" = "ended";
  try {
    outcome = await pollClaim(deps, fragmentId, revision, ctx, expireMs);
    return outcome;
  } finally {
    // A job handing itself back renders nothing, so it does not ask for a slot again; any other
    // outcome (the claim ended, even as a stop was asked) goes on to render, in a slot.
    if (parked && outcome !== "stopping") await ctx.unpark?.();
  }
}

/** Polls until the claim ends ("ended") or the worker is asked to stop ("stopping"). */
async function pollClaim(
  deps: RenderDeps,
  fragmentId: string,
  revision: number,
  ctx: JobContext,
  expireMs: number,
): Promise<"ended" | "stopping"> {
  for (;;) {
    await sleep(CLAIM_POLL_MS);
    if (ctx.stopAsked?.aborted || ctx.signal?.aborted) return "stopping";
    const [f] = await deps.database.db
      .select({
        state: fragments.renderState,
        revision: fragments.revision,
        job: fragments.renderJobId,
        at: fragments.renderClaimedAt,
      })
      .from(fragments)
      .where(eq(fragments.id, fragmentId));
    if (!f || f.revision !== revision || f.state !== "rendering" || f.job === ctx.jobId) return "ended";
    if (!f.at || Date.now() - f.at.getTime() > expireMs) return "ended";
  }
}

interface Member {
  row: FragmentRow;
  recipe: RecipeVersion;
  webFormat: "jpeg" | "webp";
  mKey: string;
  wKey: string;
  log: Logger;
}

type OwnOutcome = { kind: "done" } | { kind: "skipped" } | { kind: "failed"; error: unknown };

/**
 * Renders the claimed fragments (`ids`, the job's own first) from one decode of the scan and
 * stores each one as soon as it is made. Returns what became of the own fragment; every other
 * fragment that was not stored is put back ('queued', unclaimed) for its own job.
 */
async function renderGroup(deps: RenderDeps, scan: ScanRow, ids: string[], jobId: string, log: Logger): Promise<OwnOutcome> {
  const { db, pool } = deps.database;
  const started = performance.now();
  const ownId = ids[0]!;
  const byId = new Map((await db.select().from(fragments).where(inArray(fragments.id, ids))).map((r) => [r.id, r]));
  const claimedRevision = new Map<string, number>();
  const members: Member[] = [];
  const errors = new Map<string, unknown>();
  const stored = new Set<string>();
  for (const id of ids) {
    const row = byId.get(id);
    if (!row || row.renderJobId !== jobId) continue;
    claimedRevision.set(id, row.revision);
    const mLog = id === ownId ? log : deps.log.child({ jobId, fragmentId: id, revision: row.revision, renderedWith: ownId });
    try {
      const recipe = await recipeVersionFor(db, id);
      // Looked at again under the claim: another job may have stored it since this one looked.
      if (await alreadyRendered(deps, row, recipe)) {
        await markDone(deps, row);
        await notify(pool, { kind: "scan", scanId: scan.id });
        stored.add(id);
        mLog.info("render: already rendered with this recipe version");
        continue;
      }
      const webFormat = row.shape === "cutout" ? "webp" : "jpeg";
      members.push({ row, recipe, webFormat, mKey: masterKey(id), wKey: webKey(id, webFormat), log: mLog });
    } catch (err) {
      errors.set(id, err);
    }
  }

  let rendered = 0;
  try {
    // The studio's creator and copyright, as they are when the render starts.
    const rights = members.length > 0 ? await studioRights(db) : {};
    if (members.length > 0) {
      // Rendered in scratch from a local copy of the original, then stored: master first, web copy
      // last, each atomically (locally a rename into place; on S3 an upload, in parts when large).
      await deps.library
        .withScratch((dir) =>
          deps.library.withLocalFile(scan.originalKey, (source) =>
            // The scan as its intake left it decoded, when this worker still has that copy.
            withDecodedCopy(deps.config.decodedCopies, scan.sha256, async (decoded) => {
              const items: BatchItem[] = members.map((m) => ({
                geometry: { box: m.row.box, angle: m.row.angle, rect: m.row.rect, outline: m.row.outline, shape: m.row.shape },
                metadata: { title: m.row.title ?? undefined, ...rights },
                recipe: {
                  recipe: { name: "recipe", steps: m.recipe.steps as RecipeInput["steps"] },
                  background: scan.splitBackground?.rgb,
                },
                targets: {
                  masterPath: path.join(dir, path.basename(m.mKey)),
                  webPath: path.join(dir, path.basename(m.wKey)),
                  webFormat: m.webFormat,
                },
              }));
              await renderEach(
                {
                  source,
                  dpi: { x: scan.dpiX ?? deps.config.defaultDpi, y: scan.dpiY ?? scan.dpiX ?? deps.config.defaultDpi },
                  maxPixels: deps.config.maxPixels,
                  decoded: decoded ?? undefined,
                  // The job's scratch: a worker killed mid-render leaves its decode where the tidy looks.
                  scratchDir: dir,
                },
                items,
                {
                  // Left out when edited, no longer approved or taken over since the claim.
                  wanted: async (i) => {
                    const m = members[i]!;
                    const [f] = await db.select().from(fragments).where(eq(fragments.id, m.row.id));
                    return Boolean(
                      f && f.status === "approved" && !f.mergedInto && f.revision === m.row.revision && f.renderJobId === jobId,
                    );
                  },
                  done: async (i, outcome) => {
                    const m = members[i]!;
                    rendered++;
                    if (!outcome.ok) return void errors.set(m.row.id, outcome.error);
                    try {
                      if (await store(deps, m, outcome.result, jobId, rights)) stored.add(m.row.id);
                    } catch (err) {
                      errors.set(m.row.id, err);
                    }
                  },
                },
              );
            }),
          ),
        )
        .catch((err: unknown) => {
          if (isStorageError(err, "missing"))
            throw Object.assign(new Error("The original of this scan is missing from the library."), {
              permanent: true,
            });
          throw err;
        });
    }
  } catch (err) {
    // The scan as a whole could not be rendered: the own fragment reports it, the others go back.
    errors.set(ownId, err);
  } finally {
    log.info(
      {
        scanId: scan.id,
        fragments: rendered,
        ms: Math.round(performance.now() - started),
        ...(errors.size ? { failed: errors.size } : {}),
      },
      "render: group done",
    );
    // Every other fragment not stored goes back to its own job, which renders (and reports) it.
    const back = ids.filter((id) => id !== ownId && !stored.has(id) && claimedRevision.has(id));
    for (const id of back) {
      if (errors.has(id))
        log.warn(
          { fragment: id, reason: (errors.get(id) as Error).message },
          "render: a fragment of the group failed; its own job will render it",
        );
      await db
        .update(fragments)
        .set({ renderState: "queued", renderJobId: null, renderClaimedAt: null })
        .where(
          and(
            eq(fragments.id, id),
            eq(fragments.revision, claimedRevision.get(id)!),
            eq(fragments.renderState, "rendering"),
            eq(fragments.renderJobId, jobId),
          ),
        )
        .catch(() => {});
    }
    if (back.length) await notify(pool, { kind: "scan", scanId: scan.id }).catch(() => {});
    await dropDecodedCopyWhenDone(deps, scan).catch((err: unknown) => log.warn({ err }, "render: could not drop the scan's decoded copy"));
  }
  if (stored.has(ownId)) return { kind: "done" };
  if (errors.has(ownId)) return { kind: "failed", error: errors.get(ownId) };
  // Not rendered or not stored because it changed meanwhile: released, for the caller to look again.
  await db
    .update(fragments)
    .set({ renderState: "queued", renderJobId: null, renderClaimedAt: null })
    .where(and(eq(fragments.id, ownId), eq(fragments.renderState, "rendering"), eq(fragments.renderJobId, jobId)));
  return { kind: "skipped" };
}

/**
 * The scan's decoded copy goes once nothing of the scan waits for a render: no fragment is still
 * proposed, and every approved one is rendered. (A later re-split decodes the scan again.)
 */
async function dropDecodedCopyWhenDone(deps: RenderDeps, scan: { id: string; sha256: string }) {
  const [waiting] = await deps.database.db
    .select({ n: sql<number>`count(*)::int` })
    .from(fragments)
    .where(
      and(
        eq(fragments.scanId, scan.id),
        sql`${fragments.mergedInto} is null`,
        sql`(${fragments.status} = 'proposed' or (${fragments.status} = 'approved' and ${fragments.renderState} <> 'done'))`,
      ),
    );
  if ((waiting?.n ?? 0) === 0) await dropDecodedCopy(deps.config.decodedCopies, scan.sha256);
}

async function markDone(deps: RenderDeps, row: Pick<FragmentRow, "id" | "revision" | "scanId">, db = deps.database.db) {
  await db
    .update(fragments)
    .set({ renderState: "done", renderError: null, renderJobId: null, renderClaimedAt: null })
    .where(and(eq(fragments.id, row.id), eq(fragments.revision, row.revision)));
}

/**
 * Stores one rendered fragment: its master and web copy under their keys and their output rows,
 * then marks it done. Under a lock per fragment and only while the fragment is still approved at
 * the revision it was rendered from, still claimed by this job (another job that took it over, or
 * a recipe applied meanwhile, renders it again) and still at the recipe version it was made with,
 * so an older render never replaces a newer one's files. Returns false (nothing stored) when the
 * fragment changed meanwhile.
 */
async function store(deps: RenderDeps, m: Member, r: RenderResult, jobId: string, studio: Rights): Promise<boolean> {
  const { row, recipe, mKey, wKey, webFormat } = m;
  // What both files carry, kept on their rows (the Studio screen counts masters behind its rights).
  const rights = recordedRights(cleanRights(studio));
  const revision = row.revision;
  const client = await deps.database.pool.connect();
  const lockKey = `fragment-render:${row.id}`;
  let saved: { id: string } | undefined;
  let savedWeb: { id: string; key: string; format: string; updatedAt: Date } | undefined;
  // Set once the files are stored: whether the title changed while they were made.
  let retitled: boolean | undefined;
  // A connection whose unlock failed is closed, not pooled: closing it releases the lock.
  let broken: Error | undefined;
  try {
    const db = drizzle(client, { schema });
    await client.query("select pg_advisory_lock(hashtextextended($1, 0))", [lockKey]);
    try {
      const [cur] = await db.select().from(fragments).where(eq(fragments.id, row.id));
      const current = cur && cur.status === "approved" && !cur.mergedInto && cur.revision === revision && cur.renderJobId === jobId;
      if (!current || (await recipeVersionFor(db, row.id)).id !== recipe.id) {
        m.log.info({ current: cur?.revision }, "render: changed while rendering; not stored");
        return false;
      }
      await deps.library.put(mKey, r.master.path, { move: true });
      await deps.library.put(wKey, r.web.path, { move: true });
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
          rights,
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
          rights,
        },
      ]) {
        const [out] = await db
          .insert(outputs)
          .values({ fragmentId: row.id, revision, recipeVersionId: recipe.id, ...o })
          .onConflictDoUpdate({
            target: [outputs.fragmentId, outputs.kind],
            targetWhere: sql`${outputs.kind} in ('master', 'web')`,
            set: { ...o, revision, recipeVersionId: recipe.id, updatedAt: now, createdAt: now },
          })
          .returning({ id: outputs.id, updatedAt: outputs.updatedAt });
        if (o.kind === "master") saved = out;
        else if (out) savedWeb = { id: out.id, key: o.key, format: o.format, updatedAt: out.updatedAt };
      }
      await markDone(deps, row, db);
      // A title edited while this rendered (it bumps no revision) is written into the files now
      // stored. Read after markDone, whose update waited for any edit holding the row: an edit
      // committed later finds the fragment done and queues the same rewrite itself.
      const [after] = await db.select({ title: fragments.title }).from(fragments).where(eq(fragments.id, row.id));
      retitled = (after?.title ?? null) !== (row.title ?? null);
    } finally {
      await client.query("select pg_advisory_unlock(hashtextextended($1, 0))", [lockKey]).catch((err: Error) => {
        broken = err;
        throw err;
      });
    }
  } finally {
    client.release(broken);
  }
  if (retitled) {
    if (deps.boss) await deps.boss.send(QUEUES.rights, { fragmentId: row.id, rights: "keep" } satisfies RightsPayload);
    else m.log.warn("render: the title changed while rendering, and no queue to rewrite it");
  }
  // Every new master also goes off-site when a bucket is configured (a job of its own).
  if (saved && deps.offsite && deps.boss) await queueOffsiteCopy(deps.database, deps.boss, { id: saved.id, fragmentId: row.id, key: mKey });
  // The web copy's picture for the approved work, made before open screens are told.
  if (savedWeb) await premakeOutputPicture(deps.library, savedWeb, { maxPixels: deps.config.maxPixels, log: m.log });
  await notify(deps.database.pool, { kind: "scan", scanId: row.scanId });
  m.log.info({ master: `${r.master.width}×${r.master.height}`, dpi: r.master.dpi }, "render: done");
  return true;
}
