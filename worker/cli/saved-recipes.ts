import pg from "pg";
import { config } from "../../server/config";
import { recipeSchema, type Recipe } from "../../shared/schemas/recipes";
import type { RecipeSource } from "../pipeline/colour";

/**
 * Recipes saved in the studio's database, by name (newest version), for `platen render --recipe`.
 * When no database answers within two seconds the source simply finds nothing, so files and
 * built-in recipes still work on a machine without one.
 */
export function savedRecipes(url = config().databaseUrl): RecipeSource & { close(): Promise<void> } {
  let client: pg.Client | null = null;
  let unavailable = false;
  const connect = async () => {
    if (client || unavailable) return client;
    const c = new pg.Client({ connectionString: url, connectionTimeoutMillis: 2000 });
    try {
      await c.connect();
      client = c;
    } catch {
      unavailable = true;
    }
    return client;
  };
  const query = async (text: string, values: unknown[] = []) => {
    const c = await connect();
    if (!c) return [];
    try {
      return (await c.query(text, values)).rows;
    } catch {
      return []; // a database without Platen's tables
    }
  };
  return {
    label: "saved",
    async find(name: string): Promise<Recipe | null> {
      const rows = await query(
        `select r.name, v.steps from recipes r join recipe_versions v on v.recipe_id = r.id
         where lower(r.name) = lower($1) and r.archived_at is null order by v.version desc limit 1`,
        [name],
      );
      if (!rows[0]) return null;
      return recipeSchema.parse({ name: rows[0].name, steps: rows[0].steps });
    },
    async names() {
      return (await query("select name from recipes where archived_at is null order by name")).map((r) => String(r.name));
    },
    async close() {
      await client?.end().catch(() => {});
    },
  };
}
