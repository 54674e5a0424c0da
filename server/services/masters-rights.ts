import type PgBoss from "pg-boss";
import { sql } from "drizzle-orm";
import type { Database, Db } from "../db";
import { withTx } from "../db/tx";
import { conflict } from "../errors";
import { QUEUES } from "../jobs/queues";
import type { MastersRights, WriteMastersRightsBody } from "../../shared/schemas/studio";
import type { RightsPayload } from "../../shared/schemas/jobs";
import { recordAudit } from "./audit";
import { studioRights } from "./studio";

/**
 * The pieces whose master (and web copy) the render job made and would rewrite: approved, not
 * merged, rendered at their current revision. `behind` says whether one of those files carries
 * other rights than the studio's now (or was made before files' rights were recorded).
 */
function current(creator: string | null, copyright: string | null) {
  const differs = sql`(o.rights is null or (o.rights ->> 'creator') is distinct from ${creator}::text or (o.rights ->> 'copyright') is distinct from ${copyright}::text)`;
  return sql`
    select f.id,
           bool_or(${differs}) as behind,
           bool_or(o.rights is null) as unknown
      from fragments f
      join outputs o on o.fragment_id = f.id and o.kind in ('master', 'web') and o.revision = f.revision
     where f.status = 'approved' and f.merged_into is null and f.render_state = 'done'
     group by f.id
    having bool_or(o.kind = 'master')`;
}

/** Rewrites of the studio's rights queued or running now (pg-boss's own job table). */
async function writing(db: Db): Promise<number> {
  const { rows } = await db.execute<{ n: number }>(sql`
    select count(*)::int as n from pgboss.job
     where name = ${QUEUES.rights} and state in ('created', 'retry', 'active') and data ->> 'rights' = 'studio'`);
  return rows[0]?.n ?? 0;
}

/**
 * Pieces still behind whose last rewrite failed for good, and why (up to three reasons): the
 * rights job keeps the reason on the piece until a rewrite of it succeeds.
 */
async function failedBehind(db: Db, creator: string | null, copyright: string | null): Promise<{ failed: number; reasons: string[] }> {
  const { rows } = await db.execute<{ failed: number; reasons: string[] | null }>(sql`
    with c as (${current(creator, copyright)})
    select count(*)::int as failed,
           (array_agg(distinct f.rights_error))[1:3] as reasons
      from c join fragments f on f.id = c.id
     where c.behind and f.rights_error is not null`);
  return { failed: rows[0]?.failed ?? 0, reasons: rows[0]?.reasons ?? [] };
}

/** How many masters already made carry the studio's current creator and copyright. */
export async function mastersRights(db: Db): Promise<MastersRights> {
  const studio = await studioRights(db);
  const creator = studio.creator ?? null;
  const copyright = studio.copyright ?? null;
  const { rows } = await db.execute<{ masters: number; behind: number; unknown: number }>(sql`
    with c as (${current(creator, copyright)})
    select count(*)::int as masters,
           (count(*) filter (where behind))::int as behind,
           (count(*) filter (where behind and unknown))::int as unknown
      from c`);
  const counts = rows[0] ?? { masters: 0, behind: 0, unknown: 0 };
  return { creator, copyright, ...counts, writing: await writing(db), ...(await failedBehind(db, creator, copyright)) };
}

/**
 * Queues a rewrite of the studio's current creator and copyright (and each piece's title) into
 * every master and web copy behind them: one `fragment-rights` job per piece, in one transaction
 * with the audit row. Only metadata is written again (the job keeps pixels, profile and depth as
 * the render made them, and leaves a file alone that already agrees). Refused when the studio's
 * rights are not those the admin saw, while an earlier rewrite is still running, and when nothing
 * is behind.
 */
export async function writeMastersRights(
  deps: { database: Database; boss: PgBoss },
  seen: WriteMastersRightsBody,
): Promise<{ queued: number; rights: MastersRights }> {
  const queued = await withTx(deps.database, deps.boss, async (tx) => {
    // One rewrite request at a time: a second admin's click waits for the first to be queued.
    await tx.client.query("select pg_advisory_xact_lock(hashtextextended('masters-rights', 0))");
    const studio = await studioRights(tx.db);
    const creator = studio.creator ?? null;
    const copyright = studio.copyright ?? null;
    if (creator !== seen.creator || copyright !== seen.copyright)
      throw conflict("The studio's creator or copyright line changed since you looked. Read them again first.");
    const running = await writing(tx.db);
    if (running > 0)
      throw conflict(
        `The rights are being written into ${running} ${running === 1 ? "master" : "masters"} now. What is left afterwards can be written then.`,
      );
    const { rows } = await tx.db.execute<{ id: string }>(sql`
      with c as (${current(creator, copyright)}) select id from c where behind order by id`);
    if (rows.length === 0) throw conflict("Every master already carries the studio's creator and copyright line.");
    await tx.sendMany(
      QUEUES.rights,
      rows.map((r) => ({ fragmentId: r.id, rights: "studio" }) satisfies RightsPayload),
    );
    const n = rows.length;
    await recordAudit(tx, {
      action: "studio.masters_rights",
      subjectType: "studio",
      subjectId: null,
      summary: `Queued the studio's creator and copyright line to be written into ${n} ${n === 1 ? "master" : "masters"} already made`,
      before: null,
      after: { creator, copyright, pieces: n },
    });
    return n;
  });
  return { queued, rights: await mastersRights(deps.database.db) };
}
