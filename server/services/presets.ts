import { and, asc, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import { isUniqueClash, type Db } from "../db";
import { presetVersions, presets } from "../db/schema";
import { conflict, notFound } from "../errors";
import { BUILT_IN_PRESETS, KIND_WORDS, type Preset } from "../../shared/schemas/presets";
import type { PresetSummary } from "../../shared/schemas/preset-api";
import { recordAudit } from "./audit";

type PresetRow = typeof presets.$inferSelect;
export type PresetVersionRow = typeof presetVersions.$inferSelect;

/** Puts the presets that ship with Platen in the database (version 1), once each. */
export async function ensureBuiltInPresets(db: Db): Promise<void> {
  for (const [name, settings] of Object.entries(BUILT_IN_PRESETS)) {
    const [existing] = await db
      .select({ id: presets.id })
      .from(presets)
      .where(and(eq(presets.builtIn, true), eq(presets.name, name)));
    if (existing) continue;
    await db.transaction(async (tx) => {
      const [row] = await tx.insert(presets).values({ name, kind: settings.kind, builtIn: true }).onConflictDoNothing().returning();
      if (row) await tx.insert(presetVersions).values({ presetId: row.id, version: 1, settings });
    });
  }
}

async function summarise(db: Db, rows: PresetRow[]): Promise<PresetSummary[]> {
  if (!rows.length) return [];
  const versions = await db
    .selectDistinctOn([presetVersions.presetId])
    .from(presetVersions)
    .where(
      inArray(
        presetVersions.presetId,
        rows.map((r) => r.id),
      ),
    )
    .orderBy(presetVersions.presetId, desc(presetVersions.version));
  return rows.map((r) => {
    const v = versions.find((x) => x.presetId === r.id)!;
    return {
      id: r.id,
      name: r.name,
      kind: r.kind,
      builtIn: r.builtIn,
      version: v.version,
      versionId: v.id,
      settings: v.settings as Preset,
      updatedAt: r.updatedAt.toISOString(),
    };
  });
}

export async function listPresets(db: Db): Promise<PresetSummary[]> {
  const rows = await db
    .select()
    .from(presets)
    .where(isNull(presets.archivedAt))
    .orderBy(asc(presets.kind), desc(presets.builtIn), asc(presets.name));
  return summarise(db, rows);
}

export async function getPreset(db: Db, id: string) {
  const [row] = await db.select().from(presets).where(eq(presets.id, id));
  if (!row) throw notFound("That preset");
  const versions = await db.select().from(presetVersions).where(eq(presetVersions.presetId, id)).orderBy(desc(presetVersions.version));
  return {
    preset: (await summarise(db, [row]))[0]!,
    versions: versions.map((v) => ({ id: v.id, version: v.version, createdAt: v.createdAt.toISOString() })),
  };
}

/** Presets by id with their newest versions, in the order asked for. */
export async function presetsForRun(db: Db, ids: string[]): Promise<PresetSummary[]> {
  const rows = await db.select().from(presets).where(inArray(presets.id, ids));
  if (rows.length !== new Set(ids).size) throw notFound("One of those presets");
  const list = await summarise(db, rows);
  return ids.map((id) => list.find((p) => p.id === id)!);
}

/** The same name taken by a request that passed its look-up at the same moment, as the look-up says it. */
const nameClash =
  (name: string) =>
  (err: unknown): never => {
    if (isUniqueClash(err, "presets_name_key")) throw conflict(`A preset called "${name}" already exists.`, "name");
    throw err;
  };

async function nameTaken(db: Db, name: string, exceptId?: string) {
  const rows = await db
    .select({ id: presets.id })
    .from(presets)
    .where(sql`lower(${presets.name}) = lower(${name})`);
  return rows.some((r) => r.id !== exceptId);
}

export async function createPreset(db: Db, actorId: string, body: { name: string; settings: Preset }) {
  if (await nameTaken(db, body.name)) throw conflict(`A preset called "${body.name}" already exists.`, "name");
  const id = await db
    .transaction(async (tx) => {
      const [row] = await tx.insert(presets).values({ name: body.name, kind: body.settings.kind }).returning();
      const [v] = await tx
        .insert(presetVersions)
        .values({ presetId: row!.id, version: 1, settings: body.settings, createdBy: actorId })
        .returning();
      await recordAudit(tx, {
        action: "preset.create",
        subjectType: "preset",
        subjectId: row!.id,
        summary: `Made the ${KIND_WORDS[row!.kind]} preset "${row!.name}" (version 1)`,
        after: { name: row!.name, kind: row!.kind, version: 1, versionId: v!.id, settings: body.settings },
      });
      return row!.id;
    })
    .catch(nameClash(body.name));
  return getPreset(db, id);
}

const canonical = (v: unknown) =>
  JSON.stringify(v, (_k, x: unknown) =>
    x && typeof x === "object" && !Array.isArray(x) ? Object.fromEntries(Object.entries(x).sort(([a], [b]) => a.localeCompare(b))) : x,
  );

/** New settings make a new version (the kind cannot change); a new name renames it. */
export async function updatePreset(db: Db, actorId: string, id: string, body: { name?: string; settings?: Preset }) {
  const { preset } = await getPreset(db, id);
  if (body.settings && body.settings.kind !== preset.kind) {
    throw conflict(
      `A ${KIND_WORDS[preset.kind]} preset stays a ${KIND_WORDS[preset.kind]} preset; make a new preset for ${KIND_WORDS[body.settings.kind]} output.`,
      "settings.kind",
    );
  }
  if (body.name && body.name !== preset.name) {
    if (preset.builtIn) throw conflict("A built-in preset keeps its name; save a copy under a new name instead.", "name");
    if (await nameTaken(db, body.name, id)) throw conflict(`A preset called "${body.name}" already exists.`, "name");
  }
  await db
    .transaction(async (tx) => {
      if (body.settings && canonical(body.settings) !== canonical(preset.settings)) {
        const [v] = await tx
          .insert(presetVersions)
          .values({ presetId: id, version: preset.version + 1, settings: body.settings, createdBy: actorId })
          .returning();
        // Only the settings that changed, side by side (a preset's settings are one flat-ish object).
        const before: Record<string, unknown> = { version: preset.version, versionId: preset.versionId };
        const after: Record<string, unknown> = { version: v!.version, versionId: v!.id };
        const old = preset.settings as Record<string, unknown>;
        const next = body.settings as Record<string, unknown>;
        for (const k of new Set([...Object.keys(old), ...Object.keys(next)])) {
          if (canonical(old[k] ?? null) === canonical(next[k] ?? null)) continue;
          before[k] = old[k] ?? null;
          after[k] = next[k] ?? null;
        }
        await recordAudit(tx, {
          action: "preset.version",
          subjectType: "preset",
          subjectId: id,
          summary: `Saved version ${v!.version} of the preset "${preset.name}"`,
          before,
          after,
        });
      }
      await tx
        .update(presets)
        .set({ ...(body.name ? { name: body.name } : {}), updatedAt: new Date() })
        .where(eq(presets.id, id));
      if (body.name && body.name !== preset.name) {
        await recordAudit(tx, {
          action: "preset.rename",
          subjectType: "preset",
          subjectId: id,
          summary: `Renamed the preset "${preset.name}" to "${body.name}"`,
          before: { name: preset.name },
          after: { name: body.name },
        });
      }
    })
    .catch(nameClash(body.name ?? ""));
  return getPreset(db, id);
}
