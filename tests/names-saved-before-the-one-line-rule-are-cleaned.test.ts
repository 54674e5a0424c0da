import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { presetListResponse } from "../shared/schemas/preset-api";

let stack: Stack;
let operator: supertest.Agent;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  operator = await userAgent(stack, "operator");
});
afterAll(async () => {
  await stack?.stop();
});

/** The migration's own statements, run again over rows saved before the rule (it is a no-op on clean rows). */
async function runCleaningMigration() {
  const text = await fs.readFile(path.join(import.meta.dirname, "..", "drizzle", "0010_clean_control_characters.sql"), "utf8");
  for (const statement of text.split("--> statement-breakpoint")) await stack.database.pool.query(statement);
}

describe("names saved before names had to be one line", () => {
  it("are cleaned by the migration, keep preset and recipe names unique, and the lists read again", async () => {
    const q = (sql: string, params: unknown[] = []) => stack.database.pool.query(sql, params);
    const settings = (name: string) => ({ kind: "web", name, size: { mode: "longEdge", longEdge: 800 }, format: "jpeg" });
    const insertPreset = async (name: string) => {
      const { rows } = await q("insert into presets (name, kind) values ($1, 'web') returning id", [name]);
      await q("insert into preset_versions (preset_id, version, settings) values ($1, 1, $2)", [
        rows[0].id,
        JSON.stringify(settings(name)),
      ]);
      return rows[0].id as string;
    };
    const clean = await insertPreset("Shop square");
    const dirty = await insertPreset("Shop\tsquare");
    const lone = await insertPreset("Wall\nframe");
    const { rows: recipe } = await q("insert into recipes (name) values ($1) returning id", ["Warm\u0007paper"]);
    const { rows: intake } = await q("insert into intakes (name) values ($1) returning id", ["Spring\r\nsession"]);
    // A list with a name like these does not parse in the client (it checks the shared schema).
    expect(presetListResponse.safeParse((await operator.get("/api/presets")).body).success).toBe(false);

    await runCleaningMigration();
    const name = async (table: string, id: string) => (await q(`select name from ${table} where id = $1`, [id])).rows[0].name;
    expect(await name("presets", clean)).toBe("Shop square");
    expect(await name("presets", dirty)).toBe(`Shop square (${dirty.slice(0, 8)})`);
    expect(await name("presets", lone)).toBe("Wall frame");
    expect((await q("select settings->>'name' as n from preset_versions where preset_id = $1", [lone])).rows[0].n).toBe("Wall frame");
    expect(await name("recipes", recipe[0].id)).toBe("Warm paper");
    expect(await name("intakes", intake[0].id)).toBe("Spring  session");
    expect(presetListResponse.safeParse((await operator.get("/api/presets")).body).success).toBe(true);
    // Run again, nothing changes.
    await runCleaningMigration();
    expect(await name("presets", dirty)).toBe(`Shop square (${dirty.slice(0, 8)})`);
  });
});
