import { inArray, eq } from "drizzle-orm";
import type { Database } from "../db";
import { fragments, scans } from "../db/schema";
import { conflict, notFound } from "../errors";
import type { Logger } from "../logger";
import type { S3Storage } from "../storage/s3";
import { isStorageError, type StoredStat } from "../storage/storage";
import { outputFileName } from "../presenters/fragment";
import { parseKeptKey, type KeptCopies, type KeptCopy, type KeptCopyRemoved } from "../../shared/schemas/offsite";
import { formatBytes } from "../../shared/units";
import { recordAudit } from "./audit";
import { copyLockOf } from "./offsite";
import { INSTALLATION_METADATA, installationId } from "./studio";

/**
 * Kept off-site copies: masters' copies in the off-site bucket that no master names any more.
 * Deleting a piece's files keeps its master's copy by default, and with the master's row goes the
 * `offsite_copies` row that named it; these are found here by listing the bucket, so that an admin
 * can get such a master back (download) or stop paying for it (remove, audited).
 *
 * What counts as kept: a key under `masters/` in one of the shapes the program writes
 * (`parseKeptKey`) that no `offsite_copies` row names and, for a per-master key, whose master row
 * is gone. A copy under way always has a row (copyMaster marks it pending before it uploads), and
 * rows are read after the listing, so a copy that lands while the bucket is listed is named by
 * the rows read. The second condition covers the one moment a live master's object has no row
 * naming it: a copy moving from a key of the older shape lands before its row is moved to it.
 *
 * Cost: one listing of `masters/` (a request per thousand keys), then one HEAD per kept copy for
 * its size, date and SHA-256 (object metadata), eight at a time. Kept copies are the exception
 * (each is a delete an admin confirmed), so this stays a handful of requests where the masters
 * number thousands; the live masters' copies are never asked about one by one.
 */
export interface OffsiteKeptDeps {
  database: Database;
  offsite?: S3Storage | null;
  log: Logger;
}

type Parsed = NonNullable<ReturnType<typeof parseKeptKey>> & { key: string };

/**
 * How long a removal waits for an upload of the same master to finish before it says so (a large
 * master's upload can take minutes; a request should not hang on it, nor hold a connection).
 */
const LOCK_WAIT_MS = 10_000;

/** HEADs at once while listing: enough to hide a round trip, few enough for any S3-compatible store. */
const STAT_CONCURRENCY = 8;

const targetOf = (offsite: S3Storage) => offsite.description.replace(/^the bucket /, "");

function requireOffsite(deps: OffsiteKeptDeps): S3Storage {
  if (!deps.offsite) throw conflict("Off-site copy is off: set PLATEN_OFFSITE_BUCKET (and its endpoint and keys) to turn it on.");
  return deps.offsite;
}

/** Of these keys, those no row names now: neither an off-site row's key nor (per-master keys) a master row. */
async function unnamed(database: Database, parsed: Parsed[]): Promise<Parsed[]> {
  if (parsed.length === 0) return [];
  const keys = parsed.map((p) => p.key);
  const outputIds = parsed.flatMap((p) => (p.outputId ? [p.outputId] : []));
  const [named, live] = await Promise.all([
    database.pool.query<{ key: string }>("select key from offsite_copies where key = any($1::text[])", [keys]),
    outputIds.length
      ? database.pool.query<{ id: string }>("select id from outputs where id = any($1::uuid[])", [outputIds])
      : Promise.resolve({ rows: [] as { id: string }[] }),
  ]);
  const namedKeys = new Set(named.rows.map((r) => r.key));
  const liveIds = new Set(live.rows.map((r) => r.id));
  return parsed.filter((p) => !namedKeys.has(p.key) && !(p.outputId && liveIds.has(p.outputId)));
}

/** The pieces (by id) that still exist, with what names them on the screen. */
async function piecesOf(database: Database, fragmentIds: string[]) {
  if (fragmentIds.length === 0) return new Map<string, NonNullable<KeptCopy["piece"]>>();
  const rows = await database.db
    .select({
      id: fragments.id,
      title: fragments.title,
      position: fragments.position,
      revision: fragments.revision,
      status: fragments.status,
      scanName: scans.originalName,
    })
    .from(fragments)
    .innerJoin(scans, eq(scans.id, fragments.scanId))
    .where(inArray(fragments.id, [...new Set(fragmentIds)]));
  return new Map(rows.map((r) => [r.id, r]));
}

/** What a download of a kept copy is called: as its master's downloads were, marked as kept. */
function fileNameOf(p: Parsed, piece: KeptCopy["piece"]): string {
  return piece ? outputFileName(piece.scanName, piece.position, "master-kept", p.ext) : `master-kept-${p.fragmentId.slice(0, 8)}.${p.ext}`;
}

/** Runs `fn` over `items`, at most `limit` at a time, keeping their order. */
async function mapLimited<T, R>(items: T[], limit: number, fn: (item: T) => Promise<R>): Promise<R[]> {
  const out = new Array<R>(items.length);
  let next = 0;
  const run = async () => {
    while (next < items.length) {
      const i = next++;
      out[i] = await fn(items[i]!);
    }
  };
  await Promise.all(Array.from({ length: Math.min(limit, items.length) }, run));
  return out;
}

/** Every kept off-site copy, newest first, with its piece where that still exists. */
export async function listKeptCopies(deps: OffsiteKeptDeps): Promise<KeptCopies> {
  const offsite = deps.offsite;
  if (!offsite)
    return {
      enabled: false,
      target: null,
      copies: [],
      totalBytes: 0,
      otherInstallations: 0,
      note: "Off-site copy is off (no PLATEN_OFFSITE_BUCKET), so no copies are kept off-site.",
    };
  // The listing first, the rows after it: see the module's comment.
  const listed = (await offsite.list("masters/")).flatMap((key) => {
    const p = parseKeptKey(key);
    return p ? [{ ...p, key }] : [];
  });
  const kept = await unnamed(deps.database, listed);
  const stats = await mapLimited(kept, STAT_CONCURRENCY, (p) =>
    offsite.stat(p.key).catch((err: unknown) => {
      // Removed since the listing (by another admin): not kept any more.
      if (isStorageError(err, "missing")) return null;
      throw err;
    }),
  );
  const pieces = await piecesOf(
    deps.database,
    kept.map((p) => p.fragmentId),
  );
  const mine = await installationId(deps.database.db);
  const copies: KeptCopy[] = [];
  let otherInstallations = 0;
  kept.forEach((p, i) => {
    const stat = stats[i];
    if (!stat) return;
    if (!isMine(stat, mine)) {
      otherInstallations++;
      return;
    }
    const piece = pieces.get(p.fragmentId) ?? null;
    copies.push(present(p, stat, piece));
  });
  copies.sort((a, b) => b.modifiedAt.localeCompare(a.modifiedAt) || a.key.localeCompare(b.key));
  return {
    enabled: true,
    target: targetOf(offsite),
    copies,
    totalBytes: copies.reduce((n, c) => n + c.sizeBytes, 0),
    otherInstallations,
    note: null,
  };
}

function present(p: Parsed, stat: StoredStat, piece: KeptCopy["piece"]): KeptCopy {
  return {
    key: p.key,
    sizeBytes: stat.size,
    modifiedAt: stat.modified.toISOString(),
    sha256: stat.sha256,
    fragmentId: p.fragmentId,
    outputId: p.outputId,
    piece,
    fileName: fileNameOf(p, piece),
  };
}

/**
 * Whether this installation put the object there: its mark, or no mark at all (copies made before
 * objects were marked, which only this installation's masters could have been, by their keys).
 */
function isMine(stat: StoredStat, mine: string | null): boolean {
  const owner = stat.metadata?.[INSTALLATION_METADATA];
  return !owner || !mine || owner === mine;
}

const NAMED =
  "This off-site copy belongs to a master that is still in the library, so it is not a kept copy. It goes only with its piece's files, from the piece's page.";

/** Refuses a key that is not a kept copy now (409), or names nothing in the bucket (404). */
async function keptNow(deps: OffsiteKeptDeps, offsite: S3Storage, key: string): Promise<{ parsed: Parsed; stat: StoredStat }> {
  const p = parseKeptKey(key);
  if (!p) throw notFound("That kept off-site copy");
  const parsed = { ...p, key };
  if ((await unnamed(deps.database, [parsed])).length === 0) throw conflict(NAMED);
  let stat: StoredStat;
  try {
    stat = await offsite.stat(key);
  } catch (err) {
    if (isStorageError(err, "missing")) throw notFound(`The kept off-site copy "${key}" (it may have been removed already)`);
    throw err;
  }
  if (!isMine(stat, await installationId(deps.database.db)))
    throw conflict(
      "This copy was put in the bucket by another Platen installation that shares it: it is that installation's to keep or remove, not this one's.",
    );
  return { parsed, stat };
}

/** The bucket and the checked key for a download of one kept copy (the route streams it). */
export async function keptCopyForDownload(deps: OffsiteKeptDeps, key: string): Promise<{ offsite: S3Storage; copy: KeptCopy }> {
  const offsite = requireOffsite(deps);
  const { parsed, stat } = await keptNow(deps, offsite, key);
  const piece = (await piecesOf(deps.database, [parsed.fragmentId])).get(parsed.fragmentId) ?? null;
  return { offsite, copy: present(parsed, stat, piece) };
}

/**
 * Runs `fn` holding the per-master advisory locks copyMaster takes (`copyLockOf`), so no copy of
 * those masters uploads or moves its row meanwhile.
 * Taken in one order, each waited for at most `LOCK_WAIT_MS` (then a 409 says a copy is uploading).
 */
async function withCopyLocks<T>(database: Database, outputIds: string[], fn: () => Promise<T>): Promise<T> {
  const client = await database.pool.connect();
  const held: string[] = [];
  let broken: Error | undefined;
  try {
    try {
      // Each lock is waited for at most LOCK_WAIT_MS (the session's lock_timeout, reset after).
      await client.query(`set lock_timeout = ${LOCK_WAIT_MS}`);
      try {
        for (const id of [...new Set(outputIds)].sort()) {
          const lock = copyLockOf(id);
          await client.query("select pg_advisory_lock(hashtextextended($1, 0))", [lock]).catch((err: { code?: string }) => {
            // 55P03 lock_not_available: the wait ran out.
            if (err.code === "55P03")
              throw conflict("A copy of this master is being uploaded to the off-site bucket right now. Try again once it is done.");
            throw err;
          });
          held.push(lock);
        }
      } finally {
        await client.query("reset lock_timeout");
      }
      return await fn();
    } finally {
      for (const lock of held.reverse())
        await client.query("select pg_advisory_unlock(hashtextextended($1, 0))", [lock]).catch((err: Error) => {
          broken = err;
        });
    }
  } finally {
    client.release(broken);
  }
}

/**
 * Removes one kept copy from the bucket for good, with an audit row. Checked again under the
 * locks of every master that could name the key (the one in a per-master key; for a key of the
 * older shape, the piece's master now), so a copy landing meanwhile is waited for and a key a
 * row names by then is refused. The audit row is written in a transaction that commits only once
 * the bucket has removed the object: a refused removal leaves no record of one.
 */
export async function removeKeptCopy(deps: OffsiteKeptDeps, key: string): Promise<KeptCopyRemoved> {
  const offsite = requireOffsite(deps);
  const p = parseKeptKey(key);
  if (!p) throw notFound("That kept off-site copy");
  const { rows: masters } = await deps.database.pool.query<{ id: string }>(
    "select id from outputs where fragment_id = $1 and kind = 'master'",
    [p.fragmentId],
  );
  const lockIds = [...(p.outputId ? [p.outputId] : []), ...masters.map((m) => m.id)];
  return withCopyLocks(deps.database, lockIds, async () => {
    const { parsed, stat } = await keptNow(deps, offsite, key);
    const piece = (await piecesOf(deps.database, [parsed.fragmentId])).get(parsed.fragmentId) ?? null;
    const label = piece
      ? piece.title
        ? `“${piece.title}”`
        : `fragment ${piece.position} of ${piece.scanName}`
      : "a piece no longer in the database";
    await deps.database.db.transaction(async (tx) => {
      await recordAudit(tx, {
        action: "offsite.remove_kept",
        subjectType: "fragment",
        subjectId: parsed.fragmentId,
        summary: `Removed for good the kept off-site copy of the master of ${label} (${formatBytes(stat.size)})`,
        before: { key, sizeBytes: stat.size, sha256: stat.sha256, modifiedAt: stat.modified.toISOString() },
        after: { key: null },
      });
      try {
        await offsite.remove(key);
      } catch (err) {
        // The store may have removed it and lost only its answer: then the removal happened, and
        // its audit row must stay.
        const still = await offsite.exists(key).catch(() => true);
        if (still) throw err;
        deps.log.warn({ err, key }, "offsite: the kept copy's removal answered with an error, but the copy is gone");
      }
    });
    deps.log.info({ key, sizeBytes: stat.size, sha256: stat.sha256 }, "offsite: kept copy removed");
    return { key, sizeBytes: stat.size, sha256: stat.sha256 };
  });
}
