import path from "node:path";
import { and, eq, inArray, sql } from "drizzle-orm";
import { drizzle } from "drizzle-orm/node-postgres";
import * as schema from "../../server/db/schema";
import { fragments, outputs } from "../../server/db/schema";
import { notify } from "../../server/services/events";
import { queueOffsiteCopy } from "../../server/services/offsite";
import { studioRights } from "../../server/services/studio";
import { isStorageError } from "../../server/storage/storage";
import { rightsPayload } from "../../shared/schemas/jobs";
import { cleanRights, recordedRights, type Rights } from "../pipeline/render/rights";
import { readCarriedRights, rewriteMasterRights, rewriteWebRights, sameRights } from "../pipeline/render/rewrite";
import { stage } from "../pipeline/render/staging";
import type { JobContext } from "./context";
import type { RenderDeps } from "./render";

type OutputRow = typeof outputs.$inferSelect;

/** One file rewritten in scratch, waiting to replace the stored one. */
interface Rewritten {
  row: OutputRow;
  path: string;
  bytes: number;
  rights: Recorded;
}

type Recorded = ReturnType<typeof recordedRights>;

/**
 * Writes a fragment's current title (and, with `rights: "studio"`, the studio's current creator
 * and copyright; otherwise the ones the file carries) into its existing master and web copy,
 * without rendering: each file is copied with only its metadata written again (rewrite.ts), so
 * its pixels, profile, depth, compression and resolution stay as the render made them.
 * Nothing is done for a fragment that is not approved (or merged), whose render has not finished
 * (queued, rendering or failed: the render writes the current title itself, and its store queues
 * this job when the title changed while it rendered), or whose files are of an older revision.
 * A file that already carries what it should is left alone, so the job is idempotent. The new
 * files replace the stored ones under the render's own lock, and only while the fragment, its
 * title and the outputs rows are still those the rewrite started from: a render of a newer
 * revision (or another rewrite) that stored meanwhile is never overwritten.
 */
export async function rewriteRightsJob(deps: RenderDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { fragmentId } = rightsPayload.parse(data);
  const { db } = deps.database;
  try {
    await rewriteRights(deps, data, ctx);
  } catch (err) {
    // The last attempt's reason stays on the piece (the Studio screen names it) until one succeeds.
    if (ctx.retryCount >= ctx.retryLimit)
      await db
        .update(fragments)
        .set({ rightsError: (err as Error).message })
        .where(eq(fragments.id, fragmentId))
        .catch((e: unknown) => deps.log.warn({ err: e, fragmentId }, "rights: the reason could not be kept"));
    throw err;
  }
  await db
    .update(fragments)
    .set({ rightsError: null })
    .where(and(eq(fragments.id, fragmentId), sql`${fragments.rightsError} is not null`));
}

async function rewriteRights(deps: RenderDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { fragmentId, rights: source } = rightsPayload.parse(data);
  const { db } = deps.database;
  const log = deps.log.child({ jobId: ctx.jobId, fragmentId });
  const [row] = await db.select().from(fragments).where(eq(fragments.id, fragmentId));
  if (!row || row.status !== "approved" || row.mergedInto) return log.info("rights: fragment not approved; nothing to rewrite");
  if (row.renderState !== "done") return log.info({ renderState: row.renderState }, "rights: the render writes them");
  const made = (
    await db
      .select()
      .from(outputs)
      .where(and(eq(outputs.fragmentId, fragmentId), inArray(outputs.kind, ["master", "web"])))
  ).filter((o) => o.revision === row.revision);
  if (!made.some((o) => o.kind === "master")) return log.info("rights: no master of this revision");
  const studio = source === "studio" ? await studioRights(db) : null;

  const wanted = (carried: Rights): Rights =>
    cleanRights({
      title: row.title ?? undefined,
      creator: studio ? studio.creator : carried.creator,
      copyright: studio ? studio.copyright : carried.copyright,
    });

  let rewritten: string[] = [];
  // Files whose row still names them but which are missing from the library: said once the
  // others are written, so a missing web copy does not hold its master back (or the reverse).
  const missing: string[] = [];
  await deps.library.withScratch(async (dir) => {
    const files: Rewritten[] = [];
    for (const o of made) {
      try {
        await deps.library.withLocalFile(o.key, async (local) => {
          const carried = await readCarriedRights(local);
          const want = wanted(carried);
          if (sameRights(carried, want)) return void (await keepRecord(deps, o, recordedRights(want)));
          const staged = await stage(path.join(dir, path.basename(o.key)));
          const bytes =
            o.kind === "master" ? await rewriteMasterRights(local, staged, want) : await rewriteWebRights(local, staged, want, o.format);
          files.push({ row: o, path: staged.temp, bytes, rights: recordedRights(want) });
        });
      } catch (err) {
        if (!isStorageError(err, "missing")) throw err;
        // A file gone since the row was read: a newer render or a deletion replaced it. One whose
        // row still names it is missing from the library: said, so the piece is not left behind
        // without a word.
        const [now] = await db.select({ key: outputs.key }).from(outputs).where(eq(outputs.id, o.id));
        if (now?.key !== o.key) {
          log.info({ key: o.key }, "rights: the file went meanwhile");
          continue;
        }
        missing.push(
          `The ${o.kind === "master" ? "master" : "web copy"} "${o.key}" is missing from the library, so its rights cannot be written. Restore the file (from its off-site copy, if it has one) or render the piece again.`,
        );
      }
    }
    if (files.length === 0) return log.info("rights: the files already carry them");
    rewritten = await commit(deps, row, files);
  });
  await afterRewrite(deps, row, made, rewritten, log);
  if (missing.length > 0) throw new Error(missing.join(" "));
}

/** Once files are replaced: the master's off-site copy is made again, and open screens are told. */
async function afterRewrite(
  deps: RenderDeps,
  row: typeof fragments.$inferSelect,
  made: OutputRow[],
  rewritten: string[],
  log: RenderDeps["log"],
): Promise<void> {
  if (rewritten.length === 0) return;
  const master = made.find((o) => o.kind === "master" && rewritten.includes(o.id));
  // The master's bytes changed: its off-site copy is made again.
  if (master && deps.offsite && deps.boss) await queueOffsiteCopy(deps.database, deps.boss, master);
  await notify(deps.database.pool, { kind: "scan", scanId: row.scanId }).catch(() => {});
  log.info({ files: rewritten.length, title: row.title }, "rights: rewritten");
}

/**
 * Records on a file's row the rights it was found to carry already (files made before rows kept
 * them, or asked again), only while the row still names that very file.
 */
async function keepRecord(deps: RenderDeps, o: OutputRow, rights: Recorded): Promise<void> {
  if (o.rights && o.rights.creator === rights.creator && o.rights.copyright === rights.copyright) return;
  await deps.database.db
    .update(outputs)
    .set({ rights })
    .where(
      and(
        eq(outputs.id, o.id),
        eq(outputs.key, o.key),
        // The row's time as it was read (JavaScript keeps milliseconds; PostgreSQL, microseconds).
        sql`date_trunc('milliseconds', ${outputs.updatedAt}) = ${o.updatedAt.toISOString()}::timestamptz`,
      ),
    );
}

/**
 * Stores the rewritten files over the stored ones under the render's lock, each only while its
 * outputs row is unchanged and the fragment is still approved, rendered, at the same revision and
 * with the same title. Returns the ids of the outputs replaced.
 */
async function commit(deps: RenderDeps, row: typeof fragments.$inferSelect, files: Rewritten[]): Promise<string[]> {
  const client = await deps.database.pool.connect();
  const lockKey = `fragment-render:${row.id}`;
  let broken: Error | undefined;
  const done: string[] = [];
  try {
    const db = drizzle(client, { schema });
    await client.query("select pg_advisory_lock(hashtextextended($1, 0))", [lockKey]);
    try {
      const [cur] = await db.select().from(fragments).where(eq(fragments.id, row.id));
      if (
        !cur ||
        cur.status !== "approved" ||
        cur.mergedInto ||
        cur.renderState !== "done" ||
        cur.revision !== row.revision ||
        (cur.title ?? null) !== (row.title ?? null)
      ) {
        deps.log.info({ fragmentId: row.id }, "rights: the fragment changed meanwhile; its own work writes them");
        return done;
      }
      for (const f of files) {
        const [now] = await db.select().from(outputs).where(eq(outputs.id, f.row.id));
        if (!now || now.key !== f.row.key || now.bytes !== f.row.bytes || now.updatedAt.getTime() !== f.row.updatedAt.getTime()) continue;
        await deps.library.put(f.row.key, f.path, { move: true });
        await db.update(outputs).set({ bytes: f.bytes, rights: f.rights, updatedAt: new Date() }).where(eq(outputs.id, f.row.id));
        done.push(f.row.id);
      }
    } finally {
      await client.query("select pg_advisory_unlock(hashtextextended($1, 0))", [lockKey]).catch((err: Error) => {
        broken = err;
        throw err;
      });
    }
  } finally {
    client.release(broken);
  }
  return done;
}
