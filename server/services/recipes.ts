import { and, asc, count, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import type PgBoss from "pg-boss";
import { isUniqueClash, type Database, type Db } from "../db";
import { fragments, intakes, outputs, recipeVersions, recipes, scans, studio } from "../db/schema";
import { withTx } from "../db/tx";
import { conflict, notFound } from "../errors";
import { BUILT_IN_RECIPES, DEFAULT_RECIPE_NAME, recipeStepSchema, type RecipeStep } from "../../shared/schemas/recipes";
import type { ApplyRecipeBody, CreateRecipeBody, RecipeSummary, UpdateRecipeBody } from "../../shared/schemas/recipe-api";
import { createBatch } from "./batches";
import { changedFields, recordAudit } from "./audit";

type RecipeRow = typeof recipes.$inferSelect;

/** JSON with keys in a fixed order: jsonb does not keep the order they were written in. */
function canonical(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) =>
    v && typeof v === "object" && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => a.localeCompare(b))) : v,
  );
}
export type RecipeVersionRow = typeof recipeVersions.$inferSelect;

/** Puts the recipes that ship with Platen in the database (version 1), once. */
export async function ensureBuiltInRecipes(db: Db): Promise<void> {
  for (const [name, recipe] of Object.entries(BUILT_IN_RECIPES)) {
    const [existing] = await db
      .select({ id: recipes.id })
      .from(recipes)
      .where(and(eq(recipes.builtIn, true), eq(recipes.name, name)));
    if (existing) continue;
    await db.transaction(async (tx) => {
      const [row] = await tx
        .insert(recipes)
        .values({ name, builtIn: true, description: "Ships with Platen: white balance from the scanner bed, then automatic levels." })
        .onConflictDoNothing()
        .returning();
      if (row) await tx.insert(recipeVersions).values({ recipeId: row.id, version: 1, steps: recipe.steps });
    });
  }
}

async function latestVersion(db: Db, recipeId: string): Promise<RecipeVersionRow> {
  const [v] = await db
    .select()
    .from(recipeVersions)
    .where(eq(recipeVersions.recipeId, recipeId))
    .orderBy(desc(recipeVersions.version))
    .limit(1);
  if (!v) throw notFound("A version of that recipe");
  return v;
}

async function studioDefaultId(db: Db): Promise<string> {
  const [s] = await db.select({ id: studio.defaultRecipeId }).from(studio).limit(1);
  if (s?.id) return s.id;
  const [builtIn] = await db
    .select({ id: recipes.id })
    .from(recipes)
    .where(and(eq(recipes.builtIn, true), eq(recipes.name, DEFAULT_RECIPE_NAME)));
  if (!builtIn) throw notFound("The built-in default recipe");
  return builtIn.id;
}

async function summarise(db: Db, rows: RecipeRow[]): Promise<RecipeSummary[]> {
  if (!rows.length) return [];
  const ids = rows.map((r) => r.id);
  const defaultId = await studioDefaultId(db);
  const [versions, onIntakes, onScans, onFragments, onOutputs] = await Promise.all([
    db
      .selectDistinctOn([recipeVersions.recipeId])
      .from(recipeVersions)
      .where(inArray(recipeVersions.recipeId, ids))
      .orderBy(recipeVersions.recipeId, desc(recipeVersions.version)),
    db.select({ id: intakes.recipeId, n: count() }).from(intakes).where(inArray(intakes.recipeId, ids)).groupBy(intakes.recipeId),
    db.select({ id: scans.recipeId, n: count() }).from(scans).where(inArray(scans.recipeId, ids)).groupBy(scans.recipeId),
    db.select({ id: fragments.recipeId, n: count() }).from(fragments).where(inArray(fragments.recipeId, ids)).groupBy(fragments.recipeId),
    db
      .select({ id: recipeVersions.recipeId, n: count() })
      .from(outputs)
      .innerJoin(recipeVersions, eq(recipeVersions.id, outputs.recipeVersionId))
      .where(inArray(recipeVersions.recipeId, ids))
      .groupBy(recipeVersions.recipeId),
  ]);
  const n = (list: { id: string | null; n: number }[], id: string) => list.find((x) => x.id === id)?.n ?? 0;
  return rows.map((r) => {
    const v = versions.find((x) => x.recipeId === r.id)!;
    return {
      id: r.id,
      name: r.name,
      description: r.description,
      builtIn: r.builtIn,
      studioDefault: r.id === defaultId,
      version: v.version,
      versionId: v.id,
      steps: v.steps as RecipeStep[],
      usage: { intakes: n(onIntakes, r.id), scans: n(onScans, r.id), fragments: n(onFragments, r.id), outputs: n(onOutputs, r.id) },
      updatedAt: r.updatedAt.toISOString(),
    };
  });
}

export async function listRecipes(db: Db): Promise<RecipeSummary[]> {
  const rows = await db.select().from(recipes).where(isNull(recipes.archivedAt)).orderBy(desc(recipes.builtIn), asc(recipes.name));
  return summarise(db, rows);
}

export async function getRecipe(db: Db, id: string) {
  const [row] = await db.select().from(recipes).where(eq(recipes.id, id));
  if (!row) throw notFound("That recipe");
  const versions = await db.select().from(recipeVersions).where(eq(recipeVersions.recipeId, id)).orderBy(desc(recipeVersions.version));
  return {
    recipe: (await summarise(db, [row]))[0]!,
    versions: versions.map((v) => ({
      id: v.id,
      version: v.version,
      steps: v.steps as RecipeStep[],
      createdAt: v.createdAt.toISOString(),
      createdBy: v.createdBy,
    })),
  };
}

/** The same name taken by a request that passed its look-up at the same moment, as the look-up says it. */
const nameClash =
  (name: string) =>
  (err: unknown): never => {
    if (isUniqueClash(err, "recipes_name_key")) throw conflict(`A recipe called "${name}" already exists.`, "name");
    throw err;
  };

async function nameTaken(db: Db, name: string, exceptId?: string) {
  const rows = await db
    .select({ id: recipes.id })
    .from(recipes)
    .where(sql`lower(${recipes.name}) = lower(${name})`);
  return rows.some((r) => r.id !== exceptId);
}

export async function createRecipe(db: Db, actorId: string, body: CreateRecipeBody) {
  if (await nameTaken(db, body.name)) throw conflict(`A recipe called "${body.name}" already exists.`, "name");
  const id = await db
    .transaction(async (tx) => {
      const [row] = await tx
        .insert(recipes)
        .values({ name: body.name, description: body.description ?? null })
        .returning();
      const [v] = await tx
        .insert(recipeVersions)
        .values({ recipeId: row!.id, version: 1, steps: body.steps, createdBy: actorId })
        .returning();
      await recordAudit(tx, {
        action: "recipe.create",
        subjectType: "recipe",
        subjectId: row!.id,
        summary: `Made the recipe "${row!.name}" (version 1, ${body.steps.length} ${body.steps.length === 1 ? "step" : "steps"})`,
        after: { name: row!.name, description: row!.description, version: 1, versionId: v!.id, steps: body.steps },
      });
      return row!.id;
    })
    .catch(nameClash(body.name));
  return getRecipe(db, id);
}

/** Saves an edit. New steps make a new version (identical steps do not); old versions stay for the outputs they made. */
export async function updateRecipe(db: Db, actorId: string, id: string, body: UpdateRecipeBody) {
  const [row] = await db.select().from(recipes).where(eq(recipes.id, id));
  if (!row) throw notFound("That recipe");
  if (body.name !== undefined && body.name !== row.name) {
    if (row.builtIn) throw conflict("The built-in recipe keeps its name; save a copy under a new name instead.", "name");
    if (await nameTaken(db, body.name, id)) throw conflict(`A recipe called "${body.name}" already exists.`, "name");
  }
  await db
    .transaction(async (tx) => {
      if (body.steps) {
        const latest = await latestVersion(tx as unknown as Db, id);
        const steps = body.steps.map((s) => recipeStepSchema.parse(s));
        if (canonical(steps) !== canonical(latest.steps)) {
          const [v] = await tx
            .insert(recipeVersions)
            .values({ recipeId: id, version: latest.version + 1, steps, createdBy: actorId })
            .returning();
          await recordAudit(tx, {
            action: "recipe.version",
            subjectType: "recipe",
            subjectId: id,
            summary: `Saved version ${v!.version} of the recipe "${row.name}"`,
            before: { version: latest.version, versionId: latest.id, steps: latest.steps },
            after: { version: v!.version, versionId: v!.id, steps },
          });
        }
      }
      const [renamed] = await tx
        .update(recipes)
        .set({
          ...(body.name !== undefined ? { name: body.name } : {}),
          ...(body.description !== undefined ? { description: body.description } : {}),
          updatedAt: new Date(),
        })
        .where(eq(recipes.id, id))
        .returning();
      const edits = changedFields(row, renamed!, ["name", "description"]);
      if (edits) {
        await recordAudit(tx, {
          action: "recipe.edit",
          subjectType: "recipe",
          subjectId: id,
          summary: `Changed the ${Object.keys(edits.after).join(" and ")} of the recipe "${row.name}"`,
          ...edits,
        });
      }
      if (body.studioDefault) {
        const previous = await studioDefaultId(tx as unknown as Db);
        if (previous !== id) {
          const [old] = await tx.select({ name: recipes.name }).from(recipes).where(eq(recipes.id, previous));
          await tx.update(studio).set({ defaultRecipeId: id, updatedAt: new Date() });
          await recordAudit(tx, {
            action: "recipe.default",
            subjectType: "recipe",
            subjectId: id,
            summary: `Made "${renamed!.name}" the studio's default recipe${old ? ` instead of "${old.name}"` : ""}`,
            before: { defaultRecipe: { id: previous, name: old?.name ?? null } },
            after: { defaultRecipe: { id, name: renamed!.name } },
          });
        }
      }
    })
    .catch(nameClash(body.name ?? ""));
  return getRecipe(db, id);
}

/**
 * The recipe version that colours a fragment now: the fragment's own recipe, else its scan's, else
 * its intake's, else the studio default (the most specific wins), at its newest version.
 */
export async function recipeVersionFor(db: Db, fragmentId: string): Promise<RecipeVersionRow> {
  const [row] = await db
    .select({ f: fragments.recipeId, s: scans.recipeId, i: intakes.recipeId })
    .from(fragments)
    .innerJoin(scans, eq(scans.id, fragments.scanId))
    .innerJoin(intakes, eq(intakes.id, scans.intakeId))
    .where(eq(fragments.id, fragmentId));
  if (!row) throw notFound("That fragment");
  return latestVersion(db, row.f ?? row.s ?? row.i ?? (await studioDefaultId(db)));
}

/**
 * Uses a recipe for some fragments, a scan or a whole intake, then re-renders the approved ones
 * among them as one batch. For a scan or an intake, its recipe is set and the more specific choices
 * below it are cleared, so all of it follows the new recipe.
 */
export async function applyRecipe(database: Database, boss: PgBoss, actorId: string, recipeId: string, body: ApplyRecipeBody) {
  const [recipe] = await database.db.select().from(recipes).where(eq(recipes.id, recipeId));
  if (!recipe) throw notFound("That recipe");
  const version = await latestVersion(database.db, recipeId);
  return withTx(database, boss, async (tx) => {
    let targetIds: string[];
    // What the recipe replaced, for the trail: the intake's or scan's own choice, or each fragment's.
    let target: { what: string; before: Record<string, unknown> };
    if (body.intakeId) {
      const [intake] = await tx.db.select().from(intakes).where(eq(intakes.id, body.intakeId));
      if (!intake) throw notFound("That intake");
      target = { what: `the intake "${intake.name}"`, before: { intakeId: intake.id, recipeId: intake.recipeId } };
      await tx.db.update(intakes).set({ recipeId, updatedAt: new Date() }).where(eq(intakes.id, intake.id));
      const scanIds = (await tx.db.select({ id: scans.id }).from(scans).where(eq(scans.intakeId, intake.id))).map((r) => r.id);
      if (scanIds.length) await tx.db.update(scans).set({ recipeId: null }).where(inArray(scans.id, scanIds));
      const rows = scanIds.length
        ? await tx.db.update(fragments).set({ recipeId: null }).where(inArray(fragments.scanId, scanIds)).returning({ id: fragments.id })
        : [];
      targetIds = rows.map((r) => r.id);
    } else if (body.scanId) {
      const [scan] = await tx.db
        .select({ id: scans.id, name: scans.originalName, recipeId: scans.recipeId })
        .from(scans)
        .where(eq(scans.id, body.scanId));
      if (!scan) throw notFound("That scan");
      target = { what: scan.name, before: { scanId: scan.id, recipeId: scan.recipeId } };
      await tx.db.update(scans).set({ recipeId, updatedAt: new Date() }).where(eq(scans.id, scan.id));
      const rows = await tx.db
        .update(fragments)
        .set({ recipeId: null })
        .where(eq(fragments.scanId, scan.id))
        .returning({ id: fragments.id });
      targetIds = rows.map((r) => r.id);
    } else {
      const was = await tx.db
        .select({ id: fragments.id, recipeId: fragments.recipeId })
        .from(fragments)
        .where(inArray(fragments.id, body.fragmentIds!));
      target = {
        what: `${was.length} ${was.length === 1 ? "fragment" : "fragments"}`,
        before: { fragments: Object.fromEntries(was.map((f) => [f.id, f.recipeId])) },
      };
      const rows = await tx.db
        .update(fragments)
        .set({ recipeId })
        .where(inArray(fragments.id, body.fragmentIds!))
        .returning({ id: fragments.id });
      if (rows.length !== new Set(body.fragmentIds).size) throw notFound("One of those fragments");
      targetIds = rows.map((r) => r.id);
    }
    const approved = targetIds.length
      ? await tx.db
          .select({ id: fragments.id, revision: fragments.revision })
          .from(fragments)
          .where(and(inArray(fragments.id, targetIds), eq(fragments.status, "approved"), isNull(fragments.mergedInto)))
      : [];
    const batch = await createBatch(tx, {
      name: `${recipe.name} v${version.version} → ${approved.length} ${approved.length === 1 ? "fragment" : "fragments"}`,
      recipeVersionId: version.id,
      createdBy: actorId,
      fragments: approved,
    });
    await recordAudit(tx, {
      action: "recipe.apply",
      subjectType: "recipe",
      subjectId: recipeId,
      summary: `Applied "${recipe.name}" v${version.version} to ${target.what}; ${approved.length} approved ${approved.length === 1 ? "fragment is" : "fragments are"} rendered again`,
      before: target.before,
      after: {
        recipeId,
        versionId: version.id,
        version: version.version,
        batchId: batch.id,
        fragments: targetIds.length,
        rerender: approved.length,
      },
    });
    return { batchId: batch.id, fragments: targetIds.length, rerender: approved.length };
  });
}
