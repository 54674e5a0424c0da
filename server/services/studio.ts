import { desc, eq, sql } from "drizzle-orm";
import type { Db } from "../db";
import { auditEvents, studio, users } from "../db/schema";
import type { Config } from "../config";
import type { LiveEvent } from "../../shared/schemas/queue";
import type { StudioSettings, UpdateStudioBody } from "../../shared/schemas/studio";
import { changedFields, recordAudit } from "./audit";
import { EVENTS_CHANNEL } from "./events";

type StudioRow = typeof studio.$inferSelect;

/** The one studio row; bootstrap writes it at first start, so a missing row falls back to the config. */
async function studioRow(db: Db): Promise<StudioRow | undefined> {
  const [row] = await db.select().from(studio).where(eq(studio.id, 1));
  return row;
}

/** The word an off-site object carries to say which installation put it there. */
export const INSTALLATION_METADATA = "platen-installation";

/**
 * This installation's mark (`studio.installation_id`), or null before bootstrap has written the
 * studio row. It never changes once written, so each process reads it once.
 */
const installationIds = new WeakMap<Db, string>();
export async function installationId(db: Db): Promise<string | null> {
  const known = installationIds.get(db);
  if (known) return known;
  const row = await studioRow(db);
  if (row) installationIds.set(db, row.installationId);
  return row?.installationId ?? null;
}

export async function getStudioSettings(db: Db, config: Pick<Config, "defaultDpi">): Promise<StudioSettings> {
  const [row, saved] = await Promise.all([studioRow(db), lastSaved(db)]);
  return {
    name: row?.name ?? "Platen studio",
    defaultDpi: row?.defaultDpi ?? config.defaultDpi,
    creator: row?.creator ?? null,
    copyright: row?.copyright ?? null,
    updatedAt: (row?.updatedAt ?? new Date(0)).toISOString(),
    saved,
  };
}

/**
 * When an admin last saved a change to these settings, and who: from the audit trail, which
 * records each save that changed something. Null while they are as first start wrote them (the
 * row's own time also moves with, say, a new default recipe, which is not a save of this form).
 */
async function lastSaved(db: Db): Promise<StudioSettings["saved"]> {
  const [last] = await db
    .select({ at: auditEvents.at, email: auditEvents.actorEmail, name: users.name })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .where(eq(auditEvents.action, "studio.settings"))
    .orderBy(desc(auditEvents.id))
    .limit(1);
  if (!last) return null;
  return { at: last.at.toISOString(), by: last.name ?? last.email ?? null };
}

/** The rights fields every master and copy carries (worker/pipeline/render/rights.ts writes them). */
export async function studioRights(db: Db): Promise<{ creator?: string; copyright?: string }> {
  const row = await studioRow(db);
  return { creator: row?.creator ?? undefined, copyright: row?.copyright ?? undefined };
}

const FIELDS = ["name", "defaultDpi", "creator", "copyright", "demo"] as const;

/** Changes the fields given, in one transaction with its audit row. */
export async function updateStudioSettings(db: Db, config: Pick<Config, "defaultDpi">, body: UpdateStudioBody): Promise<StudioSettings> {
  await db.transaction(async (tx) => {
    const [before] = await tx.select().from(studio).where(eq(studio.id, 1)).for("update");
    const base = before ?? { id: 1, name: "Platen studio", defaultDpi: config.defaultDpi, creator: null, copyright: null, demo: false };
    const next = { ...base, ...body };
    const [after] = await tx
      .insert(studio)
      .values({ id: 1, name: next.name, defaultDpi: next.defaultDpi, creator: next.creator, copyright: next.copyright })
      .onConflictDoUpdate({ target: studio.id, set: { ...body, updatedAt: new Date() } })
      .returning();
    const changed = changedFields(base as StudioRow, after!, FIELDS);
    if (!changed) return;
    // Every open screen showing the studio's name or rights reads them again (delivered at commit).
    const event: LiveEvent = { kind: "studio" };
    await tx.execute(sql`select pg_notify(${EVENTS_CHANNEL}, ${JSON.stringify(event)})`);
    await recordAudit(tx, {
      action: "studio.settings",
      subjectType: "studio",
      subjectId: null,
      summary: `Changed the studio's ${Object.keys(changed.after).map(label).join(", ")}`,
      ...changed,
    });
  });
  return getStudioSettings(db, config);
}

function label(field: string): string {
  return (
    { name: "name", defaultDpi: "assumed resolution", creator: "creator", copyright: "copyright line", demo: "demo mark" }[field] ?? field
  );
}
