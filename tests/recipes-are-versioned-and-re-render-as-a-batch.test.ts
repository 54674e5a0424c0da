import path from "node:path";
import sharp from "sharp";
import { eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import supertest from "supertest";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { outputs, fragments as fragmentsTable } from "../server/db/schema";
import type { Fragment } from "../shared/schemas/fragments";
import type { RecipeSummary } from "../shared/schemas/recipe-api";

// Outputs are rewritten under the same name: read them fresh each time.
sharp.cache(false);

let stack: Stack;
let operator: supertest.Agent;
let scanId: string;
let intakeId: string;

/** Two saturated pieces on a white lid (invented test data). */
async function twoPieceScan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="700">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="400" height="400" fill="#c0392b"/>
    <rect x="700" y="150" width="350" height="420" fill="#1e8449"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

const fragmentsOf = async () => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

async function allRendered(recipeVersionId?: string) {
  return waitFor(
    "every fragment to be rendered",
    async () => {
      const list = await fragmentsOf();
      if (list.some((f) => f.renderState === "failed")) throw new Error(list.map((f) => f.renderError).join("; "));
      if (!list.every((f) => f.renderState === "done")) return null;
      const rows = await stack.db.select().from(outputs);
      if (recipeVersionId && !rows.every((o) => o.recipeVersionId === recipeVersionId)) return null;
      return rows.length === list.length * 2 ? rows : null;
    },
    60_000,
  );
}

/** Mean chroma (max − min of R, G, B) of a web copy: a recipe that removes saturation drives it to 0. */
async function meanChroma(key: string) {
  const { data, info } = await sharp(stack.libraryPath(key)).removeAlpha().raw().toBuffer({ resolveWithObject: true });
  let sum = 0;
  for (let i = 0; i < data.length; i += info.channels)
    sum += Math.max(data[i]!, data[i + 1]!, data[i + 2]!) - Math.min(data[i]!, data[i + 1]!, data[i + 2]!);
  return sum / (data.length / info.channels);
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator");
  const approved = await approvedPieces(operator, { name: "two-pieces.tif", bytes: await twoPieceScan(), pieces: 2, render: false });
  scanId = approved.scanId;
  intakeId = approved.scan.intake.id;
});
afterAll(async () => {
  await stack?.stop();
});

describe("recipes", () => {
  it("the built-in default recipe colours every fragment that has none, and outputs record its version", async () => {
    const list = (await operator.get("/api/recipes")).body.recipes as RecipeSummary[];
    const builtIn = list.find((r) => r.builtIn)!;
    expect(builtIn).toMatchObject({ name: "default", version: 1, studioDefault: true });
    expect(builtIn.steps.map((s) => s.type)).toEqual(["whiteBalance", "levels"]);
    const rows = await allRendered(builtIn.versionId);
    expect(rows.every((o) => o.recipeVersionId === builtIn.versionId)).toBe(true);
  });

  it("saving an edit makes a new version; identical steps do not", async () => {
    const created = await operator.post("/api/recipes").send({ name: "Muted stock", steps: [{ type: "saturation", saturation: -0.2 }] });
    expect(created.status).toBe(201);
    const id = created.body.recipe.id as string;
    expect(created.body.recipe.version).toBe(1);
    const same = await operator.patch(`/api/recipes/${id}`).send({ steps: created.body.recipe.steps });
    expect(same.body.recipe.version).toBe(1);
    const edited = await operator.patch(`/api/recipes/${id}`).send({ steps: [{ type: "saturation", saturation: -1 }] });
    expect(edited.body.recipe.version).toBe(2);
    expect(edited.body.versions.map((v: { version: number }) => v.version)).toEqual([2, 1]);
    const dup = await operator.post("/api/recipes").send({ name: "muted STOCK", steps: [] });
    expect(dup.status).toBe(409);
    expect(dup.body.error.message).toBe('A recipe called "muted STOCK" already exists.');
    const bad = await operator.post("/api/recipes").send({ name: "Bad", steps: [{ type: "levels", mode: "manual", gamma: 12 }] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toMatch(/gamma/i);
  });

  it("the same name saved twice at once, or two edits at once, give one result and conflicts, not server errors", async () => {
    // A trigger of this test's own holds each insert a moment, so every request passes its
    // look-up before the first has committed; the unique indexes then refuse the others.
    const hold = async (table: string, run: () => Promise<supertest.Response[]>) => {
      await stack.db.execute(
        sql.raw(`create function test_hold() returns trigger language plpgsql as $$ begin perform pg_sleep(0.3); return new; end $$`),
      );
      await stack.db.execute(sql.raw(`create trigger test_hold before insert on ${table} for each row execute function test_hold()`));
      try {
        return await run();
      } finally {
        await stack.db.execute(sql.raw(`drop trigger test_hold on ${table}`));
        await stack.db.execute(sql.raw("drop function test_hold()"));
      }
    };
    const made = await hold("recipes", () =>
      Promise.all([1, 2, 3].map(() => operator.post("/api/recipes").send({ name: "Warm paper", steps: [] }))),
    );
    expect(made.map((r) => r.status).sort()).toEqual([201, 409, 409]);
    for (const r of made.filter((r) => r.status === 409))
      expect(r.body.error).toEqual({ code: "conflict", field: "name", message: 'A recipe called "Warm paper" already exists.' });
    const id = made.find((r) => r.status === 201)!.body.recipe.id as string;
    const edits = await hold("recipe_versions", () =>
      Promise.all(
        [-0.1, -0.3].map((saturation) => operator.patch(`/api/recipes/${id}`).send({ steps: [{ type: "saturation", saturation }] })),
      ),
    );
    expect(edits.map((r) => r.status).sort()).toEqual([200, 409]);
    expect(edits.find((r) => r.status === 409)!.body.error).toEqual({
      code: "conflict",
      message: "Another change made the same thing at the same moment. Reload to see it, then try again if you still need to.",
    });
    expect((await operator.get(`/api/recipes/${id}`)).body.versions.map((v: { version: number }) => v.version)).toEqual([2, 1]);
    // Presets keep their names the same way.
    const settings = { kind: "web", name: "Shop square", size: { mode: "box", aspect: "1:1", width: 800 }, format: "jpeg" };
    const presets = await hold("presets", () =>
      Promise.all([1, 2].map(() => operator.post("/api/presets").send({ name: "Shop square", settings }))),
    );
    expect(presets.map((r) => r.status).sort()).toEqual([201, 409]);
    expect(presets.find((r) => r.status === 409)!.body.error).toEqual({
      code: "conflict",
      field: "name",
      message: 'A preset called "Shop square" already exists.',
    });
  });

  it("applying a recipe to an intake re-renders its approved fragments as one batch; outputs point at the new version", async () => {
    const list = (await operator.get("/api/recipes")).body.recipes as RecipeSummary[];
    const muted = list.find((r) => r.name === "Muted stock")!;
    const before = await stack.db.select().from(outputs);
    const web = before.find((o) => o.kind === "web")!;
    const chromaBefore = await meanChroma(web.key);

    const res = await operator.post(`/api/recipes/${muted.id}/apply`).send({ intakeId });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ fragments: 2, rerender: 2 });
    const batchId = res.body.batch.id as string;
    const batch = await waitFor(
      "the batch to finish",
      async () => {
        const b = (await operator.get(`/api/batches/${batchId}`)).body.batch;
        return b.finishedAt ? b : null;
      },
      60_000,
    );
    expect(batch.counts).toMatchObject({ done: 2, failed: 0, total: 2 });
    const after = await allRendered(muted.versionId);
    expect(after.every((o) => o.recipeVersionId === muted.versionId)).toBe(true);
    // Saturation −1 leaves the pieces grey: the recipe really coloured the output.
    const chromaAfter = await meanChroma(after.find((o) => o.kind === "web" && o.fragmentId === web.fragmentId)!.key);
    expect(chromaBefore).toBeGreaterThan(40);
    expect(chromaAfter).toBeLessThan(3);
    const usage = ((await operator.get(`/api/recipes/${muted.id}`)).body.recipe as RecipeSummary).usage;
    expect(usage).toMatchObject({ intakes: 1, outputs: 4 });
  });

  it("retrying a recipe batch's failed render queues the fragment again and makes it", async () => {
    const batchId = ((await operator.get("/api/batches")).body.batches as { id: string; kind: string }[]).find(
      (b) => b.kind === "recipe",
    )!.id;
    // One item failed as a full disk would leave it: the item and its fragment say so.
    const [item] = (await stack.database.pool.query("select id, fragment_id from batch_items where batch_id = $1 limit 1", [batchId])).rows;
    await stack.database.pool.query("update batch_items set state = 'failed', error = 'disk full' where id = $1", [item.id]);
    await stack.db
      .update(fragmentsTable)
      .set({ renderState: "failed", renderError: "disk full" })
      .where(eq(fragmentsTable.id, item.fragment_id));
    const res = await operator.post(`/api/batches/${batchId}/retry`);
    expect(res.status).toBe(200);
    // At once, with the retry: the fragment no longer reads as failed.
    const [f] = await stack.db.select().from(fragmentsTable).where(eq(fragmentsTable.id, item.fragment_id));
    expect(f!.renderState).not.toBe("failed");
    expect(f!.renderError).toBeNull();
    const done = await waitFor(
      "the retried batch to finish",
      async () => {
        const b = (await operator.get(`/api/batches/${batchId}`)).body.batch;
        return b.finishedAt ? b : null;
      },
      60_000,
    );
    expect(done.counts).toMatchObject({ done: 2, failed: 0 });
    const [again] = await stack.db.select().from(fragmentsTable).where(eq(fragmentsTable.id, item.fragment_id));
    expect(again!.renderState).toBe("done");
  });

  it("the command line finds a saved recipe by name, at its newest version", async () => {
    const { spawnSync } = await import("node:child_process");
    const src = path.join(stack.inbox, "cli-source.png");
    await sharp({ create: { width: 200, height: 120, channels: 3, background: "#c0392b" } })
      .png()
      .toFile(src);
    const out = path.join(stack.inbox, "cli-out.png");
    const run = spawnSync(process.execPath, ["scripts/platen.mjs", "render", src, "--recipe", "muted stock", "--out", out, "--json"], {
      encoding: "utf8",
      env: { ...process.env, ...stack.env },
    });
    expect(run.stderr).toBe("");
    expect(run.status).toBe(0);
    expect(JSON.parse(run.stdout).recipe.name).toBe("Muted stock");
    const { data } = await sharp(out).raw().toBuffer({ resolveWithObject: true });
    expect(Math.abs(data[0]! - data[1]!)).toBeLessThan(3); // version 2: saturation −1
  });

  it("previews unsaved steps on a fragment from a reduced copy, with histograms and clipping", async () => {
    const [first] = await fragmentsOf();
    const res = await operator
      .post("/api/recipes/preview")
      .send({ fragmentId: first!.id, steps: [{ type: "saturation", saturation: -1 }], size: 300 });
    expect(res.status).toBe(200);
    expect(Math.max(res.body.width, res.body.height)).toBe(300);
    for (const h of [res.body.histograms.before, res.body.histograms.after]) {
      for (const ch of ["r", "g", "b", "l"]) expect(h[ch]).toHaveLength(256);
    }
    const decode = async (url: string) => {
      const { data } = await sharp(Buffer.from(url.split(",")[1]!, "base64"))
        .raw()
        .toBuffer({ resolveWithObject: true });
      let chroma = 0;
      for (let i = 0; i < data.length; i += 3)
        chroma += Math.max(data[i]!, data[i + 1]!, data[i + 2]!) - Math.min(data[i]!, data[i + 1]!, data[i + 2]!);
      return chroma / (data.length / 3);
    };
    expect(await decode(res.body.before)).toBeGreaterThan(40);
    expect(await decode(res.body.after)).toBeLessThan(3);
    // Bad steps are refused with the field named, before any pixel work.
    const bad = await operator.post("/api/recipes/preview").send({ fragmentId: first!.id, steps: [{ type: "sharpen", radiusMm: -1 }] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.field).toMatch(/^steps/);
  });

  it("the most specific recipe wins: a fragment's own recipe over its intake's", async () => {
    const [first] = await stack.db.select().from(fragmentsTable).where(eq(fragmentsTable.scanId, scanId));
    const list = (await operator.get("/api/recipes")).body.recipes as RecipeSummary[];
    const builtIn = list.find((r) => r.builtIn)!;
    const res = await operator.post(`/api/recipes/${builtIn.id}/apply`).send({ fragmentIds: [first!.id] });
    expect(res.body.rerender).toBe(1);
    await waitFor(
      "the one fragment to be re-rendered with the default",
      async () => {
        const rows = await stack.db.select().from(outputs).where(eq(outputs.fragmentId, first!.id));
        return rows.length === 2 && rows.every((o) => o.recipeVersionId === builtIn.versionId) ? rows : null;
      },
      60_000,
    );
    const other = await stack.db.select().from(outputs);
    expect(other.filter((o) => o.fragmentId !== first!.id).every((o) => o.recipeVersionId !== builtIn.versionId)).toBe(true);
    // A scan's recipe then covers both of its fragments, clearing the fragment's own choice.
    const muted = list.find((r) => r.name === "Muted stock")!;
    const byScan = await operator.post(`/api/recipes/${muted.id}/apply`).send({ scanId });
    expect(byScan.body).toMatchObject({ fragments: 2, rerender: 2 });
    const both = await stack.db.select().from(fragmentsTable).where(eq(fragmentsTable.scanId, scanId));
    expect(both.every((f) => f.recipeId === null)).toBe(true);
    const bad = await operator.post(`/api/recipes/${muted.id}/apply`).send({ scanId, intakeId });
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toBe("Expected exactly one of fragmentIds, scanId or intakeId");
  });
});
