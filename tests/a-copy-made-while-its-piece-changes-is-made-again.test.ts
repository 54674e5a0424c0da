/**
 * A batch copy takes a while to make. When the piece changes meanwhile (a resolution set on its
 * scan bumps its revision; a new master is stored), the copy just made is not what its key would
 * say: it is thrown away and made again from the piece as it is then. The real stack (PostgreSQL,
 * pg-boss, a library folder); the worker is stopped once the masters exist, and the output job is
 * run here, with a library that lets the change happen while the copy is being made. A batch's
 * review, meanwhile, reckons with the piece as it is, not with its older master.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Fragment } from "../shared/schemas/fragments";
type PresetSummary = { id: string; name: string };
import type { Storage } from "../server/storage/storage";
import { outputJob } from "../worker/jobs/output";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;
let operator: supertest.Agent;
let piece: Fragment;
let itemId: string;

const ctx = (retryCount = 0) => ({ jobId: crypto.randomUUID(), retryCount, retryLimit: 6 });

/** The job's dependencies; no queue (the stopped worker took its pg-boss down), so no notice is sent. */
async function deps(library: Storage = stack.library) {
  return { database: stack.database, library, config: stack.cfg, log: (await import("../server/logger")).logger };
}

const presetCopies = async () =>
  (
    await stack.database.pool.query<{ key: string; revision: number }>(
      `select key, revision from outputs where fragment_id = $1 and kind = 'preset'`,
      [piece.id],
    )
  ).rows;

const item = async () =>
  (
    await stack.database.pool.query<{ state: string; output_id: string | null }>(`select state, output_id from batch_items where id = $1`, [
      itemId,
    ])
  ).rows[0]!;

/** Files under outputs/ of the piece, on disk. */
const filesOnDisk = async () => {
  const dir = path.dirname(stack.libraryPath(`outputs/${piece.id}/x`));
  return fs.readdir(dir).catch(() => [] as string[]);
};

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="900" height="600">
    <rect width="100%" height="100%" fill="#f6f6f3"/><rect x="150" y="100" width="600" height="400" fill="#3a6e2e"/></svg>`;
  piece = (await approvedPieces(operator, { name: "fern-print.tif", svg, pieces: 1 })).fragments[0]!;
  // From here on nothing runs jobs but this test.
  await stack.worker!.stop(2000);
  const web = ((await operator.get("/api/presets")).body.presets as PresetSummary[]).find((p) => p.name === "web")!;
  const made = await operator.post("/api/batches").send({ name: "Shop", selection: { fragmentIds: [piece.id] }, presetIds: [web.id] });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  const { rows } = await stack.database.pool.query<{ id: string }>(`select id from batch_items where batch_id = $1`, [made.body.batch.id]);
  expect(rows).toHaveLength(1);
  itemId = rows[0]!.id;
}, 120_000);
afterAll(async () => {
  await stack?.stop();
});

describe("a batch copy made while its piece changes", () => {
  it("is thrown away when the piece's revision moves on while it is made, and waits for the new master", async () => {
    // While the copy is being stored, the piece gets a new revision, as a resolution set on its scan does.
    const library: Storage = Object.create(stack.library, {
      put: {
        value: async (key: string, file: string, opts?: { move?: boolean }) => {
          const r = await stack.library.put(key, file, opts);
          if (key.startsWith("outputs/"))
            await stack.database.pool.query(`update fragments set revision = revision + 1, render_state = 'queued' where id = $1`, [
              piece.id,
            ]);
          return r;
        },
      },
    });
    await expect(outputJob(await deps(library), { batchItemId: itemId }, ctx())).rejects.toThrow(/changed while this copy was being made/);
    expect(await presetCopies()).toEqual([]);
    expect(await filesOnDisk()).toEqual([]);
    expect((await item()).output_id).toBeNull();
    expect((await item()).state).not.toBe("done");

    // Its retry finds the master of the old revision and waits for the new one.
    await expect(outputJob(await deps(), { batchItemId: itemId }, ctx(1))).rejects.toThrow(/waiting for the fragment's master/);
    expect(await presetCopies()).toEqual([]);
  });

  it("is made from the new master, keyed at the new revision, once that is stored", async () => {
    // The render of the new revision stores its master (here: the row moved on, as store() does).
    const { rows } = await stack.database.pool.query<{ revision: number }>(
      `update fragments set render_state = 'done' where id = $1 returning revision`,
      [piece.id],
    );
    const revision = rows[0]!.revision;
    await stack.database.pool.query(
      `update outputs set revision = $2, dpi = 600, updated_at = now() where fragment_id = $1 and kind = 'master'`,
      [piece.id, revision],
    );
    await outputJob(await deps(), { batchItemId: itemId }, ctx(2));
    const copies = await presetCopies();
    expect(copies).toHaveLength(1);
    expect(copies[0]!.revision).toBe(revision);
    expect(await item()).toMatchObject({ state: "done" });
    expect(await filesOnDisk()).toEqual([path.basename(copies[0]!.key)]);
  });

  it("changes nothing when an item made already runs again", async () => {
    const before = await presetCopies();
    await outputJob(await deps(), { batchItemId: itemId }, ctx(3));
    expect(await presetCopies()).toEqual(before);
  });

  /** A new batch of the piece with another built-in preset: a fresh item, not made yet. */
  async function freshItem(preset: string): Promise<string> {
    const p = ((await operator.get("/api/presets")).body.presets as PresetSummary[]).find((x) => x.name === preset)!;
    const made = await operator
      .post("/api/batches")
      .send({ name: `Shop ${preset}`, selection: { fragmentIds: [piece.id] }, presetIds: [p.id] });
    expect(made.status, JSON.stringify(made.body)).toBe(201);
    const { rows } = await stack.database.pool.query<{ id: string }>(`select id from batch_items where batch_id = $1`, [
      made.body.batch.id,
    ]);
    return rows[0]!.id;
  }

  /** A library that runs `change` once the copy's file is stored, before its row is. */
  const changingWhileStored = (change: string): Storage =>
    Object.create(stack.library, {
      put: {
        value: async (key: string, file: string, opts?: { move?: boolean }) => {
          const r = await stack.library.put(key, file, opts);
          if (key.startsWith("outputs/")) await stack.database.pool.query(change, [piece.id]);
          return r;
        },
      },
    });

  it("is thrown away when the master's resolution changes while it is made", async () => {
    const id = await freshItem("square");
    const before = await presetCopies();
    const library = changingWhileStored(`update outputs set dpi = 1200 where fragment_id = $1 and kind = 'master'`);
    await expect(outputJob(await deps(library), { batchItemId: id }, ctx())).rejects.toThrow(/changed while this copy was being made/);
    expect(await presetCopies()).toEqual(before);
    expect((await stack.database.pool.query(`select state, output_id from batch_items where id = $1`, [id])).rows[0]).toMatchObject({
      output_id: null,
    });
    expect(await filesOnDisk()).toHaveLength(before.length);
  });

  it("is thrown away when the piece is rejected while it is made, and the item says it is no longer approved", async () => {
    const id = await freshItem("print-a4");
    const before = await presetCopies();
    const library = changingWhileStored(`update fragments set status = 'rejected' where id = $1`);
    // Said at once, not after retries that could not make it.
    await outputJob(await deps(library), { batchItemId: id }, ctx());
    expect(await presetCopies()).toEqual(before);
    expect(await filesOnDisk()).toHaveLength(before.length);
    const { rows } = await stack.database.pool.query<{ state: string; error: string | null; output_id: string | null }>(
      `select state, error, output_id from batch_items where id = $1`,
      [id],
    );
    expect(rows[0]).toEqual({ state: "failed", error: "The fragment is no longer approved.", output_id: null });
    await stack.database.pool.query(`update fragments set status = 'approved' where id = $1`, [piece.id]);
  });

  it("is not reused for a piece no longer approved: the item says so instead of linking the copy made before", async () => {
    // A second batch of the same piece and preset would reuse the copy the first made.
    const web = ((await operator.get("/api/presets")).body.presets as PresetSummary[]).find((p) => p.name === "web")!;
    const made = await operator
      .post("/api/batches")
      .send({ name: "Shop again", selection: { fragmentIds: [piece.id] }, presetIds: [web.id] });
    expect(made.status, JSON.stringify(made.body)).toBe(201);
    const { rows: items } = await stack.database.pool.query<{ id: string }>(`select id from batch_items where batch_id = $1`, [
      made.body.batch.id,
    ]);
    // Rejected just after the job's first look, as the reuse checks the copy's file.
    const library: Storage = Object.create(stack.library, {
      exists: {
        value: async (key: string) => {
          await stack.database.pool.query(`update fragments set status = 'rejected' where id = $1`, [piece.id]);
          return stack.library.exists(key);
        },
      },
    });
    await outputJob(await deps(library), { batchItemId: items[0]!.id }, ctx());
    const { rows } = await stack.database.pool.query(`select state, error, output_id from batch_items where id = $1`, [items[0]!.id]);
    expect(rows[0]).toEqual({ state: "failed", error: "The fragment is no longer approved.", output_id: null });
    await stack.database.pool.query(`update fragments set status = 'approved' where id = $1`, [piece.id]);
  });

  it("is reckoned at the piece's size now in a batch's review, while its new master is on its way", async () => {
    // Printed 1.5 in wide: about 600 px ÷ 1.5 in = 400 DPI, over the 300 DPI minimum (common practice).
    const made = await operator.post("/api/presets").send({
      name: "Card, 1.5 in",
      settings: {
        kind: "print",
        name: "Card, 1.5 in",
        paper: { size: "letter" },
        layout: { mode: "area", widthIn: 8, heightIn: 10 },
        printDpi: 300,
        scale: { mode: "exact", widthIn: 1.5 },
        output: "tiff",
      },
    });
    expect(made.status, JSON.stringify(made.body)).toBe(201);
    const presetId = (made.body.preset?.id ?? made.body.id) as string;
    const review = async () =>
      (await operator.post("/api/batches/estimate").send({ selection: { fragmentIds: [piece.id] }, presetIds: [presetId] })).body;
    expect((await review()).warnings).toEqual([]);
    // The piece is cut to half its width (a new revision); its master is still the wide one.
    await stack.database.pool.query(
      `update fragments set rect = jsonb_set(rect, '{width}', to_jsonb((rect->>'width')::float / 2)), revision = revision + 1 where id = $1`,
      [piece.id],
    );
    const { rows } = await stack.database.pool.query<{ width: number }>(
      `select width from outputs where fragment_id = $1 and kind = 'master'`,
      [piece.id],
    );
    expect(rows[0]!.width).toBeGreaterThan(500);
    // About 300 px ÷ 1.5 in = 200 DPI now: said before the run.
    expect((await review()).warnings).toEqual([expect.stringMatching(/^Card, 1\.5 in: 1 of 1 piece prints below 300 DPI/)]);
  });
});
