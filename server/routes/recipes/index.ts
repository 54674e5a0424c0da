import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { applyRecipe, createRecipe, getRecipe, listRecipes, updateRecipe } from "../../services/recipes";
import { getBatch } from "../../services/batches";
import { previewRecipe } from "../../services/recipe-preview";
import type { AppDeps } from "../../app";

export function recipesRouter({ database, boss, library }: AppDeps): Router {
  const router = Router();
  const { db } = database;
  handle(router, API.recipesList, async () => ({ recipes: await listRecipes(db) }));
  handle(router, API.recipesGet, ({ params }) => getRecipe(db, params.id));
  handle(router, API.recipesCreate, async ({ body, user, res }) => {
    const out = await createRecipe(db, user.id, body);
    res.status(201);
    return out;
  });
  handle(router, API.recipesUpdate, async ({ params, body, user, req }) => {
    const out = await updateRecipe(db, user.id, params.id, body);
    req.log.info({ recipeId: params.id, version: out.recipe.version }, "recipe saved");
    return out;
  });
  handle(router, API.recipesApply, async ({ params, body, user, req }) => {
    const r = await applyRecipe(database, boss, user.id, params.id, body);
    req.log.info({ recipeId: params.id, ...r }, "recipe applied");
    return { ...r, batch: await getBatch(db, r.batchId) };
  });
  handle(router, API.recipesPreview, ({ body }) => previewRecipe(db, library, body));
  return router;
}
