/**
 * Finding a recipe from what a person typed: a built-in name, a saved recipe's name, or a
 * recipe file. Sources are tried in order; the database's saved recipes plug in as one more
 * source, without this module knowing about a database.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { BUILT_IN_RECIPES, describeRecipeError, recipeSchema, type Recipe } from "../../../shared/schemas/recipes";
import { RecipeError } from "./errors";

export interface RecipeSource {
  /** For messages and reports: "built-in", "saved". */
  label: string;
  /** The recipe called `name`, or null. */
  find(name: string): Promise<Recipe | null> | Recipe | null;
  /** Names to suggest when nothing matched. */
  names?(): Promise<string[]> | string[];
}

export interface FoundRecipe {
  recipe: Recipe;
  /** The source's label, or "file". */
  from: string;
  /** The file read, for a recipe file. */
  file?: string;
}

/** The recipes that ship with Platen (the studio default is `default`). */
export const builtInRecipes: RecipeSource = {
  label: "built-in",
  find: (name) => BUILT_IN_RECIPES[name] ?? null,
  names: () => Object.keys(BUILT_IN_RECIPES),
};

/** A recipe file is small; anything bigger is not one. */
const MAX_RECIPE_FILE_BYTES = 1_000_000;

/**
 * Reads and checks a recipe file: the recipe as JSON ({ "name": …, "steps": […] }; a missing
 * name becomes the file's base name). Throws RecipeError (invalid_recipe, unknown_recipe).
 * Example: await readRecipeFile("warm-greens.json") → { name: "warm-greens", steps: [ … ] }.
 */
export async function readRecipeFile(file: string): Promise<Recipe> {
  let text: string;
  try {
    const stat = await fs.stat(file);
    if (!stat.isFile()) throw new RecipeError("unknown_recipe", `The recipe path "${file}" is not a file`);
    if (stat.size > MAX_RECIPE_FILE_BYTES) {
      throw new RecipeError(
        "invalid_recipe",
        `The recipe file "${file}" is ${stat.size} bytes; a recipe file is at most ${MAX_RECIPE_FILE_BYTES}`,
      );
    }
    text = await fs.readFile(file, "utf8");
  } catch (err) {
    if (err instanceof RecipeError) throw err;
    const code = (err as NodeJS.ErrnoException).code;
    throw new RecipeError(
      "unknown_recipe",
      code === "ENOENT" ? `There is no recipe file "${file}"` : `Cannot read the recipe file "${file}" (${code ?? String(err)})`,
    );
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new RecipeError("invalid_recipe", `The recipe file "${file}" is not valid JSON: ${(err as Error).message}`);
  }
  if (json && typeof json === "object" && !Array.isArray(json) && !("name" in json)) {
    json = { name: path.basename(file, path.extname(file)), ...json };
  }
  const parsed = recipeSchema.safeParse(json);
  if (!parsed.success) {
    throw new RecipeError("invalid_recipe", `The recipe file "${file}" is not a valid recipe: ${describeRecipeError(parsed.error, json)}`);
  }
  return parsed.data;
}

/** A reference that can only be a file: it has a folder in it or ends in .json. */
function looksLikeFile(ref: string): boolean {
  return ref.toLowerCase().endsWith(".json") || ref.includes("/") || ref.includes(path.sep);
}

/**
 * The recipe `ref` names: a file when it looks like a path, else the first source that knows
 * the name, else a file of that name if one exists. Throws RecipeError.
 * Example: await findRecipe("default") → { recipe: defaultRecipe, from: "built-in" };
 *   await findRecipe("recipes/warm.json") → { recipe: …, from: "file", file: "recipes/warm.json" }.
 */
export async function findRecipe(ref: string, sources: readonly RecipeSource[] = [builtInRecipes]): Promise<FoundRecipe> {
  const name = ref.trim();
  if (name === "") throw new RecipeError("unknown_recipe", "Expected a recipe name or the path of a recipe file but received an empty one");
  if (looksLikeFile(name)) return { recipe: await readRecipeFile(name), from: "file", file: name };
  for (const source of sources) {
    const recipe = await source.find(name);
    if (recipe) return { recipe, from: source.label };
  }
  const exists = await fs.stat(name).then(
    (s) => s.isFile(),
    () => false,
  );
  if (exists) return { recipe: await readRecipeFile(name), from: "file", file: name };
  const known = (await Promise.all(sources.map(async (s) => (await s.names?.()) ?? []))).flat();
  throw new RecipeError(
    "unknown_recipe",
    `No recipe is called "${name}"${known.length > 0 ? ` (known: ${known.join(", ")})` : ""}; a recipe file's path ends in .json`,
  );
}
